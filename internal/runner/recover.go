package runner

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"time"

	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/store"
)

// takeOver brings the database in line with what the study's executor
// knows, before a run dispatches anything, and returns a connection to
// the executor and the jobs that still run (the new run adopts them).
//
// If an executor is alive (the previous runner died but its stages went
// on), its greeting lists the stages that run and the ends no runner
// committed: the ends are judged and committed, the running stages are
// adopted, untouched. A job the database says runs but the executor does
// not know was never started; it goes back to the queue.
//
// If no executor is alive (a reboot, or both were killed), the ends it
// journalled in .sweep/exits are committed; a job without an end lost its
// process, or its process lives on without an executor to report its end
// (it carries its token in its environment): such processes are stopped,
// and their jobs re-queued. Then a new executor is started.
func takeOver(ctx context.Context, st *store.Store, r *recipe.Recipe, meta, exe string, p Progress) (*execClient, []store.Job, error) {
	x, err := connectExecutor(ctx, meta, p)
	fresh := errors.Is(err, errNoExecutor)
	if err != nil && !fresh {
		return nil, nil, err
	}
	ends, live := map[string]event{}, map[string]int{}
	journal := filepath.Join(meta, journalName)
	if fresh {
		if ends, err = readJournal(journal); err != nil {
			return nil, nil, fmt.Errorf("read %s: %w", journal, err)
		}
	} else {
		ends, live = x.exits, x.live
	}
	var lost []string
	if err := st.View(func(tx *store.Tx) error {
		return tx.Jobs(func(j store.Job) error {
			if j.State == store.Running && ends[j.Token].Token == "" && live[j.Token] == 0 {
				lost = append(lost, j.Token)
			}
			return nil
		})
	}); err != nil {
		if x != nil {
			x.close()
		}
		return nil, nil, err
	}
	if fresh && len(lost) > 0 {
		n := 0
		for tok, pids := range tokenProcesses(lost) {
			n += stopProcesses(pids, tok, 10*time.Second)
		}
		if n > 0 {
			p.Event(fmt.Sprintf("stopped %d process(es) of stages whose executor had ended; their stages run again", n))
		}
	}
	stages := map[string]recipe.Stage{}
	for _, s := range r.Stages {
		stages[s.Name] = s
	}
	var adopted []store.Job
	kept, requeued := 0, 0
	now := time.Now()
	err = st.Update(func(tx *store.Tx) error {
		var fix []store.Job
		if err := tx.Jobs(func(j store.Job) error {
			if j.State != store.Running {
				return nil
			}
			switch ev, ok := ends[j.Token]; {
			case ok:
				if judgeEnd(&j, ev, stages[j.Stage], now) == endFailed {
					j.Reason += " (while no runner was watching)"
				}
				kept++
			case live[j.Token] != 0:
				j.PID = live[j.Token]
				adopted = append(adopted, j)
				return nil
			default:
				j.State, j.Interrupts, j.Token, j.PID, j.Stopping = store.Pending, j.Interrupts+1, "", 0, ""
				j.Reason = "its process ended without a recorded end (its executor was gone); re-queued"
				if !fresh {
					j.Reason = "the run that claimed it ended before starting it; re-queued"
				}
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
		if x != nil {
			x.close()
		}
		return nil, nil, fmt.Errorf("recover after the previous run: %w", err)
	}
	if kept+requeued > 0 {
		p.Event(fmt.Sprintf("recovered from the previous run: %d job ends kept, %d unfinished jobs re-queued", kept, requeued))
	}
	if len(adopted) > 0 {
		p.Event(fmt.Sprintf("took over %d running stage(s) the previous run left; they were not interrupted", len(adopted)))
	}
	if fresh {
		if err := os.Remove(journal); err != nil && !errors.Is(err, os.ErrNotExist) {
			return nil, nil, err
		}
		if x, err = startExecutor(ctx, exe, meta); err != nil {
			return nil, nil, err
		}
		return x, nil, nil
	}
	for tok := range ends {
		if err := x.send(request{Op: "ack", Token: tok}); err != nil {
			x.close()
			return nil, nil, err
		}
	}
	return x, adopted, nil
}
