package runner

import (
	"bufio"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"os/exec"
	"os/signal"
	"path/filepath"
	"sync"
	"syscall"
	"time"
)

// IsExecutor reports whether this process was started as an executor.
func IsExecutor() bool { return os.Getenv(executorEnv) != "" }

// ExecutorMain is the executor's main function: it reads requests from in,
// starts and stops processes, reports their events on out, and returns the
// process exit status when in closes. See the package comment.
func ExecutorMain(in io.Reader, out io.Writer) int {
	dir := os.Getenv(executorEnv)
	// When the runner dies, writing an event to it fails. Without this, Go
	// would end the executor on SIGPIPE (writes to fd 1 are fatal), leaving
	// its jobs orphaned and their ends unrecorded. Hang-ups are the
	// runner's business too.
	signal.Notify(make(chan os.Signal, 1), syscall.SIGPIPE, syscall.SIGHUP)
	lock, err := os.OpenFile(filepath.Join(dir, "executor.lock"), os.O_RDWR|os.O_CREATE, 0o644)
	if err != nil {
		fmt.Fprintln(os.Stderr, "sweep executor:", err)
		return 1
	}
	if err := syscall.Flock(int(lock.Fd()), syscall.LOCK_EX); err != nil {
		fmt.Fprintln(os.Stderr, "sweep executor:", err)
		return 1
	}
	x := &executor{dir: dir, out: json.NewEncoder(out), procs: map[string]*proc{}, exited: map[string]event{}}
	sc := bufio.NewScanner(in)
	sc.Buffer(make([]byte, 1<<20), 64<<20)
	for sc.Scan() {
		var req request
		if err := json.Unmarshal(sc.Bytes(), &req); err != nil {
			fmt.Fprintln(os.Stderr, "sweep executor: bad request:", err)
			continue
		}
		switch req.Op {
		case "start":
			x.start(req)
		case "stop":
			x.stop(req.Token, time.Duration(req.Grace)*time.Millisecond)
		case "signal":
			x.signal(req.Token, req.Signal)
		case "ack":
			x.mu.Lock()
			delete(x.exited, req.Token)
			x.mu.Unlock()
		}
	}
	// The runner is gone (finished, or killed). Stop what still runs, then
	// keep every end the runner did not acknowledge.
	x.mu.Lock()
	x.shutdown = true
	running := make([]string, 0, len(x.procs))
	for t := range x.procs {
		running = append(running, t)
	}
	x.mu.Unlock()
	for _, t := range running {
		x.stop(t, 5*time.Second)
	}
	x.wg.Wait()
	if err := x.journal(); err != nil {
		fmt.Fprintln(os.Stderr, "sweep executor: journal:", err)
		return 1
	}
	return 0
}

type proc struct {
	cmd  *exec.Cmd
	done chan struct{}
}

type executor struct {
	dir    string
	mu     sync.Mutex
	out    *json.Encoder
	procs  map[string]*proc
	exited map[string]event // ended, not yet acknowledged
	wg     sync.WaitGroup
	// shutdown is set once the runner is gone: processes stopped from
	// then on were interrupted, and only a clean exit still counts as an
	// end worth keeping.
	shutdown bool
}

func (x *executor) send(ev event) {
	x.mu.Lock()
	defer x.mu.Unlock()
	x.out.Encode(ev) // a broken pipe means the runner died; the journal covers it
}

func (x *executor) start(req request) {
	fail := func(err error) {
		ev := event{Token: req.Token, Ev: "exit", Code: -1, Err: err.Error()}
		x.mu.Lock()
		x.exited[req.Token] = ev
		x.mu.Unlock()
		x.send(ev)
	}
	logf, err := os.OpenFile(req.Log, os.O_WRONLY|os.O_CREATE|os.O_APPEND, 0o644)
	if err != nil {
		fail(fmt.Errorf("open log: %w", err))
		return
	}
	if req.Header != "" {
		logf.WriteString(req.Header)
	}
	cmd := exec.Command(req.Argv[0], req.Argv[1:]...)
	cmd.Dir = req.Dir
	cmd.Env = append(req.Env, tokenEnv+"="+req.Token)
	cmd.Stdout, cmd.Stderr = logf, logf
	cmd.SysProcAttr = &syscall.SysProcAttr{Setpgid: true}
	if err := cmd.Start(); err != nil {
		logf.Close()
		fail(err)
		return
	}
	p := &proc{cmd: cmd, done: make(chan struct{})}
	x.mu.Lock()
	x.procs[req.Token] = p
	x.mu.Unlock()
	x.send(event{Token: req.Token, Ev: "started", PID: cmd.Process.Pid})
	x.wg.Add(1)
	go func() {
		defer x.wg.Done()
		err := cmd.Wait()
		logf.Close()
		ev := event{Token: req.Token, Ev: "exit"}
		var ee *exec.ExitError
		switch {
		case err == nil:
		case errors.As(err, &ee):
			ev.Code = ee.ExitCode()
			if ws, ok := ee.Sys().(syscall.WaitStatus); ok && ws.Signaled() {
				ev.Code = -1
				ev.Signal = ws.Signal().String()
			}
		default:
			ev.Code, ev.Err = -1, err.Error()
		}
		x.mu.Lock()
		delete(x.procs, req.Token)
		if !x.shutdown || (ev.Code == 0 && ev.Err == "") {
			x.exited[req.Token] = ev
		}
		x.mu.Unlock()
		close(p.done)
		x.send(ev)
	}()
}

// signal sends a named signal (TERM, INT, HUP, USR1, USR2) to the job's
// process group: the early stop of a solver that ends cleanly on it.
func (x *executor) signal(token, name string) {
	sig, ok := map[string]syscall.Signal{"TERM": syscall.SIGTERM, "INT": syscall.SIGINT, "HUP": syscall.SIGHUP,
		"USR1": syscall.SIGUSR1, "USR2": syscall.SIGUSR2}[name]
	x.mu.Lock()
	p := x.procs[token]
	x.mu.Unlock()
	if p == nil || !ok {
		return
	}
	syscall.Kill(-p.cmd.Process.Pid, sig)
}

// stop sends SIGTERM to the job's process group and SIGKILL after grace.
func (x *executor) stop(token string, grace time.Duration) {
	x.mu.Lock()
	p := x.procs[token]
	x.mu.Unlock()
	if p == nil {
		return
	}
	pgid := p.cmd.Process.Pid
	syscall.Kill(-pgid, syscall.SIGTERM)
	go func() {
		select {
		case <-p.done:
		case <-time.After(grace):
			syscall.Kill(-pgid, syscall.SIGKILL)
		}
	}()
	if grace >= 5*time.Second {
		// Called at shutdown: wait here so the journal sees the end.
		select {
		case <-p.done:
		case <-time.After(grace + time.Second):
		}
	}
}

// journal appends the unacknowledged ends to .sweep/exits and syncs it.
func (x *executor) journal() error {
	x.mu.Lock()
	defer x.mu.Unlock()
	if len(x.exited) == 0 {
		return nil
	}
	f, err := os.OpenFile(filepath.Join(x.dir, "exits"), os.O_WRONLY|os.O_CREATE|os.O_APPEND, 0o644)
	if err != nil {
		return err
	}
	enc := json.NewEncoder(f)
	for _, ev := range x.exited {
		if err := enc.Encode(ev); err != nil {
			f.Close()
			return err
		}
	}
	if err := f.Sync(); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}
