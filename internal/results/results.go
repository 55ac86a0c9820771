package results

import (
	"context"
	"fmt"
	"math"
	"runtime"
	"slices"
	"sync"
	"time"

	"github.com/sweep-cfd/sweep/internal/harvest"
	"github.com/sweep-cfd/sweep/internal/plan"
	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/records"
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
	// Jobs are the variant's stage jobs, which say whether and how it
	// ran.
	Jobs []store.Job `json:"-"`
}

// Progress receives harvest progress.
type Progress func(done, total int)

// Options control Harvest.
type Options struct {
	// Progress receives progress; nil for none.
	Progress Progress
	// IncludeRunning records the preliminary averages of variants whose
	// stages still run, in the database and the summary files; by
	// default those keep what the variant's last finished harvest gave.
	IncludeRunning bool
}

// Harvest reads the histories of every variant of vs (the study's
// variants with their states and jobs, in label order, as the study's
// status gives them) that has run or runs now, judges each quantity of the
// recipe (see Judge), records the results in the study database and
// writes results/summary.json and results/summary.csv. It returns the
// variants with their results (those that never ran have none), and the
// labels of those still running.
func Harvest(ctx context.Context, r *recipe.Recipe, st *store.Store, vs []Variant, opts Options) ([]Variant, []string, error) {
	if len(r.Quantities) == 0 {
		return nil, nil, fmt.Errorf("%w: %s declares no [[quantity]]; add one saying which history files and column to read", recipe.ErrInvalid, recipe.FileName)
	}
	prev, err := Load(st, vs)
	if err != nil {
		return nil, nil, err
	}
	vs = slices.Clone(vs)
	var todo []int
	for i, v := range vs {
		vs[i].Results, vs[i].Harvested = nil, time.Time{}
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
				vs[i].Results = Judge(r, plan.Dir(r.Dir, vs[i].Label), vs[i])
				vs[i].Harvested = time.Now().UTC()
				mu.Lock()
				done++
				if opts.Progress != nil {
					opts.Progress(done, len(todo))
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
		return nil, nil, err
	}
	var running []string
	keep := make([]Variant, len(vs)) // what the database and the summary get
	copy(keep, vs)
	for i, v := range vs {
		if v.State == store.Running || (v.State == store.Pending && v.Results != nil) {
			running = append(running, v.Label)
			if !opts.IncludeRunning {
				keep[i].Results, keep[i].Harvested = prev[i].Results, prev[i].Harvested
			}
		}
	}
	err = st.Update(func(tx *store.Tx) error {
		for i, v := range keep {
			if v.Results != nil && !v.Harvested.Equal(prev[i].Harvested) {
				if err := tx.PutResults(v.Seq, store.Results{Harvested: v.Harvested, Quantities: records.Averages(v.Results)}); err != nil {
					return err
				}
			}
		}
		return nil
	})
	if err != nil {
		return nil, nil, fmt.Errorf("record results: %w", err)
	}
	if err := writeSummary(r, keep); err != nil {
		return nil, nil, err
	}
	return vs, running, nil
}

// Judge harvests one variant's histories in dir and judges every quantity
// of the recipe, with the one rule every command uses:
//
//   - a variant whose stage failed gets the verdict failed, with the
//     stage's reason;
//   - a variant whose stages have not all ended gets running, with the
//     preliminary figures of its histories so far;
//   - a finished variant gets the verdict of its histories (see
//     harvest.Analyze). If a stage was stopped once its averages settled,
//     each quantity is averaged up to the time the stop judged it
//     (store.Job.SettledAt), so the verdict is the one the stop gave.
//
// Statistics of a quantity's cycles (recipe.Quantity.Derived) are judged
// from their quantity's result.
func Judge(r *recipe.Recipe, dir string, v Variant) map[string]harvest.Result {
	settledAt := map[string]float64{}
	last := math.Inf(-1)
	failedStage, failedWhy := "", ""
	for _, j := range v.Jobs {
		for q, t := range j.SettledAt {
			settledAt[q] = t
			last = math.Max(last, t)
		}
		if j.State == store.Failed && failedStage == "" {
			failedStage, failedWhy = j.Stage, j.Reason
		}
	}
	res := make(map[string]harvest.Result, len(r.Quantities))
	for _, q := range r.Quantities {
		if q.Derived() {
			continue
		}
		o := q.Opts
		if t, ok := settledAt[q.Name]; ok {
			o.End = &t
		} else if len(settledAt) > 0 {
			o.End = &last
		}
		hr, _ := harvest.Harvest(dir, q.Spec, o) // a read error is a verdict of its own
		switch {
		case v.State == store.Failed:
			hr.Verdict = harvest.Failed
			hr.Message = fmt.Sprintf("the %s stage failed: %s", failedStage, failedWhy)
			hr.Mean, hr.HalfWidth, hr.StdError = math.NaN(), math.NaN(), math.NaN()
		case v.State != store.Done:
			hr.Message = fmt.Sprintf("still running; so far %s: %s", hr.Verdict, hr.Message)
			hr.Verdict = harvest.Running
		}
		res[q.Name] = hr
	}
	for _, q := range r.Quantities {
		if q.Derived() {
			res[q.Name] = res[q.From].Derived(q.Stat, q.Opts, q.Strouhal.Length, q.Strouhal.Speed)
		}
	}
	return res
}

// started reports whether a variant has a stage that ran or runs.
func started(v Variant) bool {
	for _, j := range v.Jobs {
		if j.State == store.Done || j.State == store.Running || j.State == store.Failed || j.Attempts > 0 || j.Interrupts > 0 {
			return true
		}
	}
	return false
}

// Load returns the variants of vs with the results of their last
// harvest, from the study database.
func Load(st *store.Store, vs []Variant) ([]Variant, error) {
	out := slices.Clone(vs)
	err := st.View(func(tx *store.Tx) error {
		for i, v := range out {
			out[i].Results, out[i].Harvested = nil, time.Time{}
			res, ok, err := tx.Results(v.Seq)
			if err != nil {
				return err
			}
			if ok {
				out[i].Results, out[i].Harvested = records.Results(res.Quantities), res.Harvested
			}
		}
		return nil
	})
	return out, err
}
