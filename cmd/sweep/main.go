// Command sweep plans, runs and analyses studies of CFD design variants.
package main

import (
	"context"
	"errors"
	"fmt"
	"os"
	"os/signal"
	"runtime"
	"runtime/pprof"
	"syscall"

	"github.com/sweep-cfd/sweep/internal/runner"
	"github.com/sweep-cfd/sweep/internal/store"
	"github.com/sweep-cfd/sweep/internal/study"
)

func main() {
	stopProfile := profile()
	if runner.IsExecutor() {
		code := runner.ExecutorMain()
		stopProfile()
		os.Exit(code)
	}
	// SIGHUP (a closed terminal) is not an interruption: `sweep run` goes
	// on with its output in the study's log (see cmd_run.go); other
	// commands end, as commands do.
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	cmd := newRootCmd()
	err := cmd.ExecuteContext(ctx)
	if err != nil {
		fmt.Fprintln(os.Stderr, "sweep:", err)
	}
	code := exitCode(ctx, err)
	stop()
	stopProfile()
	os.Exit(code)
}

// profile writes a CPU profile of this process to $SWEEP_CPUPROFILE and
// a profile of every allocation to $SWEEP_MEMPROFILE (the executor's to
// those names with ".executor" added), for contributors measuring where a
// command's time and memory go (see DEVELOPERS.md). It returns the
// function that ends them.
func profile() func() {
	stopMem := memProfile()
	path := os.Getenv("SWEEP_CPUPROFILE")
	if path == "" {
		return stopMem
	}
	if runner.IsExecutor() {
		path += ".executor"
	}
	f, err := os.Create(path)
	if err != nil {
		fmt.Fprintln(os.Stderr, "sweep: profile:", err)
		return func() {}
	}
	if err := pprof.StartCPUProfile(f); err != nil {
		fmt.Fprintln(os.Stderr, "sweep: profile:", err)
		f.Close()
		return func() {}
	}
	return func() {
		pprof.StopCPUProfile()
		f.Close()
		stopMem()
	}
}

// memProfile starts recording every allocation when $SWEEP_MEMPROFILE
// is set and returns the function that writes the profile.
func memProfile() func() {
	path := os.Getenv("SWEEP_MEMPROFILE")
	if path == "" {
		return func() {}
	}
	if runner.IsExecutor() {
		path += ".executor"
	}
	runtime.MemProfileRate = 1
	return func() {
		f, err := os.Create(path)
		if err != nil {
			fmt.Fprintln(os.Stderr, "sweep: profile:", err)
			return
		}
		defer f.Close()
		runtime.GC() // the profile holds what the last collection saw
		if err := pprof.Lookup("allocs").WriteTo(f, 0); err != nil {
			fmt.Fprintln(os.Stderr, "sweep: profile:", err)
		}
	}
}

// Exit statuses, listed in the root command's help.
const (
	exitOK          = 0
	exitFailed      = 1 // the work failed: a job failed, a run or harvest could not finish
	exitUsage       = 2 // bad usage or a bad recipe
	exitInterrupted = 130
)

// usageError marks errors in the command line itself.
type usageError struct{ error }

func (e usageError) Unwrap() error { return e.error }

func exitCode(ctx context.Context, err error) int {
	var ue usageError
	var se study.UsageError
	switch {
	case err == nil:
		return exitOK
	case errors.Is(err, runner.ErrInterrupted) || errors.Is(err, context.Canceled) || ctx.Err() != nil:
		return exitInterrupted
	case errors.As(err, &ue) || errors.As(err, &se) || isRecipeError(err) || errors.Is(err, store.ErrNoStudy):
		return exitUsage
	default:
		return exitFailed
	}
}
