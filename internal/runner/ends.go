package runner

import (
	"fmt"
	"time"

	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/store"
)

// endKind is what a job's end means for the queue.
type endKind int

const (
	endDone        endKind = iota // the stage finished: its variant moves on
	endRetry                      // a failed attempt with attempts left: pending again
	endFailed                     // failed for good
	endInterrupted                // stopped before it could finish: pending again, not an attempt
)

// judgeEnd records a process end in its job and says what it means. It is
// the one rule for ends seen live and ends recovered after a crash:
//
//   - a run the runner asked to stop because its averages settled is done
//     (the reason was committed before the solver was asked to stop);
//   - a run the executor signalled (ev.Stopped) ended because of that
//     signal, so its exit status says nothing: past its timeout it is a
//     failed attempt, otherwise (Ctrl-C, the executor's shutdown) an
//     interruption that re-queues it;
//   - any other run is judged by its exit status; a failure with attempts
//     left goes back to the queue.
func judgeEnd(j *store.Job, ev event, s recipe.Stage, now time.Time) endKind {
	j.Ended, j.PID = now.UTC(), 0
	if ev.Stopped && j.Settled == "" && j.Stopping != store.StopTimeout {
		j.Reason = "stopped when its executor shut down; re-queued"
		if j.Stopping == store.StopInterrupt {
			j.Reason = "interrupted by the user; re-queued"
		}
		j.State, j.Interrupts, j.Token, j.Stopping = store.Pending, j.Interrupts+1, "", ""
		return endInterrupted
	}
	j.Attempts++
	j.ExitCode = ev.Code
	if j.Settled != "" || (ev.Code == 0 && ev.Err == "" && ev.Signal == "") {
		j.State, j.Reason, j.Tail = store.Done, "", nil
		return endDone
	}
	why := ev.outcome()
	if ev.Stopped && j.Stopping == store.StopTimeout {
		why = fmt.Sprintf("timed out after %s", s.Timeout)
	}
	j.Stopping = ""
	if j.Attempts <= s.Retries {
		j.State, j.Reason = store.Pending, why+"; retried"
		return endRetry
	}
	j.State, j.Reason = store.Failed, why
	return endFailed
}
