package runner

import (
	"bufio"
	"container/heap"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"time"

	"github.com/google/uuid"

	"github.com/sweep-cfd/sweep/internal/plan"
	"github.com/sweep-cfd/sweep/internal/recipe"
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
	st, err := store.OpenExisting(r.Dir, store.Options{Brief: true})
	if err != nil {
		return nil, err
	}
	defer st.Close()
	meta := filepath.Join(r.Dir, store.Dir)
	if err := waitForExecutor(ctx, meta, opts.Progress); err != nil {
		return nil, err
	}
	if err := recoverJobs(st, meta, opts.Progress); err != nil {
		return nil, fmt.Errorf("recover after the previous run: %w", err)
	}
	q, err := load(st, r)
	if err != nil {
		return nil, err
	}
	exe := opts.Executable
	if exe == "" {
		if exe, err = os.Executable(); err != nil {
			return nil, fmt.Errorf("find this program to start its executor: %w", err)
		}
	}
	x, err := startExecutor(exe, meta)
	if err != nil {
		return nil, err
	}
	d := &dispatcher{r: r, st: st, q: q, x: x, opts: opts, exe: exe, free: opts.Cores, running: map[string]*active{}, start: time.Now(), checks: make(chan check, 64)}
	runErr := d.loop(ctx)
	if cerr := x.close(); runErr == nil && cerr != nil {
		runErr = cerr
	}
	snap := d.snapshot()
	opts.Progress.Update(snap)
	if runErr == nil && ctx.Err() != nil {
		runErr = ErrInterrupted
	}
	return &snap, runErr
}

// active is a running job.
type active struct {
	job       *store.Job
	vs        *vstate
	stage     recipe.Stage
	deadline  time.Time // zero: none
	stopping  bool
	timedOut  bool
	interrupt bool

	// Early stop: when the averages were last checked, whether a check
	// runs now, and whether the job was asked to stop because they have
	// converged (graceEnd: deadline is then the end of its grace period).
	lastCheck time.Time
	checking  bool
	settled   bool
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

	finished  int           // jobs ended this run
	busy      time.Duration // summed run time of jobs ended this run
	coreTime  time.Duration // summed cores x run time of jobs ended this run
	lastShown time.Time
}

