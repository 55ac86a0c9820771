package study

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"syscall"
	"time"

	"github.com/sweep-cfd/sweep/internal/runner"
	"github.com/sweep-cfd/sweep/internal/store"
)

// RunOptions control Run.
type RunOptions struct {
	// Backend is "local" or "slurm" ("" for the recipe's [backend] kind).
	Backend string
	// Cores is the local core budget (0: all of the machine's).
	Cores int
	// Submit, on Slurm, submits what is ready and returns.
	Submit   bool
	Progress runner.Progress
}

// Backend returns the backend a run of the study in dir uses: the one
// asked for, else the recipe's.
func Backend(dir, asked string) (string, error) {
	if asked != "" {
		return asked, nil
	}
	r, err := Load(dir)
	if err != nil {
		return "", err
	}
	return r.Backend.Kind, nil
}

// Run holds the study in dir and runs its queued jobs on the chosen
// backend until none is left (or, with Submit on Slurm, until what is
// ready is submitted).
func Run(ctx context.Context, dir string, opts RunOptions) (*runner.Snapshot, error) {
	if opts.Cores < 0 {
		return nil, usage(fmt.Errorf("--cores must be positive"))
	}
	r, err := Load(dir)
	if err != nil {
		return nil, err
	}
	backend := r.Backend.Kind
	if opts.Backend != "" {
		backend = opts.Backend
	}
	if backend != "local" && backend != "slurm" {
		return nil, usage(fmt.Errorf("--backend must be local or slurm (got %q)", backend))
	}
	lock, err := store.Acquire(dir, "run")
	if err != nil {
		return nil, err
	}
	defer lock.Release()
	if backend == "slurm" {
		return runner.RunSlurm(ctx, r, runner.Options{Progress: opts.Progress}, opts.Submit)
	}
	return runner.Run(ctx, r, runner.Options{Cores: opts.Cores, Progress: opts.Progress})
}

// RefreshSlurm holds the study in dir, asks Slurm about its jobs and
// submits what is ready (status --refresh).
func RefreshSlurm(ctx context.Context, dir string) error {
	r, err := Load(dir)
	if err != nil {
		return err
	}
	lock, err := store.Acquire(dir, "status --refresh")
	if err != nil {
		return err
	}
	defer lock.Release()
	_, err = runner.RunSlurm(ctx, r, runner.Options{}, true)
	return err
}

// ResetFailed holds the study in dir and re-queues its failed jobs with
// their attempts cleared; it returns how many.
func ResetFailed(dir string) (int, error) {
	lock, err := store.Acquire(dir, "reset")
	if err != nil {
		return 0, err
	}
	defer lock.Release()
	st, err := store.OpenExisting(dir, store.Options{})
	if err != nil {
		return 0, err
	}
	defer st.Close()
	return runner.ResetFailed(st)
}

// LocalRunner returns the holder of the study's lock when it is a `sweep
// run` on this machine.
func LocalRunner(dir string) (store.Holder, bool) {
	if !store.Held(dir) {
		return store.Holder{}, false
	}
	h, err := store.ReadHolder(dir)
	host, _ := os.Hostname()
	if err != nil || h.PID == 0 || h.Command != "run" || h.Host != host {
		return h, false
	}
	return h, true
}

// Cancelled says what Cancel stopped.
type Cancelled struct {
	// PID is the local run that was asked to stop (0 for none); Ended says
	// it has ended.
	PID   int
	Ended bool
	// Slurm counts the Slurm jobs cancelled.
	Slurm int
}

// Cancel stops what runs the study in dir: a local run is asked to stop as
// Ctrl-C would (its running stages are re-queued), and Cancel waits up to
// a minute for it to end; otherwise every Slurm job of the study is
// cancelled with scancel and re-queued.
func Cancel(ctx context.Context, dir string) (*Cancelled, error) {
	if h, ok := LocalRunner(dir); ok {
		if err := syscall.Kill(h.PID, syscall.SIGINT); err != nil {
			return nil, fmt.Errorf("stop the run (pid %d): %w", h.PID, err)
		}
		for range 600 {
			if !store.Held(dir) {
				return &Cancelled{PID: h.PID, Ended: true}, nil
			}
			time.Sleep(100 * time.Millisecond)
		}
		return &Cancelled{PID: h.PID}, fmt.Errorf("the run (pid %d) is still stopping after 60 s; see %s", h.PID, filepath.Join(dir, store.Dir, "run.log"))
	}
	lock, err := store.Acquire(dir, "cancel")
	if err != nil {
		return nil, err
	}
	defer lock.Release()
	st, err := store.OpenExisting(dir, store.Options{Brief: true})
	if err != nil {
		return nil, err
	}
	defer st.Close()
	n, err := runner.CancelSlurm(ctx, st)
	if err != nil {
		return nil, err
	}
	return &Cancelled{Slurm: n}, nil
}
