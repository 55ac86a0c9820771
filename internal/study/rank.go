package study

import (
	"context"
	"errors"
	"fmt"

	"github.com/sweep-cfd/sweep/internal/results"
	"github.com/sweep-cfd/sweep/internal/store"
)

// RankOptions control Rank.
type RankOptions struct {
	// Quantity names the quantity to rank by, or several separated by
	// commas for their trade-off ("" for the objective).
	Quantity string
	// Baseline is a label or id every variant is compared with.
	Baseline string
	// MeshStudy is the directory of a grid-convergence study of the same
	// setup, whose discretisation uncertainty is set beside the
	// differences.
	MeshStudy string
	// Seed seeds the draws behind a trade-off's chances.
	Seed     uint64
	Progress results.Progress
}

// Ranked is a ranking by one quantity, or the trade-off of several.
type Ranked struct {
	Ranking *results.Ranking
	Trade   *results.Trade
	// Quantity is the quantity ranked by (the first of a trade-off).
	Quantity string
}

// Rank harvests the study and ranks its variants by one quantity within
// the recipe's limits, or weighs the trade-off of several.
func (s *Study) Rank(ctx context.Context, opts RankOptions) (*Ranked, error) {
	qs, err := s.Objectives(opts.Quantity, true)
	if err != nil {
		return nil, err
	}
	h, err := s.Harvest(ctx, HarvestOptions{Progress: opts.Progress})
	if err != nil {
		return nil, err
	}
	r, vs := s.Recipe, h.Variants
	if len(qs) > 1 {
		if opts.Baseline != "" || opts.MeshStudy != "" {
			return nil, usage(errors.New("--baseline and --mesh-study compare one quantity; give one --quantity with them"))
		}
		tr := results.Tradeoff(vs, objectivesOf(qs), results.LimitsOf(r), opts.Seed)
		return &Ranked{Trade: &tr, Quantity: qs[0].Name}, nil
	}
	q := qs[0]
	baseline := ""
	if opts.Baseline != "" {
		label, ok := variantLabel(vs, opts.Baseline)
		if !ok {
			return nil, usage(fmt.Errorf("no variant %q in the study (give a label such as v001, or an id); see `sweep status %s`", opts.Baseline, s.Dir))
		}
		baseline = label
	}
	rk := results.Rank(vs, q.Name, q.LowerIsBetter(), baseline, results.LimitsOf(r)...)
	if opts.MeshStudy != "" {
		g, err := MeshGCI(ctx, opts.MeshStudy, q.Name)
		if err != nil {
			return nil, err
		}
		rk.ApplyMesh(g)
	}
	return &Ranked{Ranking: &rk, Quantity: q.Name}, nil
}

// MeshOptions control Mesh.
type MeshOptions struct {
	Quantity string
	Progress results.Progress
}

// Mesh harvests the study and estimates the discretisation uncertainty of
// one quantity from its mesh levels (see results.MeshStudy).
func (s *Study) Mesh(ctx context.Context, opts MeshOptions) ([]results.MeshGroup, error) {
	qs, err := s.Objectives(opts.Quantity, false)
	if err != nil {
		return nil, err
	}
	h, err := s.Harvest(ctx, HarvestOptions{Progress: opts.Progress})
	if err != nil {
		return nil, err
	}
	return results.MeshStudy(s.Recipe, h.Variants, qs[0].Name)
}

// MeshGCI returns the fine-grid GCI (a fraction) of the mesh study in
// dir, for rank --mesh-study: the first setup that converges.
func MeshGCI(ctx context.Context, dir, quantity string) (float64, error) {
	if !store.Exists(dir) {
		return 0, usage(fmt.Errorf("--mesh-study %s: no planned study there", dir))
	}
	m, err := Open(dir)
	if err != nil {
		return 0, fmt.Errorf("--mesh-study %s: %w", dir, err)
	}
	defer m.Close()
	groups, err := m.Mesh(ctx, MeshOptions{Quantity: quantity})
	if err != nil {
		return 0, fmt.Errorf("--mesh-study %s: %w", dir, err)
	}
	for _, g := range groups {
		if g.Error == "" && (g.Result.Convergence == "monotonic" || g.Result.Convergence == "oscillatory") {
			return g.Result.GCIFine, nil
		}
	}
	return 0, fmt.Errorf("--mesh-study %s: no setup converges on its grids; no discretisation uncertainty can be estimated", dir)
}