func (d *dispatcher) loop(ctx context.Context) error {
	var dirty []*store.Job
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
				j.Started, j.Ended, j.Reason, j.Settled = time.Now().UTC(), time.Time{}, "", ""
				a := &active{job: j, vs: vs, stage: s, lastCheck: time.Now()}
				if s.Timeout > 0 {
					a.deadline = time.Now().Add(s.Timeout)
				}
				starts = append(starts, a)
				dirty = append(dirty, j)
			}
		}
		if len(dirty) > 0 {
			if err := d.commit(dirty); err != nil {
				return d.abort(err, starts)
			}
			dirty = dirty[:0]
		}
		for _, t := range acks {
			d.x.send(request{Op: "ack", Token: t})
		}
		acks = acks[:0]
		for _, a := range starts {
			d.running[a.job.Token] = a
			d.x.send(d.startRequest(a))
		}
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
				return fmt.Errorf("the executor process stopped unexpectedly (%v); the jobs it ran are re-queued by the next run", d.x.wait())
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
			d.expire()
			d.startChecks(time.Now())
		case c := <-d.checks:
			d.onCheck(c)
		case <-tick.C:
		case <-cancelled:
			cancelled = nil
			stopping = true
			for _, a := range d.running {
				a.interrupt = true
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
				a.job.PID = ev.PID
				dirty = append(dirty, a.job)
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
	j.Ended = time.Now().UTC()
	j.PID = 0
	ran := j.Ended.Sub(j.Started)
	if a.interrupt {
		j.State, j.Interrupts, j.Reason, j.Token = store.Pending, j.Interrupts+1, "interrupted by the user", ""
		return
	}
	d.finished++
	d.busy += ran
	d.coreTime += ran * time.Duration(a.stage.Cores)
	j.Attempts++
	j.ExitCode = ev.Code
	if a.settled || (ev.Code == 0 && ev.Err == "" && !a.timedOut) {
		j.State, j.Reason, j.Tail = store.Done, "", nil
		if a.vs.next() != nil {
			heap.Push(d.q, a.vs)
		}
		return
	}
	var why string
	switch {
	case a.timedOut:
		why = fmt.Sprintf("timed out after %s", a.stage.Timeout)
	case ev.Err != "":
		why = "could not start: " + ev.Err
	case ev.Signal != "":
		why = "killed by signal: " + ev.Signal
	default:
		why = fmt.Sprintf("exit status %d", ev.Code)
	}
	if j.Attempts <= a.stage.Retries {
		j.State, j.Reason = store.Pending, why+"; retried"
		heap.Push(d.q, a.vs)
		d.opts.Progress.Event(fmt.Sprintf("%s %s: %s; retrying (attempt %d of %d)", a.vs.v.Label, j.Stage, why, j.Attempts+1, a.stage.Retries+1))
		return
	}
	j.State, j.Reason = store.Failed, why
	j.Tail = tail(d.logPath(a), 20)
	d.opts.Progress.Event(fmt.Sprintf("%s %s failed: %s (log: %s)", a.vs.v.Label, j.Stage, why, d.logPath(a)))
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

// abort gives up after a failed commit: the claimed jobs were never
// started, so the database (which still says pending) is right.
func (d *dispatcher) abort(err error, claimed []*active) error {
	for _, a := range d.running {
		a.interrupt = true
		d.stop(a)
	}
	return fmt.Errorf("record job states: %w", err)
}

func (d *dispatcher) stop(a *active) {
	if a.stopping {
		return
	}
	a.stopping = true
	d.x.send(request{Op: "stop", Token: a.job.Token, Grace: d.opts.Grace.Milliseconds()})
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

func (d *dispatcher) expire() {
	now := time.Now()
	for _, a := range d.running {
		if !a.deadline.IsZero() && !a.stopping && !now.Before(a.deadline) {
			a.timedOut = !a.graceEnd
			d.stop(a)
		}
	}
}

func (d *dispatcher) logPath(a *active) string {
	return filepath.Join(plan.Dir(d.r.Dir, a.vs.v.Label), a.stage.Name+".log")
}

func (d *dispatcher) startRequest(a *active) request {
	vdir := plan.Dir(d.r.Dir, a.vs.v.Label)
	env := append(os.Environ(), d.r.Env(a.vs.v.Values, a.vs.v.ID, a.vs.v.Label, vdir, a.stage)...)
	env = append(env, recipe.EnvPrefix+"BIN="+d.exe)
	header := fmt.Sprintf("=== sweep: stage %s of %s, attempt %d, started %s ===\n",
		a.stage.Name, a.vs.v.Label, a.job.Attempts+1, a.job.Started.Local().Format(time.DateTime))
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

// execClient talks to the executor process.
type execClient struct {
	cmd    *exec.Cmd
	in     io.WriteCloser
	enc    *json.Encoder
	events chan event
	done   chan error
}

func startExecutor(exe, meta string) (*execClient, error) {
	cmd := exec.Command(exe)
	cmd.Env = append(os.Environ(), executorEnv+"="+meta)
	cmd.Stderr = os.Stderr
	// Its own process group: a Ctrl-C at the terminal reaches the runner,
	// which stops jobs in order, and not the executor.
	cmd.SysProcAttr = &syscall.SysProcAttr{Setpgid: true}
	in, err := cmd.StdinPipe()
	if err != nil {
		return nil, err
	}
	out, err := cmd.StdoutPipe()
	if err != nil {
		return nil, err
	}
	if err := cmd.Start(); err != nil {
		return nil, fmt.Errorf("start the executor (%s): %w", exe, err)
	}
	c := &execClient{cmd: cmd, in: in, enc: json.NewEncoder(in), events: make(chan event, 1024), done: make(chan error, 1)}
	go func() {
		dec := json.NewDecoder(bufio.NewReader(out))
		for {
			var ev event
			if err := dec.Decode(&ev); err != nil {
				break
			}
			c.events <- ev
		}
		close(c.events)
		c.done <- cmd.Wait()
	}()
	return c, nil
}

func (c *execClient) send(req request) { c.enc.Encode(req) }

func (c *execClient) wait() error {
	select {
	case err := <-c.done:
		c.done <- err
		return err
	case <-time.After(time.Second):
		return errors.New("no exit status")
	}
}

func (c *execClient) close() error {
	c.in.Close()
	for range c.events {
	}
	if err := <-c.done; err != nil {
		return fmt.Errorf("executor: %w", err)
	}
	return nil
}
