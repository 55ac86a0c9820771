package recovery

import (
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sort"
	"time"

	"github.com/google/uuid"

	"github.com/sweep-cfd/sweep/internal/plan"
	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/runner"
	"github.com/sweep-cfd/sweep/internal/store"
)

// Result says what a recovery found and kept.
type Result struct {
	Sound      bool // the database was sound: nothing was changed
	Counts     store.Counts
	Why        string // what was wrong with the database
	Source     string // "the copy of <time>" or "the variant directories"
	KeptAside  string // where the damaged database now is
	Variants   int    // variants in the rebuilt database
	Added      int    // variants found in directories but not in the copy
	NoIdentity []string
	Done       int // stage jobs proven done
	Proven     int // of which the logs proved done beyond the copy
	Pending    int // stage jobs left to run
	Failed     int
	Requeued   int // jobs the copy had running, re-queued
}

// Recover checks the study's database and, when it is damaged, rebuilds
// it (see the package comment). The caller holds the study lock.
func Recover(r *recipe.Recipe) (*Result, error) {
	dir := r.Dir
	path := store.Path(dir)
	res := &Result{}
	c, err := store.Verify(path)
	switch {
	case err == nil:
		res.Sound, res.Counts = true, c
		return res, nil
	case errors.Is(err, os.ErrNotExist):
		res.Why = "there is no database"
	case errors.Is(err, store.ErrDamaged):
		var de *store.DamagedError
		if errors.As(err, &de) {
			res.Why = de.Why
		} else {
			res.Why = err.Error()
		}
	default:
		return nil, err
	}
	if err := store.MakeDir(dir); err != nil {
		return nil, err
	}
	if _, err := os.Stat(path); err == nil {
		res.KeptAside = fmt.Sprintf("%s.damaged-%s", path, time.Now().Format("20060102-150405"))
		for n := 2; ; n++ {
			if _, err := os.Lstat(res.KeptAside); errors.Is(err, os.ErrNotExist) {
				break
			}
			res.KeptAside = fmt.Sprintf("%s.damaged-%s-%d", path, time.Now().Format("20060102-150405"), n)
		}
		if err := os.Rename(path, res.KeptAside); err != nil {
			return nil, fmt.Errorf("keep the damaged database aside: %w", err)
		}
	}
	ids, noID, err := identities(r)
	if err != nil {
		return nil, err
	}
	res.NoIdentity = noID
	fromCopy := false
	if t, ok := store.BackupTime(dir); ok {
		if _, err := store.Verify(store.BackupPath(dir)); err == nil {
			if err := copyFile(store.BackupPath(dir), path); err != nil {
				return nil, fmt.Errorf("restore the copy: %w", err)
			}
			fromCopy = true
			res.Source = "the copy of " + t.Local().Format(time.DateTime)
		}
	}
	if !fromCopy {
		res.Source = "the variant directories"
	}
	st, err := store.Open(dir, store.Options{})
	if err != nil {
		return nil, err
	}
	defer st.Close()
	if err := rebuild(st, r, ids, fromCopy, res); err != nil {
		return nil, err
	}
	if err := st.Backup(); err != nil {
		return nil, err
	}
	return res, nil
}

// identities reads the identity file of every variant directory.
func identities(r *recipe.Recipe) ([]plan.Identity, []string, error) {
	ents, err := os.ReadDir(filepath.Join(r.Dir, plan.VariantsDir))
	if errors.Is(err, os.ErrNotExist) {
		return nil, nil, nil
	}
	if err != nil {
		return nil, nil, err
	}
	var ids []plan.Identity
	var none []string
	for _, e := range ents {
		if !e.IsDir() || e.Name()[0] == '.' {
			continue
		}
		id, err := plan.ReadIdentity(filepath.Join(r.Dir, plan.VariantsDir, e.Name()))
		if err != nil || id.Label != e.Name() {
			none = append(none, e.Name())
			continue
		}
		ids = append(ids, id)
	}
	sort.Slice(ids, func(i, j int) bool { return ids[i].Seq < ids[j].Seq })
	return ids, none, nil
}

