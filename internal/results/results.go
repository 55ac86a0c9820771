package results

import (
	"context"
	"fmt"
	"runtime"
	"sync"
	"time"

	"github.com/sweep-cfd/sweep/internal/harvest"
	"github.com/sweep-cfd/sweep/internal/plan"
	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/runner"
	"github.com/sweep-cfd/sweep/internal/store"
)

// Variant is one variant's harvest.
type Variant struct {
	ID        string                    `json:"id"`
	Label     string                    `json:"label"`
	Name      string                    `json:"name,omitempty"`
	Params    map[string]any            `json:"params"`
	State     store.State               `json:"state"`
	Results   map[string]harvest.Result `json:"results"`
	Harvested time.Time                 `json:"harvested"`
	Values    []recipe.Value            `json:"-"`
	Seq       uint64                    `json:"-"`
}

// Progress receives harvest progress.
type Progress func(done, total int)

// Harvest reads the histories of every variant that has run or runs now,
// analyses each quantity of the recipe, records the results in the study
// database and writes results/summary.json and results/summary.csv. It
// returns all variants of the study, in label order; variants that never
// ran have no results.
func Harvest(ctx context.Context, r *recipe.Recipe, st *store.Store, p Progress) ([]Variant, error) {
	if len(r.Quantities) == 0 {
		return nil, fmt.Errorf("%w: %s declares no [[quantity]]; add one saying which history files and column to read", recipe.ErrInvalid, recipe.FileName)
	}
	rep, err := runner.Status(st, r.Name)
	if err != nil {
		return nil, err
	}
	vs := make([]Variant, len(rep.Variants))
	var todo []int
	for i, v := range rep.Variants {
		vs[i] = Variant{ID: v.ID, Label: v.Label, Name: v.Name, Params: v.Params, State: v.State, Values: v.Values, Seq: v.Seq}
		if started(v) {
			todo = append(todo, i)
		}
	}
	var wg sync.WaitGroup
	var mu sync.Mutex
	work := make(chan int)
	done := 0
	for range min(runtime.NumCPU(), max(len(todo), 1)) {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range work {
				res := make(map[string]harvest.Result, len(r.Quantities))
				dir := plan.Dir(r.Dir, vs[i].Label)
				for _, q := range r.Quantities {
					hr, _ := harvest.Harvest(dir, q.Spec, q.Opts) // a read error is a failed Result
					res[q.Name] = hr
				}
				vs[i].Results = res
				vs[i].Harvested = time.Now().UTC()
				mu.Lock()
				done++
				if p != nil {
					p(done, len(todo))
				}
				mu.Unlock()
			}
		}()
	}
	for _, i := range todo {
		if ctx.Err() != nil {
			break
		}
		work <- i
	}
	close(work)
	wg.Wait()
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	err = st.Update(func(tx *store.Tx) error {
		for _, v := range vs {
			if v.Results != nil {
				if err := tx.PutResults(v.Seq, store.Results{Harvested: v.Harvested, Quantities: v.Results}); err != nil {
					return err
				}
			}
		}
		return nil
	})
	if err != nil {
		return nil, fmt.Errorf("record results: %w", err)
	}
	if err := writeSummary(r, vs); err != nil {
		return nil, err
	}
	return vs, nil
}

// started reports whether a variant has a stage that ran or runs.
func started(v runner.VariantStatus) bool {
	for _, j := range v.Jobs {
		if j.State == store.Done || j.State == store.Running || j.State == store.Failed || j.Attempts > 0 || j.Interrupts > 0 {
			return true
		}
	}
	return false
}

// Load returns the study's variants with the results of their last
// harvest.
func Load(r *recipe.Recipe, st *store.Store) ([]Variant, error) {
	rep, err := runner.Status(st, r.Name)
	if err != nil {
		return nil, err
	}
	vs := make([]Variant, len(rep.Variants))
	err = st.View(func(tx *store.Tx) error {
		for i, v := range rep.Variants {
			vs[i] = Variant{ID: v.ID, Label: v.Label, Name: v.Name, Params: v.Params, State: v.State, Values: v.Values, Seq: v.Seq}
			res, ok, err := tx.Results(v.Seq)
			if err != nil {
				return err
			}
			if ok {
				vs[i].Results, vs[i].Harvested = res.Quantities, res.Harvested
			}
		}
		return nil
	})
	return vs, err
}
