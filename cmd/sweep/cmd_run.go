package main

import (
	"fmt"
	"os"
	"os/exec"
	"os/signal"
	"path/filepath"
	"strings"
	"syscall"
	"time"

	"golang.org/x/sys/unix"

	"github.com/spf13/cobra"

	"github.com/sweep-cfd/sweep/internal/store"
	"github.com/sweep-cfd/sweep/internal/study"
	"github.com/sweep-cfd/sweep/internal/ui"
)

type runOptions struct {
	backend string
	detach  bool
	cores   int
	json    bool
	quiet   bool
}

func newRunCmd() *cobra.Command {
	var opts runOptions
	cmd := &cobra.Command{
		Use:   "run [DIR]",
		Short: "Run the study's queued jobs on this machine's cores",
		Long: `run starts the queued stage jobs of DIR's variants within a core budget:
stages of a variant run in order, variants run side by side. Each stage's
output goes to variants/<label>/<stage>.log. A failing stage is retried as
the recipe allows, then its variant is marked failed; the others go on.

Ctrl-C (or SIGTERM) stops running jobs and re-queues them. If run itself
dies (killed, out of memory), its stages go on: the next run takes them
over without interrupting them, and keeps every end that happened
meanwhile. A closed terminal (SIGHUP) does not stop the run: it goes on,
writing to DIR/.sweep/run.log. --detach starts the run in the background
at once (local backend), or submits and returns (slurm). Only one run may
work on a study at a time.`,
		Args: maxOneDir,
		RunE: func(cmd *cobra.Command, args []string) error {
			return runRun(cmd, opts, studyDir(args))
		},
	}
	cmd.Flags().IntVar(&opts.cores, "cores", 0, "cores the run may use at once (default: all of this machine's)")
	cmd.Flags().StringVar(&opts.backend, "backend", "", "where stages run: local or slurm (default: the recipe's [backend] kind, else local)")
	cmd.Flags().BoolVar(&opts.detach, "detach", false, "local: run in the background, writing to DIR/.sweep/run.log; slurm: submit what is ready and return (run again, or status --refresh, to follow)")
	cmd.Flags().BoolVar(&opts.json, "json", false, "print the final status as JSON")
	cmd.Flags().BoolVarP(&opts.quiet, "quiet", "q", false, "print only failures and the summary")
	return cmd
}

func runRun(cmd *cobra.Command, opts runOptions, dir string) error {
	backend, err := study.Backend(dir, opts.backend)
	if err != nil {
		return err
	}
	if backend == "local" && opts.detach && !detached() {
		return startDetached(cmd, dir)
	}
	prog := ui.NewRunProgress(os.Stderr, opts.quiet)
	stopHangup := surviveHangup(dir, prog)
	defer stopHangup()
	snap, err := study.Run(cmd.Context(), dir, study.RunOptions{Backend: opts.backend, Cores: opts.cores, Submit: opts.detach, Progress: prog})
	prog.Finish()
	if snap == nil {
		return err
	}
	out := cmd.OutOrStdout()
	if opts.json {
		rep, _, serr := study.StatusOf(dir)
		if serr != nil {
			return serr
		}
		if jerr := ui.JSON(out, rep); jerr != nil {
			return jerr
		}
	} else {
		fmt.Fprintf(out, "%d of %d variants done, %d failed, %d pending, in %s\n", snap.Done, snap.Total, snap.Failed, snap.Pending+snap.Running, ui.Duration(snap.Elapsed))
		if snap.Failed > 0 {
			fmt.Fprintf(out, "see `sweep status %s` for the failures; `sweep reset %s --failed` re-queues them\n", dir, dir)
		}
	}
	if err != nil {
		return err
	}
	if snap.Failed > 0 {
		return fmt.Errorf("%d variants failed", snap.Failed)
	}
	return nil
}

func newCancelCmd() *cobra.Command {
	return &cobra.Command{
		Use:   "cancel [DIR]",
		Short: "Stop the study's run: a local run in the background, or its jobs in Slurm",
		Long: `cancel stops what runs the study: a local run (in the background, or in
another terminal) is asked to stop as Ctrl-C would, and its running stages
are re-queued; on the Slurm backend every job of the study is cancelled
with scancel and re-queued.`,
		Args: maxOneDir,
		RunE: func(cmd *cobra.Command, args []string) error {
			dir := studyDir(args)
			c, err := study.Cancel(cmd.Context(), dir)
			out := cmd.OutOrStdout()
			if c != nil && c.PID != 0 {
				fmt.Fprintf(out, "asked the run (pid %d) to stop; it re-queues its running stages and ends\n", c.PID)
				if c.Ended {
					fmt.Fprintln(out, "the run has ended")
				}
			}
			if err != nil {
				return err
			}
			if c.PID == 0 {
				fmt.Fprintf(out, "cancelled %d Slurm jobs; they are back in the queue\n", c.Slurm)
			}
			return nil
		},
	}
}