func rebuild(st *store.Store, r *recipe.Recipe, ids []plan.Identity, fromCopy bool, res *Result) error {
	names := make([]string, len(r.Params))
	for i, p := range r.Params {
		names[i] = p.Name
	}
	return st.Update(func(tx *store.Tx) error {
		s, ok, err := tx.Study()
		if err != nil {
			return err
		}
		if !ok {
			s = store.Study{ID: studyID(ids), Created: time.Now().UTC(), NextSeq: 1, Params: names}
		}
		for _, id := range ids {
			if id.Study != s.ID || fmt.Sprint(id.Params) != fmt.Sprint(s.Params) {
				res.NoIdentity = append(res.NoIdentity, id.Label+" (of another study or parameter set)")
				continue
			}
			if _, ok, err := tx.Variant(id.Seq); err != nil {
				return err
			} else if !ok {
				v := id.Variant()
				if err := tx.PutVariant(v); err != nil {
					return err
				}
				if err := tx.PutPointKey(plan.PointKey(s.Params, v), v.Seq); err != nil {
					return err
				}
				if fromCopy {
					res.Added++
				}
			}
			s.NextSeq = max(s.NextSeq, id.Seq+1)
		}
		if err := tx.PutStudy(s); err != nil {
			return err
		}
		var vs []store.Variant
		if err := tx.Variants(func(v store.Variant) error { vs = append(vs, v); return nil }); err != nil {
			return err
		}
		res.Variants = len(vs)
		for _, v := range vs {
			for i, stage := range r.Stages {
				j, ok, err := tx.Job(v.Seq, i)
				if err != nil {
					return err
				}
				if !ok {
					j = store.Job{Variant: v.Seq, Stage: stage.Name, Index: i, State: store.Pending}
				}
				settleJob(&j, filepath.Join(plan.Dir(r.Dir, v.Label), stage.Name+".log"), fromCopy && ok, res)
				if err := tx.PutJob(j); err != nil {
					return err
				}
			}
		}
		return nil
	})
}

// settleJob brings a job in line with its stage log: a job the log proves
// finished is done; a job the copy had running is re-queued (its process
// ended with the old database); the rest is kept as the copy had it, or
// pending when there is no copy.
func settleJob(j *store.Job, logPath string, inCopy bool, res *Result) {
	attempts, _ := runner.ReadStageLog(logPath)
	var last *runner.Attempt
	if n := len(attempts); n > 0 {
		last = &attempts[n-1]
	}
	switch {
	case j.State == store.Done:
	case last != nil && last.Finished():
		j.State, j.Reason, j.Token, j.PID, j.Stopping = store.Done, "", "", 0, ""
		j.Attempts = max(j.Attempts, last.Number)
		j.Started, j.Ended, j.ExitCode = last.Started.UTC(), last.EndTime.UTC(), 0
		if last.Settled {
			j.Settled = "stopped early: its averages settled (recovered from its log)"
		}
		if inCopy {
			res.Proven++
		}
	case j.State == store.Running:
		j.State, j.Token, j.PID, j.Stopping, j.Interrupts = store.Pending, "", 0, "", j.Interrupts+1
		j.Reason = "recovered: its run was lost with the damaged database; re-queued"
		res.Requeued++
	case !inCopy:
		j.State = store.Pending
		if last != nil {
			j.Attempts, j.Interrupts = 0, len(attempts)
			j.Reason = "recovered: its log shows no finished run; re-queued"
		}
	}
	switch j.State {
	case store.Done:
		res.Done++
	case store.Failed:
		res.Failed++
	default:
		res.Pending++
	}
}

// studyID returns the study id most identity files carry.
func studyID(ids []plan.Identity) string {
	count := map[string]int{}
	best := ""
	for _, id := range ids {
		count[id.Study]++
		if count[id.Study] > count[best] {
			best = id.Study
		}
	}
	if best == "" {
		return uuid.NewString()
	}
	return best
}

func copyFile(src, dst string) error {
	in, err := os.Open(src)
	if err != nil {
		return err
	}
	defer in.Close()
	out, err := os.OpenFile(dst, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o600)
	if err != nil {
		return err
	}
	if _, err := io.Copy(out, in); err != nil {
		out.Close()
		return err
	}
	if err := out.Sync(); err != nil {
		out.Close()
		return err
	}
	return out.Close()
}
