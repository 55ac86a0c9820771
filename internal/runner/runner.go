package runner

import (
	"bufio"
	"container/heap"
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"time"

	"github.com/google/uuid"

	"github.com/sweep-cfd/sweep/internal/plan"
	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/records"
	"github.com/sweep-cfd/sweep/internal/store"
)

// ErrInterrupted is returned by Run when its context was cancelled; the
// jobs it stopped are back in the queue.
var ErrInterrupted = errors.New("run interrupted; running jobs were stopped and re-queued")

// Options control a run.
type Options struct {
	// Cores is the core budget: a job starts only when its stage's cores
	// fit in what the running jobs leave free. Default: all cores.
	Cores int
	// Grace is the time between SIGTERM and SIGKILL when a job is stopped
	// (timeout or interruption). Default 10 s.
	Grace time.Duration
	// Progress receives counts and notable events; nil for none.
	Progress Progress
	// Executable is the program started as the executor. Default: this
	// program (os.Executable).
	Executable string
}

// Run runs the study's queue until every job is done or failed, or ctx is
// cancelled. The caller holds the study lock.
func Run(ctx context.Context, r *recipe.Recipe, opts Options) (*Snapshot, error) {
	if opts.Cores <= 0 {
		opts.Cores = defaultCores()
	}
	if opts.Grace <= 0 {
		opts.Grace = 10 * time.Second
	}
	if opts.Progress == nil {
		opts.Progress = nopProgress{}
	}
	if err := r.CheckCommands(); err != nil {
		return nil, err
	}
	for _, s := range r.Stages {
		if s.Cores > opts.Cores {
			return nil, fmt.Errorf("%s:%d: stage %q needs %d cores but the run may use %d; raise --cores or lower the stage's cores", filepath.Base(r.File), s.Line, s.Name, s.Cores, opts.Cores)
		}
	}
	st, err := store.OpenExisting(r.Dir, store.Options{Brief: true, Linger: true})
	if err != nil {
		return nil, err
	}
	defer st.Close()
	meta := filepath.Join(r.Dir, store.Dir)
	exe := opts.Executable
	if exe == "" {
		if exe, err = os.Executable(); err != nil {
			return nil, fmt.Errorf("find this program to start its executor: %w", err)
		}
	}
	x, adopted, err := takeOver(ctx, st, r, meta, exe, opts.Progress)
	if err != nil {
		return nil, err
	}
	q, err := load(st, r)
	if err != nil {
		x.close()
		return nil, err
	}
	d := &dispatcher{r: r, st: st, q: q, x: x, opts: opts, exe: exe, free: opts.Cores, running: map[string]*active{}, start: time.Now(), checks: make(chan check, 64)}
	d.adopt(adopted)
	runErr := d.loop(ctx)
	x.close()
	d.backup()
	snap := d.snapshot()
	opts.Progress.Update(snap)
	if runErr == nil && ctx.Err() != nil {
		runErr = ErrInterrupted
	}
	return &snap, runErr
}

// active is a running job.
type active struct {
	job      *store.Job
	vs       *vstate
	stage    recipe.Stage
	deadline time.Time // zero: none
	stopping bool      // a stop was sent

	// Settle checks: when the averages were last checked, whether a check
	// runs now, and graceEnd: deadline is the end of the grace period the
	// solver was given to stop by itself once they had settled.
	lastCheck time.Time
	checking  bool
	graceEnd  bool
}

type dispatcher struct {
	r       *recipe.Recipe
	st      *store.Store
	q       *queue
	x       *execClient
	opts    Options
	exe     string // this program, run for stages whose program is recipe.SelfProgram
	free    int
	running map[string]*active
	start   time.Time
	checks  chan check
	// actions are sent to the executor (or run) after the next commit:
	// each acts on an intent that must be in the database first.
	actions []func() error

	lastBackup time.Time

	finished  int           // jobs ended this run
	busy      time.Duration // summed run time of jobs ended this run
	coreTime  time.Duration // summed cores x run time of jobs ended this run
	lastShown time.Time
}

// adopt attaches the jobs a previous run left running, which the
// executor still runs, to this run.
func (d *dispatcher) adopt(jobs []store.Job) {
	for _, aj := range jobs {
		for _, vs := range d.q.all {
			if vs.v.Seq != aj.Variant {
				continue
			}
			for _, j := range vs.jobs {
				if j.Stage != aj.Stage || j.Token != aj.Token {
					continue
				}
				j.PID = aj.PID
				s := d.r.Stages[j.Index]
				a := &active{job: j, vs: vs, stage: s, lastCheck: time.Now(), stopping: j.Stopping != ""}
				if s.Timeout > 0 {
					a.deadline = j.Started.Add(s.Timeout)
				}
				d.running[j.Token] = a
				d.free -= s.Cores
			}
		}
	}
}

