package runner

import (
	"time"
)

// Snapshot counts a study's variants by state during a run.
type Snapshot struct {
	Total   int           `json:"total"`
	Done    int           `json:"done"`
	Running int           `json:"running"`
	Failed  int           `json:"failed"`
	Pending int           `json:"pending"`
	Elapsed time.Duration `json:"elapsed_ns"`
	// Left estimates the time to finish from the jobs ended so far; zero
	// until a job has ended.
	Left time.Duration `json:"left_ns"`
}

// Progress receives a run's progress. Update is called often (the
// receiver throttles what it shows); Event is called for things a user
// must see, such as a failed job.
type Progress interface {
	Update(Snapshot)
	Event(msg string)
}

type nopProgress struct{}

func (nopProgress) Update(Snapshot) {}
func (nopProgress) Event(string)    {}

func (d *dispatcher) snapshot() Snapshot {
	s := Snapshot{Total: len(d.q.all), Elapsed: time.Since(d.start)}
	remaining := 0
	for _, vs := range d.q.all {
		switch vs.state() {
		case "done":
			s.Done++
		case "failed":
			s.Failed++
		case "running":
			s.Running++
		default:
			s.Pending++
		}
		for _, j := range vs.jobs {
			if j.State == "pending" || j.State == "running" {
				remaining++
			}
		}
	}
	if d.finished > 0 && remaining > 0 {
		// Remaining jobs times the mean core-time per job, spread over the
		// core budget; never below the longest job still to come.
		perJob := d.coreTime / time.Duration(d.finished)
		s.Left = perJob * time.Duration(remaining) / time.Duration(d.opts.Cores)
		if mean := d.busy / time.Duration(d.finished); s.Left < mean/2 {
			s.Left = mean / 2
		}
	}
	return s
}

// show reports progress at most every 200 ms unless forced.
func (d *dispatcher) show(force bool) {
	if !force && time.Since(d.lastShown) < 200*time.Millisecond {
		return
	}
	d.lastShown = time.Now()
	d.opts.Progress.Update(d.snapshot())
}
