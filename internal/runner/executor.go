package runner

import (
	"bufio"
	"encoding/json"
	"errors"
	"fmt"
	"net"
	"os"
	"os/exec"
	"os/signal"
	"path/filepath"
	"strings"
	"sync"
	"syscall"
	"time"

	"golang.org/x/sys/unix"
)

// IsExecutor reports whether this process was started as an executor.
func IsExecutor() bool { return os.Getenv(executorEnv) != "" }

// socketPath returns a short path to the executor's socket in the study's
// .sweep directory, opened as dir: through /proc/self/fd, so a deep study
// directory does not run into the 108-byte limit of socket addresses.
func socketPath(dir *os.File) string {
	return fmt.Sprintf("/proc/self/fd/%d/%s", dir.Fd(), socketName)
}

const (
	socketName  = "executor.sock"
	journalName = "exits"
	lockName    = "executor.lock"
	// idleWait is how long a new executor waits for its first runner
	// before it gives up (the runner that started it died at once).
	idleWait = 30 * time.Second
)

// ExecutorMain is the executor's main function (see the package comment):
// it serves the study's runners over a Unix socket in .sweep/, starts and
// stops stage processes, and keeps their ends until a runner has
// committed them. It returns when no runner is connected and no stage
// runs any more.
func ExecutorMain() int {
	meta := os.Getenv(executorEnv)
	logf := func(format string, args ...any) {
		fmt.Fprintf(os.Stderr, "%s sweep executor: %s\n", time.Now().Format(time.DateTime), fmt.Sprintf(format, args...))
	}
	// A closed terminal or a broken connection must not end the executor:
	// the stages it runs outlive their runner.
	signal.Ignore(syscall.SIGPIPE, syscall.SIGHUP, syscall.SIGINT)
	term := make(chan os.Signal, 1)
	signal.Notify(term, syscall.SIGTERM)
	lock, err := os.OpenFile(filepath.Join(meta, lockName), os.O_RDWR|os.O_CREATE, 0o600)
	if err != nil {
		logf("%v", err)
		return 1
	}
	if err := syscall.Flock(int(lock.Fd()), syscall.LOCK_EX|syscall.LOCK_NB); err != nil {
		// Another executor serves this study; the runner will find it.
		return 0
	}
	if err := becomeSubreaper(); err != nil {
		logf("cannot become the subreaper of the stages' processes (%v); processes that leave their stage's group are found by their token only", err)
	}
	dir, err := os.Open(meta)
	if err != nil {
		logf("%v", err)
		return 1
	}
	sock := socketPath(dir)
	os.Remove(filepath.Join(meta, socketName)) // stale: we hold the lock
	old := unix.Umask(0o077)
	ln, err := net.Listen("unix", sock)
	unix.Umask(old)
	if err != nil {
		logf("listen: %v", err)
		return 1
	}
	ln.(*net.UnixListener).SetUnlinkOnClose(false)
	journal, err := os.OpenFile(filepath.Join(meta, journalName), os.O_WRONLY|os.O_CREATE|os.O_APPEND, 0o600)
	if err != nil {
		logf("journal: %v", err)
		return 1
	}
	x := &executor{meta: meta, ln: ln, journal: journal, procs: map[string]*proc{}, exited: map[string]event{},
		quit: make(chan struct{}), logf: logf}
	tracked = x.isTracked
	go x.accept()
	go func() {
		<-term
		x.shutdownAll()
	}()
	idle := time.AfterFunc(idleWait, x.maybeQuit)
	<-x.quit
	idle.Stop()
	ln.Close()
	os.Remove(filepath.Join(meta, socketName))
	if err := journal.Sync(); err != nil {
		logf("journal: %v", err)
	}
	journal.Close()
	lock.Close()
	return 0
}

type proc struct {
	cmd     *exec.Cmd
	token   string
	done    chan struct{}
	stopped bool // the executor signalled it to end (stop request or shutdown)
}

type executor struct {
	meta    string
	ln      net.Listener
	journal *os.File
	logf    func(string, ...any)

	mu       sync.Mutex // guards everything below, and the current connection's writes
	conn     net.Conn
	enc      *json.Encoder
	procs    map[string]*proc
	exited   map[string]event // ended, not yet acknowledged by a runner
	quitting bool
	quit     chan struct{}
}

// isTracked reports whether pid is a stage leader the executor waits for
// through os/exec (the reaper of re-parented descendants skips those).
func (x *executor) isTracked(pid int) bool {
	x.mu.Lock()
	defer x.mu.Unlock()
	for _, p := range x.procs {
		if p.cmd.Process != nil && p.cmd.Process.Pid == pid {
			return true
		}
	}
	return false
}