// detachedEnv marks a run started by --detach in the background.
const detachedEnv = "SWEEP_DETACHED"

func detached() bool { return os.Getenv(detachedEnv) != "" }

// runLog is where a run in the background, or one whose terminal closed,
// writes its output.
func runLog(dir string) string { return filepath.Join(dir, store.Dir, "run.log") }

// startDetached starts this same command again in the background, in a
// session of its own, with its output in the study's run log, and returns
// once it holds the study (or has failed).
func startDetached(cmd *cobra.Command, dir string) error {
	if h, ok := study.LocalRunner(dir); ok || store.Held(dir) {
		return fmt.Errorf("%w: %s; wait for it to finish or stop it (sweep cancel %s)", store.ErrLocked, h, dir)
	}
	exe, err := os.Executable()
	if err != nil {
		return err
	}
	if err := os.MkdirAll(filepath.Join(dir, store.Dir), 0o700); err != nil {
		return err
	}
	logf, err := os.OpenFile(runLog(dir), os.O_WRONLY|os.O_CREATE|os.O_APPEND, 0o600)
	if err != nil {
		return err
	}
	defer logf.Close()
	fmt.Fprintf(logf, "=== sweep run started in the background at %s ===\n", time.Now().Format(time.DateTime))
	child := exec.Command(exe, os.Args[1:]...)
	child.Env = append(os.Environ(), detachedEnv+"=1")
	child.Stdout, child.Stderr = logf, logf
	child.SysProcAttr = &syscall.SysProcAttr{Setsid: true}
	if err := child.Start(); err != nil {
		return fmt.Errorf("start the run in the background: %w", err)
	}
	exited := make(chan error, 1)
	go func() { exited <- child.Wait() }()
	for range 100 {
		if h, err := store.ReadHolder(dir); err == nil && h.PID == child.Process.Pid && store.Held(dir) {
			fmt.Fprintf(cmd.OutOrStdout(), "the run goes on in the background (pid %d); its output: %s\nfollow it with `sweep status %s`; stop it with `sweep cancel %s`\n",
				h.PID, runLog(dir), dir, dir)
			return nil
		}
		select {
		case <-exited:
			return fmt.Errorf("the run in the background ended at once: %s", strings.Join(lastLogLines(runLog(dir), 3), "; "))
		case <-time.After(50 * time.Millisecond):
		}
	}
	return fmt.Errorf("the run in the background (pid %d) did not take the study within 5 s; see %s", child.Process.Pid, runLog(dir))
}

func lastLogLines(path string, n int) []string {
	b, _ := os.ReadFile(path)
	lines := strings.Split(strings.TrimSpace(string(b)), "\n")
	if len(lines) > n {
		lines = lines[len(lines)-n:]
	}
	return lines
}

// surviveHangup keeps the run going when its terminal closes: on SIGHUP
// its standard output and error are moved to the study's run log (so
// nothing it prints can fail on the closed terminal) and progress is
// printed as plain lines. The returned function ends the watch.
func surviveHangup(dir string, prog *ui.RunProgress) func() {
	hup := make(chan os.Signal, 1)
	signal.Notify(hup, syscall.SIGHUP)
	done := make(chan struct{})
	go func() {
		select {
		case <-hup:
		case <-done:
			return
		}
		logf, err := os.OpenFile(runLog(dir), os.O_WRONLY|os.O_CREATE|os.O_APPEND, 0o600)
		if err != nil {
			return
		}
		fmt.Fprintf(logf, "=== the terminal closed at %s; the run goes on, writing here ===\n", time.Now().Format(time.DateTime))
		unix.Dup2(int(logf.Fd()), 1)
		unix.Dup2(int(logf.Fd()), 2)
		logf.Close()
		prog.Detach(os.Stderr)
		signal.Ignore(syscall.SIGHUP)
	}()
	return func() {
		signal.Stop(hup)
		close(done)
	}
}
