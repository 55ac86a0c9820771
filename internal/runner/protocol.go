package runner

// Messages between a runner and the executor, one JSON object per line
// on the executor's Unix socket (.sweep/executor.sock).
//
// On connecting, a runner first receives the greeting: a "live" event for
// every stage that runs, an "exit" event for every end no runner has
// acknowledged yet, then "ready". After that, events arrive as they
// happen. The runner acknowledges an end ("ack") once it has committed it
// to the study database; until then the executor keeps it, in memory and
// in its journal (.sweep/exits).

// request is sent by the runner to the executor.
type request struct {
	Op     string   `json:"op"` // "start", "stop", "signal", "ack"
	Token  string   `json:"token"`
	Argv   []string `json:"argv,omitempty"`
	Env    []string `json:"env,omitempty"`
	Dir    string   `json:"dir,omitempty"`
	Log    string   `json:"log,omitempty"`
	Header string   `json:"header,omitempty"` // written to the log before the process starts
	Grace  int64    `json:"grace_ms,omitempty"`
	Signal string   `json:"signal,omitempty"` // for "signal": TERM, INT, HUP, USR1, USR2
}

// event is sent by the executor to the runner.
type event struct {
	Token  string `json:"token"`
	Ev     string `json:"ev"` // "live", "exit", "ready", "started"
	PID    int    `json:"pid,omitempty"`
	Code   int    `json:"code"`
	Signal string `json:"signal,omitempty"`
	Err    string `json:"err,omitempty"` // the process could not be started
	// Stopped is set when the executor signalled the process to end (a
	// stop or settle request, or its own shutdown): the exit status then
	// says nothing about whether the stage finished its work.
	Stopped bool `json:"stopped,omitempty"`
}

// tokenEnv carries a job's token in its processes' environment, so that
// processes of a job are found even when they leave its process group.
const tokenEnv = "SWEEP_JOB_TOKEN"

// executorEnv, when set, makes the program act as the executor; its value
// is the study's .sweep directory.
const executorEnv = "SWEEP_EXECUTOR"
