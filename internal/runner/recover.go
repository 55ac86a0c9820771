package runner

import (
	"bufio"
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"syscall"
	"time"

	"github.com/sweep-cfd/sweep/internal/store"
)

// waitForExecutor waits until no executor of an earlier run is alive (it
// may still be stopping that run's jobs and writing their ends).
func waitForExecutor(ctx context.Context, meta string, p Progress) error {
	f, err := os.OpenFile(filepath.Join(meta, "executor.lock"), os.O_RDWR|os.O_CREATE, 0o644)
	if err != nil {
		return err
	}
	defer f.Close()
	told := false
	deadline := time.Now().Add(2 * time.Minute)
	for {
		err := syscall.Flock(int(f.Fd()), syscall.LOCK_EX|syscall.LOCK_NB)
		if err == nil {
			return syscall.Flock(int(f.Fd()), syscall.LOCK_UN)
		}
		if !errors.Is(err, syscall.EWOULDBLOCK) {
			return fmt.Errorf("executor lock: %w", err)
		}
		if !told {
			p.Event("waiting for the previous run's executor to stop its jobs")
			told = true
		}
		if time.Now().After(deadline) {
			return errors.New("the previous run's executor is still alive after 2 minutes; find it with `pgrep -f sweep` and stop it")
		}
		select {
		case <-ctx.Done():
			return ctx.Err()
		case <-time.After(100 * time.Millisecond):
		}
	}
}

// recoverJobs settles jobs that an earlier run left in the running state:
// a job whose end the executor kept in the exits journal gets that end; a
// job without one was stopped unfinished and goes back to the queue.
func recoverJobs(st *store.Store, meta string, p Progress) error {
	journal := filepath.Join(meta, "exits")
	ends, err := readJournal(journal)
	if err != nil {
		return err
	}
	var stray []string
	err = st.View(func(tx *store.Tx) error {
		return tx.Jobs(func(j store.Job) error {
			if j.State == store.Running {
				if _, ok := ends[j.Token]; !ok {
					stray = append(stray, j.Token)
				}
			}
			return nil
		})
	})
	if err != nil {
		return err
	}
	if len(stray) > 0 {
		// Normally the executor stopped these; if it was killed too, their
		// processes may live on. They carry their token in the environment.
		if n := stopTokens(stray); n > 0 {
			p.Event(fmt.Sprintf("stopped %d leftover processes of jobs lost by an earlier run", n))
		}
	}
	recovered, requeued := 0, 0
	err = st.Update(func(tx *store.Tx) error {
		var fix []store.Job
		if err := tx.Jobs(func(j store.Job) error {
			if j.State != store.Running {
				return nil
			}
			if ev, ok := ends[j.Token]; ok {
				settle(&j, ev)
				recovered++
			} else {
				j.State, j.Interrupts, j.Token, j.PID = store.Pending, j.Interrupts+1, "", 0
				j.Reason = "the run that started it ended before it did; re-queued"
				requeued++
			}
			fix = append(fix, j)
			return nil
		}); err != nil {
			return err
		}
		for _, j := range fix {
			if err := tx.PutJob(j); err != nil {
				return err
			}
		}
		return nil
	})
	if err != nil {
		return err
	}
	if recovered+requeued > 0 {
		p.Event(fmt.Sprintf("recovered from an interrupted run: %d job ends kept, %d unfinished jobs re-queued", recovered, requeued))
	}
	if err := os.Remove(journal); err != nil && !errors.Is(err, os.ErrNotExist) {
		return err
	}
	return nil
}

// settle records an end the executor journalled. Retries are left to the
// next dispatch: a failed end with attempts left goes back to pending.
func settle(j *store.Job, ev event) {
	j.Attempts++
	j.Ended = time.Now().UTC()
	j.ExitCode = ev.Code
	j.PID = 0
	if ev.Code == 0 && ev.Err == "" {
		j.State, j.Reason = store.Done, ""
		return
	}
	j.State = store.Failed
	switch {
	case ev.Err != "":
		j.Reason = "could not start: " + ev.Err
	case ev.Signal != "":
		j.Reason = "killed by signal: " + ev.Signal
	default:
		j.Reason = fmt.Sprintf("exit status %d", ev.Code)
	}
	j.Reason += " (while no runner was watching; `sweep reset --failed` re-queues it)"
}

func readJournal(path string) (map[string]event, error) {
	ends := map[string]event{}
	f, err := os.Open(path)
	if errors.Is(err, os.ErrNotExist) {
		return ends, nil
	}
	if err != nil {
		return nil, err
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		var ev event
		if json.Unmarshal(sc.Bytes(), &ev) == nil && ev.Token != "" {
			ends[ev.Token] = ev
		}
	}
	return ends, sc.Err()
}

// stopTokens stops every process whose environment carries one of the
// tokens (Linux /proc; elsewhere it finds none) and returns how many it
// signalled.
func stopTokens(tokens []string) int {
	want := map[string]bool{}
	for _, t := range tokens {
		want[tokenEnv+"="+t] = true
	}
	ents, err := os.ReadDir("/proc")
	if err != nil {
		return 0
	}
	var pids []int
	for _, e := range ents {
		pid, err := strconv.Atoi(e.Name())
		if err != nil || pid == os.Getpid() {
			continue
		}
		env, err := os.ReadFile(filepath.Join("/proc", e.Name(), "environ"))
		if err != nil {
			continue
		}
		for _, kv := range bytes.Split(env, []byte{0}) {
			if want[string(kv)] {
				pids = append(pids, pid)
				break
			}
		}
	}
	for _, pid := range pids {
		syscall.Kill(pid, syscall.SIGTERM)
	}
	if len(pids) > 0 {
		time.Sleep(2 * time.Second)
		for _, pid := range pids {
			syscall.Kill(pid, syscall.SIGKILL)
		}
	}
	return len(pids)
}
