package store

import (
	"time"
)

// State is the state of a job.
type State string

// Job states. A job interrupted by the user or by a crash goes back to
// Pending (with Interrupts counted), not to Failed.
const (
	Pending State = "pending"
	Running State = "running"
	Done    State = "done"
	Failed  State = "failed"
)

// Reasons for stopping a run (Job.Stopping).
const (
	StopInterrupt = "interrupt" // Ctrl-C or SIGTERM to the runner: re-queue
	StopTimeout   = "timeout"   // past the stage's timeout: a failed attempt
	StopSettle    = "settle"    // its averages settled: done
)

// Study is the study's own record.
type Study struct {
	ID      string    `json:"id"`
	Created time.Time `json:"created"`
	NextSeq uint64    `json:"next_seq"`
	Params  []string  `json:"params"` // parameter names, in the order variants store values
}

// Variant is one point of the design and its rendered case.
type Variant struct {
	Seq      uint64    `json:"seq"`
	ID       string    `json:"id"`    // a UUID, stable for the life of the study
	Label    string    `json:"label"` // short readable label, also the directory name
	Name     string    `json:"name,omitempty"`
	Values   []Value   `json:"values"`
	Where    string    `json:"where,omitempty"` // where the point was declared, for messages
	Rendered bool      `json:"rendered"`
	Added    bool      `json:"added,omitempty"` // proposed by `plan --add`, not by the design
	Created  time.Time `json:"created"`
}

// Job is one stage of one variant.
type Job struct {
	Variant    uint64    `json:"variant"` // the variant's Seq
	Stage      string    `json:"stage"`
	Index      int       `json:"index"` // position of the stage in the recipe when the job was made
	State      State     `json:"state"`
	Attempts   int       `json:"attempts"`             // runs that ended (success or failure), not counting interruptions
	Interrupts int       `json:"interrupts,omitempty"` // runs stopped by the user or lost in a crash
	Token      string    `json:"token,omitempty"`      // identifies the current run's processes
	PID        int       `json:"pid,omitempty"`
	SlurmID    string    `json:"slurm_id,omitempty"` // the batch job of this run, on the Slurm backend
	Cores      int       `json:"cores,omitempty"`
	Started    time.Time `json:"started,omitzero"`
	Ended      time.Time `json:"ended,omitzero"`
	ExitCode   int       `json:"exit_code,omitempty"`
	Reason     string    `json:"reason,omitempty"` // why it failed, or why it was re-queued
	Tail       []string  `json:"tail,omitempty"`   // last lines of the log of a failed run
	// Settled says why the run was stopped early once its averages had
	// converged ("" when it ran to its own end).
	Settled string `json:"early_stop,omitempty"`
	// SettledAt is, for a run stopped because its averages settled, the
	// last time of each quantity's history that was judged: a later
	// harvest averages up to there, so it judges what the stop judged.
	SettledAt map[string]float64 `json:"settled_at,omitempty"`
	// Stopping is the runner's reason for stopping the current run,
	// committed before the stop is sent: StopInterrupt, StopTimeout or
	// StopSettle ("" while it runs on its own). An end the executor
	// caused is judged by it, whatever the exit status.
	Stopping string `json:"stopping,omitempty"`
}

// Key returns the job's database key: the variant's sequence number and
// the stage index, so a scan visits jobs in variant order, stages in order.
func (j *Job) Key() []byte { return jobKey(j.Variant, j.Index) }

// Results is a variant's last harvest: each quantity's average.
type Results struct {
	Harvested  time.Time          `json:"harvested"`
	Quantities map[string]Average `json:"quantities"`
}
