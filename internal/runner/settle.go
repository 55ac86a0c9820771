package runner

import (
	"context"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"time"

	"github.com/sweep-cfd/sweep/internal/harvest"
	"github.com/sweep-cfd/sweep/internal/plan"
	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/store"
)

// check is the outcome of one convergence check of a running job.
type check struct {
	token  string
	stop   bool
	reason string // why it may stop, or why not yet
	err    error  // a history that cannot be read (a diverged run, say)
	// at is the last time of each quantity's history that was judged.
	at map[string]float64
}

// nextCheck is when the job's averages are next analysed (zero: never).
func (a *active) nextCheck() time.Time {
	es := a.stage.Settle
	if es == nil || a.stopping || a.job.Settled != "" || a.checking {
		return time.Time{}
	}
	return a.lastCheck.Add(es.Every)
}

// startChecks launches the convergence checks that are due, each in its
// own goroutine so that reading a large history never holds up dispatch.
func (d *dispatcher) startChecks(now time.Time) {
	for tok, a := range d.running {
		if next := a.nextCheck(); next.IsZero() || now.Before(next) {
			continue
		}
		a.checking = true
		dir := plan.Dir(d.r.Dir, a.vs.v.Label)
		es := a.stage.Settle
		go func(tok string) {
			c := settleCheck(d.r, dir, es)
			c.token = tok
			d.checks <- c
		}(tok)
	}
}

// settleCheck judges the settle quantities of a running job's histories
// in dir with the quantities' own options (the judge that harvest uses),
// and says whether all have settled.
func settleCheck(r *recipe.Recipe, dir string, es *recipe.Settle) check {
	c := check{stop: true, at: map[string]float64{}}
	var parts []string
	for _, name := range es.Quantities {
		q := r.Quantity(name)
		stop, res, err := harvest.Settled(dir, q.Spec, q.Opts, es.MinSamples)
		if err != nil {
			c.stop, c.err = false, err
			break
		}
		if !stop {
			c.stop = false
			parts = append(parts, fmt.Sprintf("%s %s", name, res.Verdict))
			break
		}
		c.at[name] = res.EndTime
		parts = append(parts, fmt.Sprintf("%s %s: %.6g ± %.2g (tolerance %.2g) at t = %.6g",
			name, res.Verdict, res.Mean, res.HalfWidth, res.Tolerance, res.EndTime))
	}
	c.reason = strings.Join(parts, "; ")
	return c
}

// onCheck acts on a finished check: a job whose averages settled gets
// its reason recorded (the returned job, committed before anything acts
// on it), then is stopped by the recipe's chosen means, and will be
// recorded as done.
func (d *dispatcher) onCheck(c check) *store.Job {
	a := d.running[c.token]
	if a == nil {
		return nil
	}
	a.checking = false
	a.lastCheck = time.Now()
	if c.err != nil || !c.stop || a.stopping {
		return nil
	}
	es := a.stage.Settle
	a.job.Settled = "stopped early: " + c.reason
	a.job.SettledAt = c.at
	a.job.Stopping = store.StopSettle
	// Give the solver the grace period to end by itself; then the usual
	// stop (SIGTERM, SIGKILL) applies.
	if end := time.Now().Add(d.opts.Grace); a.deadline.IsZero() || end.Before(a.deadline) {
		a.deadline, a.graceEnd = end, true
	}
	label, stage, tok := a.vs.v.Label, a.stage.Name, a.job.Token
	dir := filepath.Join(plan.Dir(d.r.Dir, label), a.stage.Dir)
	env := d.startRequest(a).Env
	logPath := d.logPath(a)
	d.actions = append(d.actions, func() error {
		d.opts.Progress.Event(fmt.Sprintf("%s %s: averages converged, stopping it (%s)", label, stage, c.reason))
		if lf, err := os.OpenFile(logPath, os.O_WRONLY|os.O_APPEND, 0); err == nil {
			fmt.Fprintf(lf, "=== sweep: averages settled at %s (%s); asking the solver to stop ===\n", time.Now().Format(logStamp), c.reason)
			lf.Close()
		}
		switch es.By {
		case "signal":
			return d.x.send(request{Op: "signal", Token: tok, Signal: es.Signal})
		case "file":
			if err := os.WriteFile(filepath.Join(dir, es.File), []byte("stop requested by sweep: averages converged\n"), 0o644); err != nil {
				d.opts.Progress.Event(fmt.Sprintf("%s %s: cannot write the stop file: %v; stopping with SIGTERM", label, stage, err))
				if a := d.running[tok]; a != nil && !a.stopping {
					a.stopping = true
					return d.x.send(request{Op: "stop", Token: tok, Grace: d.opts.Grace.Milliseconds()})
				}
			}
		case "command":
			go func(argv []string) {
				ctx, cancel := context.WithTimeout(context.Background(), time.Minute)
				defer cancel()
				cmd := exec.CommandContext(ctx, argv[0], argv[1:]...)
				cmd.Dir, cmd.Env = dir, env
				if out, err := cmd.CombinedOutput(); err != nil {
					d.opts.Progress.Event(fmt.Sprintf("%s %s: the stop command failed: %v: %s", label, stage, err, strings.TrimSpace(string(out))))
				}
			}(es.Command)
		}
		return nil
	})
	return a.job
}
