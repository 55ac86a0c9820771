package study

import (
	"context"
	"errors"
	"fmt"
	"slices"

	"github.com/sweep-cfd/sweep/internal/fit"
	"github.com/sweep-cfd/sweep/internal/plan"
	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/results"
	"github.com/sweep-cfd/sweep/internal/store"
)

// MaxAdd bounds the proposals of one plan --add: each one refits the
// surface.
const MaxAdd = 1000

// PlanOptions control Plan.
type PlanOptions struct {
	DryRun bool
	// Add proposes this many new points from the harvested results (see
	// Propose) and plans them after the design's.
	Add int
	// Criterion ("ei" or "variance"), Quantity and Seed steer the
	// proposals.
	Criterion, Quantity string
	Seed                uint64
	// Progress receives the rendering's progress, HarvestProgress the
	// harvest's before proposals.
	Progress        plan.Progress
	HarvestProgress results.Progress
}

// Planned is what Plan did: the plan's result, the recipe it followed,
// and what opening the study changed (see Study.Note).
type Planned struct {
	*plan.Result
	Recipe *recipe.Recipe
	Note   string
}

// Plan checks the recipe in dir, proposes new points when asked, and
// plans the study: new variants rendered and queued, every planned one
// kept (see plan.Plan). Unless it is a dry run, it holds the study while
// it works.
func Plan(ctx context.Context, dir string, opts PlanOptions) (*Planned, error) {
	r, err := Load(dir)
	if err != nil {
		return nil, err
	}
	if opts.Add < 0 || opts.Add > MaxAdd {
		return nil, usage(fmt.Errorf("--add takes 1 to %d new variants at a time (each refits the surface); got %d", MaxAdd, opts.Add))
	}
	if !opts.DryRun {
		lock, err := store.Acquire(dir, "plan")
		if err != nil {
			return nil, err
		}
		defer lock.Release()
	}
	out := &Planned{Recipe: r}
	var extra []recipe.Point
	if opts.Add > 0 {
		s, err := Open(dir)
		if err != nil {
			return nil, err
		}
		out.Note = s.Note()
		extra, err = s.Propose(ctx, ProposeOptions{K: opts.Add, Criterion: opts.Criterion, Quantity: opts.Quantity, Seed: opts.Seed, Progress: opts.HarvestProgress})
		s.Close()
		if err != nil {
			return nil, err
		}
	}
	res, err := plan.Plan(ctx, r, plan.Options{DryRun: opts.DryRun, Extra: extra, Progress: opts.Progress})
	if err != nil {
		return nil, err
	}
	out.Result = res
	return out, nil
}

// ProposeOptions control Propose.
type ProposeOptions struct {
	K                   int
	Criterion, Quantity string
	Seed                uint64
	Progress            results.Progress
}

// Propose harvests the study and proposes K new points where they help
// most: by expected improvement (or variance) of one quantity's kriging
// surface, by expected improvement times the chance of keeping the limits
// when the recipe limits quantities, and by expected hypervolume
// improvement for several quantities (see fit.Next and Problem.Next).
func (s *Study) Propose(ctx context.Context, opts ProposeOptions) ([]recipe.Point, error) {
	r := s.Recipe
	qs, err := s.Objectives(opts.Quantity, true)
	if err != nil {
		return nil, err
	}
	limits := results.LimitsOf(r)
	if opts.Criterion == "variance" && (len(qs) > 1 || len(limits) > 0) {
		return nil, usage(errors.New("--criterion variance explores one quantity's surface; with several quantities or the recipe's limits use --criterion ei (expected improvement with the chance of keeping the limits, or of the hypervolume)"))
	}
	h, err := s.Harvest(ctx, HarvestOptions{Progress: opts.Progress})
	if err != nil {
		return nil, err
	}
	vs := h.Variants
	prob, err := fit.StudyProblem(r, vs, qs)
	if err != nil {
		return nil, err
	}
	for _, part := range append(slices.Clone(prob.Objectives), prob.Limits...) {
		if n := len(part.In.Data.Y); n < 3 {
			return nil, fmt.Errorf("--add needs at least 3 variants with an average of %s to fit its surface (the study has %d); run the design first", part.Quantity, n)
		}
	}
	var pts []recipe.Point
	if len(qs) == 1 && len(limits) == 0 {
		pts, _, err = fit.Next(r, prob.Objectives[0].In, vs, opts.K, opts.Criterion, !qs[0].LowerIsBetter(), opts.Seed)
	} else {
		pts, _, err = prob.Next(r, vs, opts.K, opts.Seed)
	}
	return pts, err
}
