package runner

import (
	"bufio"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"net"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"time"

	"github.com/sweep-cfd/sweep/internal/store"
)

// errNoExecutor says that no executor serves the study.
var errNoExecutor = errors.New("no executor")

// execClient is a runner's connection to the executor.
type execClient struct {
	dir    *os.File // the .sweep directory, held open for the socket path
	conn   net.Conn
	enc    *json.Encoder
	events chan event
	// What the greeting said: stages that run (token -> PID) and ends not
	// yet acknowledged.
	live  map[string]int
	exits map[string]event
}

// connectExecutor connects to the study's executor. It returns
// errNoExecutor when none is alive; when one is alive but does not accept
// (it is starting, or quitting), it waits for it to settle, up to two
// minutes.
func connectExecutor(ctx context.Context, meta string, p Progress) (*execClient, error) {
	told := false
	deadline := time.Now().Add(2 * time.Minute)
	for {
		c, err := dial(meta)
		if err == nil {
			return c, nil
		}
		if !executorAlive(meta) {
			return nil, errNoExecutor
		}
		if !told {
			p.Event("waiting for the study's executor to accept the run")
			told = true
		}
		if time.Now().After(deadline) {
			return nil, fmt.Errorf("the study's executor is alive but has not accepted a connection for 2 minutes (%v); see %s", err, filepath.Join(meta, "executor.log"))
		}
		select {
		case <-ctx.Done():
			return nil, ctx.Err()
		case <-time.After(50 * time.Millisecond):
		}
	}
}

// executorAlive reports whether an executor holds the study's executor
// lock.
func executorAlive(meta string) bool {
	f, err := os.OpenFile(filepath.Join(meta, lockName), os.O_RDWR|os.O_CREATE, 0o600)
	if err != nil {
		return false
	}
	defer f.Close()
	if err := syscall.Flock(int(f.Fd()), syscall.LOCK_EX|syscall.LOCK_NB); err != nil {
		return true
	}
	syscall.Flock(int(f.Fd()), syscall.LOCK_UN)
	return false
}

// ExecutorAlive reports whether the executor of the study in studyDir
// runs (it holds its lock), so the study's stages go on without a run.
// Unlike executorAlive it creates nothing.
func ExecutorAlive(studyDir string) bool { return executorRunning(filepath.Join(studyDir, store.Dir)) }

// executorRunning is executorAlive for readers: it creates nothing.
func executorRunning(meta string) bool {
	f, err := os.Open(filepath.Join(meta, lockName))
	if err != nil {
		return false
	}
	defer f.Close()
	if err := syscall.Flock(int(f.Fd()), syscall.LOCK_SH|syscall.LOCK_NB); err != nil {
		return true
	}
	syscall.Flock(int(f.Fd()), syscall.LOCK_UN)
	return false
}

// dial connects to the executor's socket and reads its greeting.
func dial(meta string) (*execClient, error) {
	dir, err := os.Open(meta)
	if err != nil {
		return nil, err
	}
	conn, err := net.Dial("unix", socketPath(dir))
	if err != nil {
		dir.Close()
		return nil, err
	}
	c := &execClient{dir: dir, conn: conn, enc: json.NewEncoder(conn), events: make(chan event, 1024),
		live: map[string]int{}, exits: map[string]event{}}
	dec := json.NewDecoder(bufio.NewReader(conn))
	conn.SetReadDeadline(time.Now().Add(10 * time.Second))
	for {
		var ev event
		if err := dec.Decode(&ev); err != nil {
			conn.Close()
			dir.Close()
			return nil, fmt.Errorf("read the executor's greeting: %w", err)
		}
		if ev.Ev == "ready" {
			break
		}
		switch ev.Ev {
		case "live":
			c.live[ev.Token] = ev.PID
		case "exit":
			c.exits[ev.Token] = ev
		}
	}
	conn.SetReadDeadline(time.Time{})
	go func() {
		for {
			var ev event
			if err := dec.Decode(&ev); err != nil {
				break
			}
			c.events <- ev
		}
		close(c.events)
	}()
	return c, nil
}

// startExecutor starts a new executor for the study, detached from the
// runner's terminal and session (so a closed terminal or a killed runner
// leaves it and its stages running), and connects to it.
func startExecutor(ctx context.Context, exe, meta string) (*execClient, error) {
	logPath := filepath.Join(meta, "executor.log")
	logf, err := os.OpenFile(logPath, os.O_WRONLY|os.O_CREATE|os.O_APPEND, 0o600)
	if err != nil {
		return nil, err
	}
	cmd := exec.Command(exe)
	cmd.Env = append(os.Environ(), executorEnv+"="+meta)
	cmd.Stderr = logf
	cmd.SysProcAttr = &syscall.SysProcAttr{Setsid: true}
	err = cmd.Start()
	logf.Close()
	if err != nil {
		return nil, fmt.Errorf("start the executor (%s): %w", exe, err)
	}
	exited := make(chan error, 1)
	go func() { exited <- cmd.Wait() }()
	deadline := time.Now().Add(10 * time.Second)
	for {
		c, err := dial(meta)
		if err == nil {
			return c, nil
		}
		select {
		case werr := <-exited:
			// It may have found another executor serving the study.
			if c, err := dial(meta); err == nil {
				return c, nil
			}
			return nil, fmt.Errorf("the executor ended at once (%v): %s", werr, lastLines(logPath, 3))
		case <-ctx.Done():
			return nil, ctx.Err()
		case <-time.After(20 * time.Millisecond):
		}
		if time.Now().After(deadline) {
			return nil, fmt.Errorf("the executor did not accept a connection within 10 s: %v; see %s", err, logPath)
		}
	}
}

func lastLines(path string, n int) string {
	ls := tail(path, n)
	if len(ls) == 0 {
		return "no message"
	}
	return strings.Join(ls, "; ")
}

// send writes a request. An error means the connection is lost: the
// executor carries on with what it has, and the next run recovers.
func (c *execClient) send(req request) error {
	if err := c.enc.Encode(req); err != nil {
		return fmt.Errorf("lost the connection to the executor (%w); its stages go on, and the next `sweep run` takes them over", err)
	}
	return nil
}

// close ends the connection. The executor ends by itself once no runner
// is connected and no stage runs.
func (c *execClient) close() {
	c.conn.Close()
	for range c.events {
	}
	c.dir.Close()
}