func (d *dispatcher) loop(ctx context.Context) error {
	var dirty, lazy []*store.Job
	var acks []string
	stopping := false
	cancelled := ctx.Done()
	tick := time.NewTicker(500 * time.Millisecond)
	defer tick.Stop()
	for {
		// Claim what fits, commit every change at once, then act on it.
		var starts []*active
		if !stopping {
			for d.q.Len() > 0 {
				vs := d.q.peek()
				j := vs.next()
				s := d.r.Stages[j.Index]
				if s.Cores > d.free {
					break
				}
				heap.Pop(d.q)
				d.free -= s.Cores
				j.State, j.Token, j.PID, j.Cores = store.Running, uuid.NewString(), 0, s.Cores
				j.Started, j.Ended, j.Reason, j.Settled, j.SettledAt, j.Stopping = time.Now().UTC(), time.Time{}, "", "", nil, ""
				a := &active{job: j, vs: vs, stage: s, lastCheck: time.Now()}
				if s.Timeout > 0 {
					a.deadline = time.Now().Add(s.Timeout)
				}
				starts = append(starts, a)
				dirty = append(dirty, j)
			}
		}
		if len(dirty) > 0 {
			if err := d.commit(append(dirty, lazy...)); err != nil {
				return d.abort(err)
			}
			dirty, lazy = dirty[:0], lazy[:0]
			if time.Since(d.lastBackup) > backupEvery {
				d.backup()
			}
		}
		for _, t := range acks {
			if err := d.x.send(request{Op: "ack", Token: t}); err != nil {
				return err
			}
		}
		acks = acks[:0]
		for _, a := range starts {
			d.running[a.job.Token] = a
			if err := d.x.send(d.startRequest(a)); err != nil {
				return err
			}
		}
		for _, act := range d.actions {
			if err := act(); err != nil {
				return err
			}
		}
		d.actions = d.actions[:0]
		d.show(false)
		if len(d.running) == 0 && (stopping || d.q.Len() == 0) {
			return nil
		}

		// Wait for something to happen, then take everything that has.
		var timer <-chan time.Time
		if dl, ok := d.nextDeadline(); ok {
			timer = time.After(time.Until(dl))
		}
		var evs []event
		select {
		case ev, ok := <-d.x.events:
			if !ok {
				return errors.New("lost the connection to the executor; its stages go on, and the next `sweep run` takes them over")
			}
			evs = append(evs, ev)
		drain:
			for {
				select {
				case ev, ok := <-d.x.events:
					if !ok {
						break drain
					}
					evs = append(evs, ev)
				default:
					break drain
				}
			}
		case <-timer:
			dirty = append(dirty, d.expire()...)
			d.startChecks(time.Now())
		case c := <-d.checks:
			if j := d.onCheck(c); j != nil {
				dirty = append(dirty, j)
			}
		case <-tick.C:
		case <-cancelled:
			cancelled = nil
			stopping = true
			for _, a := range d.running {
				a.job.Stopping = store.StopInterrupt
				dirty = append(dirty, a.job)
				d.stop(a)
			}
		}
		for _, ev := range evs {
			a := d.running[ev.Token]
			if a == nil {
				continue
			}
			switch ev.Ev {
			case "started":
				// The process id rides along with the next commit: a
				// job committed as running before it started already
				// tells a later run to ask the executor about it, so
				// the id needs no commit of its own.
				a.job.PID = ev.PID
				lazy = append(lazy, a.job)
			case "exit":
				delete(d.running, ev.Token)
				d.free += a.stage.Cores
				d.end(a, ev)
				dirty = append(dirty, a.job)
				acks = append(acks, ev.Token)
			}
		}
	}
}

// end records how a job ended and queues what follows.
func (d *dispatcher) end(a *active, ev event) {
	j := a.job
	now := time.Now()
	ran := now.Sub(j.Started)
	kind := judgeEnd(j, ev, a.stage, now)
	if kind == endInterrupted {
		return
	}
	d.finished++
	d.busy += ran
	d.coreTime += ran * time.Duration(a.stage.Cores)
	switch kind {
	case endDone:
		if a.vs.next() != nil {
			heap.Push(d.q, a.vs)
		}
	case endRetry:
		heap.Push(d.q, a.vs)
		d.opts.Progress.Event(fmt.Sprintf("%s %s: %s; retrying (attempt %d of %d)", a.vs.v.Label, j.Stage, strings.TrimSuffix(j.Reason, "; retried"), j.Attempts+1, a.stage.Retries+1))
	case endFailed:
		j.Tail = attemptTail(d.logPath(a), 20)
		d.opts.Progress.Event(fmt.Sprintf("%s %s failed: %s (log: %s)", a.vs.v.Label, j.Stage, j.Reason, d.logPath(a)))
	}
}

func (d *dispatcher) commit(jobs []*store.Job) error {
	return d.st.Update(func(tx *store.Tx) error {
		for _, j := range jobs {
			if err := tx.PutJob(*j); err != nil {
				return err
			}
		}
		return nil
	})
}