// accept serves one runner at a time: a new connection replaces the old
// one (a runner that was killed leaves a connection the kernel closes,
// but the replacement may arrive first).
func (x *executor) accept() {
	for {
		c, err := x.ln.Accept()
		if err != nil {
			return
		}
		if !sameUser(c) {
			c.Close()
			continue
		}
		x.mu.Lock()
		if x.quitting {
			x.mu.Unlock()
			c.Close()
			return
		}
		if x.conn != nil {
			x.conn.Close()
		}
		x.conn, x.enc = c, json.NewEncoder(c)
		// The greeting: what runs, what ended unacknowledged, then ready.
		// Sent under the lock, so no event is lost or doubled.
		for _, p := range x.procs {
			x.enc.Encode(event{Token: p.token, Ev: "live", PID: p.cmd.Process.Pid})
		}
		for _, ev := range x.exited {
			x.enc.Encode(ev)
		}
		x.enc.Encode(event{Ev: "ready"})
		x.mu.Unlock()
		go x.serve(c)
	}
}

// sameUser reports whether the peer of a Unix connection runs as this
// process's user (the socket's directory is private too; this is a second
// check, since the executor runs whatever it is asked to).
func sameUser(c net.Conn) bool {
	uc, ok := c.(*net.UnixConn)
	if !ok {
		return false
	}
	raw, err := uc.SyscallConn()
	if err != nil {
		return false
	}
	var cred *unix.Ucred
	raw.Control(func(fd uintptr) { cred, err = unix.GetsockoptUcred(int(fd), unix.SOL_SOCKET, unix.SO_PEERCRED) })
	return err == nil && cred != nil && int(cred.Uid) == os.Getuid()
}

func (x *executor) serve(c net.Conn) {
	sc := bufio.NewScanner(c)
	sc.Buffer(make([]byte, 1<<20), 64<<20)
	for sc.Scan() {
		var req request
		if err := json.Unmarshal(sc.Bytes(), &req); err != nil {
			x.logf("bad request: %v", err)
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
			x.ack(req.Token)
		}
	}
	x.mu.Lock()
	if x.conn == c {
		x.conn, x.enc = nil, nil
		// Ends from now on wait for the next runner: keep them on disk.
		x.journal.Sync()
	}
	x.mu.Unlock()
	c.Close()
	x.maybeQuit()
}

// maybeQuit ends the executor when no runner is connected and no stage
// runs: everything it knows is then in the database or the journal.
func (x *executor) maybeQuit() {
	x.mu.Lock()
	defer x.mu.Unlock()
	if x.quitting || x.conn != nil || len(x.procs) > 0 {
		return
	}
	x.quitting = true
	x.ln.Close()
	close(x.quit)
}

// send writes an event to the runner, if one is connected. Called with
// x.mu held.
func (x *executor) send(ev event) {
	if x.enc == nil {
		return
	}
	if err := x.enc.Encode(ev); err != nil {
		// The runner is gone; the journal and the next greeting cover it.
		x.conn.Close()
		x.conn, x.enc = nil, nil
	}
}

// ended records a stage's end: in memory until acknowledged, in the
// journal at once (written through the page cache, which survives the
// executor's own death; synced when no runner is connected), and to the
// runner if one is connected.
func (x *executor) ended(ev event) {
	x.mu.Lock()
	defer x.mu.Unlock()
	x.exited[ev.Token] = ev
	b, _ := json.Marshal(ev)
	if _, err := x.journal.Write(append(b, '\n')); err != nil {
		x.logf("journal: %v", err)
	}
	if x.enc == nil {
		x.journal.Sync()
	}
	x.send(ev)
}

func (x *executor) ack(token string) {
	x.mu.Lock()
	defer x.mu.Unlock()
	delete(x.exited, token)
	if len(x.exited) == 0 {
		x.journal.Truncate(0)
	}
}

