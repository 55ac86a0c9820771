package runner

// Messages between the runner and its executor, one JSON object per line.

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
	Ev     string `json:"ev"` // "started", "exit"
	PID    int    `json:"pid,omitempty"`
	Code   int    `json:"code"`
	Signal string `json:"signal,omitempty"`
	Err    string `json:"err,omitempty"` // the process could not be started
}

// tokenEnv carries a job's token in its processes' environment, so that a
// later run can find processes of a job whose runner and executor both
// died.
const tokenEnv = "SWEEP_JOB_TOKEN"

// executorEnv, when set, makes the program act as the executor; its value
// is the study's .sweep directory.
const executorEnv = "SWEEP_EXECUTOR"