// backupEvery is how often a run refreshes the copy of the study
// database that `sweep recover` starts from.
const backupEvery = 10 * time.Minute

// backup refreshes the database copy; a failure is reported, not fatal.
func (d *dispatcher) backup() {
	d.lastBackup = time.Now()
	if err := d.st.Backup(); err != nil {
		d.opts.Progress.Event(fmt.Sprintf("warning: %v", err))
	}
}

// abort gives up after a failed commit. Jobs claimed in the failed commit
// were never started, so the database (which still says pending) is
// right. Running jobs are left to the executor: the next run takes them
// over.
func (d *dispatcher) abort(err error) error {
	return fmt.Errorf("record job states: %w; running stages go on, and the next `sweep run` takes them over", err)
}

// stop asks the executor, after the next commit, to stop a job (SIGTERM,
// then SIGKILL after the grace period). The caller has set the job's
// Stopping reason, which that commit records first.
func (d *dispatcher) stop(a *active) {
	if a.stopping {
		return
	}
	a.stopping = true
	tok := a.job.Token
	d.actions = append(d.actions, func() error {
		return d.x.send(request{Op: "stop", Token: tok, Grace: d.opts.Grace.Milliseconds()})
	})
}

func (d *dispatcher) nextDeadline() (time.Time, bool) {
	var dl time.Time
	for _, a := range d.running {
		if !a.deadline.IsZero() && !a.stopping && (dl.IsZero() || a.deadline.Before(dl)) {
			dl = a.deadline
		}
		if c := a.nextCheck(); !c.IsZero() && (dl.IsZero() || c.Before(dl)) {
			dl = c
		}
	}
	return dl, !dl.IsZero()
}

// expire stops the jobs past their deadline and returns those whose
// record changed: a timeout is committed before its stop is sent. A
// settled job past its grace period is stopped as settled.
func (d *dispatcher) expire() []*store.Job {
	now := time.Now()
	var changed []*store.Job
	for _, a := range d.running {
		if !a.deadline.IsZero() && !a.stopping && !now.Before(a.deadline) {
			if !a.graceEnd {
				a.job.Stopping = store.StopTimeout
				changed = append(changed, a.job)
			}
			d.stop(a)
		}
	}
	return changed
}

func (d *dispatcher) logPath(a *active) string {
	return filepath.Join(plan.Dir(d.r.Dir, a.vs.v.Label), a.stage.Name+".log")
}

func (d *dispatcher) startRequest(a *active) request {
	vdir := plan.Dir(d.r.Dir, a.vs.v.Label)
	env := append(os.Environ(), d.r.Env(records.RecipeValues(a.vs.v.Values), a.vs.v.ID, a.vs.v.Label, vdir, a.stage)...)
	env = append(env, recipe.EnvPrefix+"BIN="+d.exe)
	header := fmt.Sprintf("=== sweep: stage %s of %s, attempt %d, started %s, token %s ===\n",
		a.stage.Name, a.vs.v.Label, a.job.Attempts+1, a.job.Started.Local().Format(logStamp), a.job.Token)
	argv := a.stage.Argv
	if a.stage.ContinueArgv != nil && (a.job.Attempts > 0 || a.job.Interrupts > 0) {
		argv = a.stage.ContinueArgv
		header = strings.Replace(header, ", attempt", ", continued, attempt", 1)
	}
	if argv[0] == recipe.SelfProgram && !a.stage.Shell {
		argv = append([]string{d.exe}, argv[1:]...)
	}
	return request{Op: "start", Token: a.job.Token, Argv: argv, Env: env,
		Dir: filepath.Join(vdir, a.stage.Dir), Log: d.logPath(a), Header: header}
}

// attemptTail returns the last n lines the last attempt wrote to a stage
// log: the lines after the program's last header, without its own
// markers ("=== sweep: ...").
func attemptTail(path string, n int) []string {
	var out []string
	for _, l := range tail(path, 200) {
		if strings.HasPrefix(l, "=== sweep: stage ") {
			out = out[:0]
			continue
		}
		if !strings.HasPrefix(l, "=== sweep: ") {
			out = append(out, l)
		}
	}
	if len(out) > n {
		out = out[len(out)-n:]
	}
	return out
}

// tail returns the last n lines of a file.
func tail(path string, n int) []string {
	f, err := os.Open(path)
	if err != nil {
		return nil
	}
	defer f.Close()
	const max = 16 << 10
	if st, err := f.Stat(); err == nil && st.Size() > max {
		f.Seek(st.Size()-max, io.SeekStart)
	}
	var lines []string
	sc := bufio.NewScanner(f)
	sc.Buffer(make([]byte, max+1), max+1)
	for sc.Scan() {
		lines = append(lines, sc.Text())
		if len(lines) > n {
			lines = lines[1:]
		}
	}
	return lines
}
