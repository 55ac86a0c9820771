package runner

import (
	"container/heap"
	"fmt"
	"path/filepath"
	"runtime"
	"strings"

	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/store"
)

func defaultCores() int { return runtime.NumCPU() }

// vstate is a variant and its jobs, in the recipe's stage order.
type vstate struct {
	v    store.Variant
	jobs []*store.Job
}

// next returns the first job that is not done, or nil. The variant can
// run it when it is pending.
func (vs *vstate) next() *store.Job {
	for _, j := range vs.jobs {
		if j.State != store.Done {
			return j
		}
	}
	return nil
}

// state is the variant's state as counted in progress and status.
func (vs *vstate) state() store.State {
	return VariantState(vs.jobs)
}

// VariantState derives a variant's state from its jobs: failed if any
// failed, running if any runs, done if all are done, pending otherwise.
func VariantState(jobs []*store.Job) store.State {
	done := 0
	st := store.Pending
	for _, j := range jobs {
		switch j.State {
		case store.Failed:
			return store.Failed
		case store.Running:
			st = store.Running
		case store.Done:
			done++
		}
	}
	if st == store.Pending && done == len(jobs) && len(jobs) > 0 {
		return store.Done
	}
	return st
}

// queue holds the variants that have a pending job ready to start, lowest
// sequence number first, so a started variant's later stages run before
// new variants begin and finished results arrive early.
type queue struct {
	ready []*vstate
	all   []*vstate
}

func (q *queue) Len() int           { return len(q.ready) }
func (q *queue) Less(i, j int) bool { return q.ready[i].v.Seq < q.ready[j].v.Seq }
func (q *queue) Swap(i, j int)      { q.ready[i], q.ready[j] = q.ready[j], q.ready[i] }
func (q *queue) Push(x any)         { q.ready = append(q.ready, x.(*vstate)) }
func (q *queue) Pop() any {
	n := len(q.ready)
	x := q.ready[n-1]
	q.ready = q.ready[:n-1]
	return x
}
func (q *queue) peek() *vstate { return q.ready[0] }

// load reads the study's variants and jobs into a queue, matching jobs to
// the recipe's stages by name.
func load(st *store.Store, r *recipe.Recipe) (*queue, error) {
	q := &queue{}
	bySeq := map[uint64]*vstate{}
	var missing []string
	err := st.View(func(tx *store.Tx) error {
		if err := tx.Variants(func(v store.Variant) error {
			if !v.Rendered {
				return nil
			}
			vs := &vstate{v: v, jobs: make([]*store.Job, len(r.Stages))}
			bySeq[v.Seq] = vs
			q.all = append(q.all, vs)
			return nil
		}); err != nil {
			return err
		}
		return tx.Jobs(func(j store.Job) error {
			vs := bySeq[j.Variant]
			if vs == nil {
				return nil
			}
			for i, s := range r.Stages {
				if s.Name == j.Stage {
					j.Index = i
					jj := j
					vs.jobs[i] = &jj
				}
			}
			return nil
		})
	})
	if err != nil {
		return nil, fmt.Errorf("read the queue: %w", err)
	}
	if len(q.all) == 0 {
		return nil, fmt.Errorf("the study has no planned variant; run `sweep plan %s`", r.Dir)
	}
	for _, vs := range q.all {
		for i, j := range vs.jobs {
			if j == nil {
				missing = append(missing, vs.v.Label+"/"+r.Stages[i].Name)
			}
		}
		if len(missing) > 0 {
			continue
		}
		if j := vs.next(); j != nil && j.State == store.Pending {
			q.ready = append(q.ready, vs)
		}
	}
	if len(missing) > 0 {
		if len(missing) > 5 {
			missing = append(missing[:5], "...")
		}
		return nil, fmt.Errorf("%s: the recipe has stages that were never planned (%s); run `sweep plan %s` to add them", filepath.Base(r.File), strings.Join(missing, ", "), r.Dir)
	}
	heap.Init(q)
	return q, nil
}
