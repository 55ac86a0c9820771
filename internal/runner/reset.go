package runner

import (
	"github.com/sweep-cfd/sweep/internal/store"
)

// ResetFailed puts every failed job back in the queue with its attempts
// cleared, and returns how many it re-queued. The caller holds the study
// lock.
func ResetFailed(st *store.Store) (int, error) {
	n := 0
	err := st.Update(func(tx *store.Tx) error {
		var fix []store.Job
		if err := tx.Jobs(func(j store.Job) error {
			if j.State == store.Failed {
				j.State, j.Attempts, j.Reason, j.Tail, j.ExitCode = store.Pending, 0, "re-queued by reset", nil, 0
				fix = append(fix, j)
			}
			return nil
		}); err != nil {
			return err
		}
		for _, j := range fix {
			if err := tx.PutJob(j); err != nil {
				return err
			}
		}
		n = len(fix)
		return nil
	})
	return n, err
}
