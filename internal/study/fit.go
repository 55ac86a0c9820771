package study

import (
	"context"
	"fmt"
	"strings"

	"github.com/sweep-cfd/sweep/internal/fit"
	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/results"
)

// FitOptions control Fit.
type FitOptions struct {
	// Quantity names the quantity to fit, or several separated by commas
	// for their predicted trade-off ("" for the objective).
	Quantity string
	// Model and Terms force a surface (see fit.Options).
	Model, Terms string
	Seed         uint64
	Progress     results.Progress
}

// Fitted is a fit of one quantity (Report, with the recipe's limits) or
// the predicted front of several (Front, with the measured Trade).
type Fitted struct {
	Report *fit.Report
	Front  *fit.Front
	Trade  *results.Trade
}

// objectivesOf returns quantities as trade-off objectives.
func objectivesOf(qs []*recipe.Quantity) []results.Objective {
	var objs []results.Objective
	for _, q := range qs {
		objs = append(objs, results.Objective{Quantity: q.Name, LowerIsBetter: q.LowerIsBetter()})
	}
	return objs
}

// Fit harvests the study and fits its surfaces: one quantity's, with its
// optimum kept within the recipe's constraints and limits, or several
// quantities' and the front they predict.
func (s *Study) Fit(ctx context.Context, opts FitOptions) (*Fitted, error) {
	qs, err := s.Objectives(opts.Quantity, true)
	if err != nil {
		return nil, err
	}
	h, err := s.Harvest(ctx, HarvestOptions{Progress: opts.Progress})
	if err != nil {
		return nil, err
	}
	r, vs := s.Recipe, h.Variants
	prob, err := fit.StudyProblem(r, vs, qs)
	if err != nil {
		return nil, err
	}
	base := fit.Options{Model: opts.Model, Terms: opts.Terms, Feasible: fit.Feasible(r, prob.Objectives[0].In.Cols, vs), Seed: opts.Seed}
	if len(qs) > 1 {
		front, err := prob.FitFront(base)
		if err != nil {
			return nil, fmt.Errorf("fit %s: %w", prob.Names(), err)
		}
		tr := results.Tradeoff(vs, objectivesOf(qs), results.LimitsOf(r), opts.Seed)
		return &Fitted{Front: front, Trade: &tr}, nil
	}
	rep, limits, err := prob.FitConstrained(base)
	if err != nil {
		return nil, err
	}
	rep.LimitFits = limits
	return &Fitted{Report: rep}, nil
}

// TableOptions control FitTable.
type TableOptions struct {
	Response string
	// Params names the parameter columns (default: every numeric column
	// besides the response).
	Params       []string
	Model, Terms string
	Maximize     bool
	Seed         uint64
}

// FitTable fits a CSV table of results: one row per run (see
// fit.ReadTable), what it left out named in the report's notes.
func FitTable(path string, opts TableOptions) (*fit.Report, error) {
	d, info, err := fit.ReadTable(path, opts.Response, opts.Params...)
	if err != nil {
		return nil, usage(err)
	}
	rep, err := fit.Fit(d, fit.Options{Model: opts.Model, Terms: opts.Terms, Maximize: opts.Maximize, Seed: opts.Seed, Labels: info.Labels})
	if err != nil {
		return nil, err
	}
	rep.Response = opts.Response
	if len(info.Ignored) > 0 {
		rep.Notes = append(rep.Notes, "columns left out: "+strings.Join(info.Ignored, ", ")+" (name the parameters with --params to choose them)")
	}
	if info.Skipped > 0 {
		rep.Notes = append(rep.Notes, fmt.Sprintf("%d rows left out: no average of %s with a standard error (failed, too short or not run)", info.Skipped, opts.Response))
	}
	return rep, nil
}