func (x *executor) start(req request) {
	fail := func(err error) {
		x.ended(event{Token: req.Token, Ev: "exit", Code: -1, Err: err.Error()})
	}
	if len(req.Argv) == 0 {
		fail(errors.New("empty command"))
		return
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
	p := &proc{cmd: cmd, token: req.Token, done: make(chan struct{})}
	// Start and register under the lock, so the reaper never takes a
	// stage leader's exit status from os/exec.
	x.mu.Lock()
	if err := cmd.Start(); err != nil {
		x.mu.Unlock()
		fmt.Fprintf(logf, "=== sweep: could not start %s: %v ===\n", req.Argv[0], err)
		logf.Close()
		fail(err)
		return
	}
	x.procs[req.Token] = p
	x.send(event{Token: req.Token, Ev: "started", PID: cmd.Process.Pid})
	x.mu.Unlock()
	go x.wait(p, logf)
}

// wait waits for a stage's leader process, ends any process it left
// behind, and records the end.
func (x *executor) wait(p *proc, logf *os.File) {
	err := p.cmd.Wait()
	ev := event{Token: p.token, Ev: "exit"}
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
	// Processes of the stage that outlived its leader (in its group, or
	// escaped with setsid and re-parented here) are stopped: a stage is
	// over when its leader ends, and its cores are free again.
	killGroup(p.cmd.Process.Pid, syscall.SIGKILL)
	if left := x.leftovers(p.token); len(left) > 0 {
		n := stopProcesses(left, p.token, time.Second)
		fmt.Fprintf(logf, "=== sweep: stopped %d process(es) the stage left running ===\n", n)
	}
	x.mu.Lock()
	ev.Stopped = p.stopped
	delete(x.procs, p.token)
	x.mu.Unlock()
	stopped := ""
	if ev.Stopped {
		stopped = ", stopped by sweep"
	}
	fmt.Fprintf(logf, "=== sweep: ended %s: %s%s, token %s ===\n", time.Now().Format(logStamp), ev.outcome(), stopped, p.token)
	logf.Close()
	close(p.done)
	x.ended(ev)
	x.maybeQuit()
}

// leftovers returns the PIDs of processes carrying the token that are
// children of the executor (re-parented descendants). Reading the child
// lists is cheap; scanning all of /proc is kept for stops. (An orphan goes
// to the thread that started its parent, so every thread's list is read.)
func (x *executor) leftovers(token string) []int {
	var pids []int
	for _, pid := range reapChildren() {
		if hasToken(pid, token) {
			pids = append(pids, pid)
		}
	}
	return pids
}

// signal sends a named signal (TERM, INT, HUP, USR1, USR2) to the job's
// process group: the settle stop of a solver that ends cleanly on it.
func (x *executor) signal(token, name string) {
	sig, ok := map[string]syscall.Signal{"TERM": syscall.SIGTERM, "INT": syscall.SIGINT, "HUP": syscall.SIGHUP,
		"USR1": syscall.SIGUSR1, "USR2": syscall.SIGUSR2}[name]
	x.mu.Lock()
	p := x.procs[token]
	if p != nil {
		p.stopped = true
	}
	x.mu.Unlock()
	if p == nil || !ok {
		return
	}
	killGroup(p.cmd.Process.Pid, sig)
}

// stop ends a job: SIGTERM to its process group, SIGKILL after grace, and
// then every process still carrying its token (descendants that left the
// group). It returns at once; the end arrives as an exit event.
func (x *executor) stop(token string, grace time.Duration) {
	x.mu.Lock()
	p := x.procs[token]
	if p != nil {
		p.stopped = true
	}
	x.mu.Unlock()
	if p == nil {
		return
	}
	pgid := p.cmd.Process.Pid
	killGroup(pgid, syscall.SIGTERM)
	go func() {
		select {
		case <-p.done:
		case <-time.After(grace):
			killGroup(pgid, syscall.SIGKILL)
		}
		// Anything of the job's that escaped its group, wherever it is.
		if found := tokenProcesses([]string{token})[token]; len(found) > 0 {
			stopProcesses(found, token, grace)
		}
	}()
}

// shutdownAll stops every job on SIGTERM to the executor (a system
// shutdown, or a user who stops it): their ends are journalled as stopped,
// so the next run re-queues them rather than taking a clean exit for a
// finished stage.
func (x *executor) shutdownAll() {
	x.mu.Lock()
	var ps []*proc
	for _, p := range x.procs {
		ps = append(ps, p)
	}
	x.mu.Unlock()
	for _, p := range ps {
		x.stop(p.token, 5*time.Second)
	}
	for _, p := range ps {
		<-p.done
	}
	x.mu.Lock()
	if x.conn != nil {
		x.conn.Close()
		x.conn, x.enc = nil, nil
	}
	x.mu.Unlock()
	x.maybeQuit()
}

// outcome says in words how a process ended, for logs and reasons.
func (ev event) outcome() string {
	switch {
	case ev.Err != "":
		return "could not start: " + ev.Err
	case ev.Signal != "":
		return "killed by signal: " + ev.Signal
	}
	return fmt.Sprintf("exit status %d", ev.Code)
}

// readJournal reads the ends an executor journalled, by token.
func readJournal(path string) (map[string]event, error) {
	ends := map[string]event{}
	b, err := os.ReadFile(path)
	if errors.Is(err, os.ErrNotExist) {
		return ends, nil
	}
	if err != nil {
		return nil, err
	}
	for _, line := range strings.Split(string(b), "\n") {
		var ev event
		if json.Unmarshal([]byte(line), &ev) == nil && ev.Token != "" {
			ends[ev.Token] = ev
		}
	}
	return ends, nil
}
