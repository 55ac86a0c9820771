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
)

// check is the outcome of one convergence check of a running job.
type check struct {
	token  string
	stop   bool
	reason string // why it may stop, or why not yet
	err    error  // a history that cannot be read (a diverged run, say)
}

// nextCheck is when the job's averages are next analysed (zero: never).
func (a *active) nextCheck() time.Time {
	es := a.stage.Settle
	if es == nil || a.stopping || a.settled || a.checking {
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
			c := check{token: tok, stop: true}
			var parts []string
			for _, name := range es.Quantities {
				q := d.r.Quantity(name)
				opts := q.Opts
				opts.MinSamples = es.MinSamples
				stop, res, err := harvest.Settled(dir, q.Spec, opts)
				if err != nil {
					c.stop, c.err = false, err
					break
				}
				if !stop {
					c.stop = false
					parts = append(parts, fmt.Sprintf("%s %s", name, res.Verdict))
					break
				}
				parts = append(parts, fmt.Sprintf("%s %s: %.6g ± %.2g (tolerance %.2g) at t = %.6g",
					name, res.Verdict, res.Mean, res.HalfWidth, res.Tolerance, res.EndTime))
			}
			c.reason = strings.Join(parts, "; ")
			d.checks <- c
		}(tok)
	}
}

// onCheck acts on a finished check: a converged job is stopped by the
// recipe's chosen means and will be recorded as done.
func (d *dispatcher) onCheck(c check) {
	a := d.running[c.token]
	if a == nil {
		return
	}
	a.checking = false
	a.lastCheck = time.Now()
	if c.err != nil || !c.stop || a.stopping {
		return
	}
	es := a.stage.Settle
	a.settled = true
	a.job.Settled = "stopped early: " + c.reason
	// Give the solver the grace period to end by itself; then the usual
	// stop (SIGTERM, SIGKILL) applies.
	if end := time.Now().Add(d.opts.Grace); a.deadline.IsZero() || end.Before(a.deadline) {
		a.deadline, a.graceEnd = end, true
	}
	d.opts.Progress.Event(fmt.Sprintf("%s %s: averages converged, stopping it (%s)", a.vs.v.Label, a.stage.Name, c.reason))
	dir := filepath.Join(plan.Dir(d.r.Dir, a.vs.v.Label), a.stage.Dir)
	switch es.By {
	case "signal":
		d.x.send(request{Op: "signal", Token: a.job.Token, Signal: es.Signal})
	case "file":
		if err := os.WriteFile(filepath.Join(dir, es.File), []byte("stop requested by sweep: averages converged\n"), 0o644); err != nil {
			d.opts.Progress.Event(fmt.Sprintf("%s %s: cannot write the stop file: %v; stopping with SIGTERM", a.vs.v.Label, a.stage.Name, err))
			d.stop(a)
		}
	case "command":
		go func(argv []string, env []string) {
			ctx, cancel := context.WithTimeout(context.Background(), time.Minute)
			defer cancel()
			cmd := exec.CommandContext(ctx, argv[0], argv[1:]...)
			cmd.Dir, cmd.Env = dir, env
			if out, err := cmd.CombinedOutput(); err != nil {
				d.opts.Progress.Event(fmt.Sprintf("%s %s: the stop command failed: %v: %s", a.vs.v.Label, a.stage.Name, err, strings.TrimSpace(string(out))))
			}
		}(es.Command, d.startRequest(a).Env)
	}
}
