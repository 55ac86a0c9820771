package study

import (
	"context"
	"fmt"
	"path/filepath"
	"strings"

	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/results"
	"github.com/sweep-cfd/sweep/internal/store"
)

// UsageError marks an error the user made in how a command was called (a
// quantity that does not exist, a baseline that is not a variant): the
// commands exit with the usage status for it.
type UsageError struct{ Err error }

func (e UsageError) Error() string { return e.Err.Error() }
func (e UsageError) Unwrap() error { return e.Err }

func usage(err error) error { return UsageError{err} }

// Study is a planned study, opened: its recipe and its database, opened
// for brief transactions so that it can be read beside a running `sweep
// run`.
type Study struct {
	Dir    string
	Recipe *recipe.Recipe
	Store  *store.Store
	// Migrated is the database format the study was migrated from when it
	// was opened (0 when it was current); Note says so in words.
	Migrated int
}

// Load reads DIR/study.toml.
func Load(dir string) (*recipe.Recipe, error) {
	return recipe.Load(filepath.Join(dir, recipe.FileName))
}

// Open opens the planned study in dir.
func Open(dir string) (*Study, error) {
	r, err := Load(dir)
	if err != nil {
		return nil, err
	}
	st, err := store.OpenExisting(dir, store.Options{Brief: true})
	if err != nil {
		return nil, err
	}
	return &Study{Dir: dir, Recipe: r, Store: st, Migrated: st.Migrated}, nil
}

// Close closes the study's database.
func (s *Study) Close() error { return s.Store.Close() }

// Note says what opening the study changed, "" when nothing.
func (s *Study) Note() string { return MigrationNote(s.Dir, s.Migrated) }

// MigrationNote says that the database of the study in dir was migrated
// from format n ("" for n = 0).
func MigrationNote(dir string, n int) string {
	if n == 0 {
		return ""
	}
	return fmt.Sprintf("the study's database was migrated from format %d to %d; the copy made before is %s",
		n, store.FormatVersion, store.MigrationBackupPath(dir, n))
}

// Status reads the study's variants and their states.
func (s *Study) Status() (*Report, error) { return Status(s.Store, s.Recipe.Name) }

// StatusOf reads the status of the planned study in dir; its recipe only
// names it, so a status can be read while the recipe is being edited.
func StatusOf(dir string) (*Report, int, error) {
	st, err := store.OpenExisting(dir, store.Options{Brief: true})
	if err != nil {
		return nil, 0, err
	}
	defer st.Close()
	name := dir
	if r, err := Load(dir); err == nil {
		name = r.Name
	}
	rep, err := Status(st, name)
	return rep, st.Migrated, err
}

// Variants returns the study's variants with their states and jobs, and
// the results of their last harvest, without reading any history.
func (s *Study) Variants() ([]results.Variant, error) {
	rep, err := s.Status()
	if err != nil {
		return nil, err
	}
	return results.Load(s.Store, variantsOf(rep))
}

func variantsOf(rep *Report) []results.Variant {
	vs := make([]results.Variant, len(rep.Variants))
	for i, v := range rep.Variants {
		vs[i] = results.Variant{ID: v.ID, Label: v.Label, Name: v.Name, Params: v.Params, State: v.State, Values: v.Values, Seq: v.Seq, Jobs: v.Jobs}
	}
	return vs
}

// HarvestOptions control Harvest.
type HarvestOptions struct {
	// Progress receives progress; nil for none.
	Progress results.Progress
	// IncludeRunning records the preliminary averages of variants still
	// running (see results.Options).
	IncludeRunning bool
}

// Harvested is a harvest: every variant with its results, and the labels
// of those still running.
type Harvested struct {
	Variants []results.Variant
	Running  []string
}

// Harvest reads and judges every variant's histories, records the
// results and writes results/summary.* (see results.Harvest).
func (s *Study) Harvest(ctx context.Context, opts HarvestOptions) (*Harvested, error) {
	rep, err := s.Status()
	if err != nil {
		return nil, err
	}
	vs, running, err := results.Harvest(ctx, s.Recipe, s.Store, variantsOf(rep), results.Options{Progress: opts.Progress, IncludeRunning: opts.IncludeRunning})
	if err != nil {
		return nil, err
	}
	return &Harvested{Variants: vs, Running: running}, nil
}

// Objectives returns the quantities a --quantity list names ("drag", or
// "drag,downforce" where several are allowed), by default the recipe's
// objective. Each of several must say which values are better.
func (s *Study) Objectives(spec string, several bool) ([]*recipe.Quantity, error) {
	return Objectives(s.Recipe, spec, several)
}

// Objectives is Study.Objectives for a recipe.
func Objectives(r *recipe.Recipe, spec string, several bool) ([]*recipe.Quantity, error) {
	names := strings.Split(spec, ",")
	if len(names) > 1 && !several {
		return nil, usage(fmt.Errorf("--quantity %q names %d quantities; this command takes one", spec, len(names)))
	}
	var qs []*recipe.Quantity
	seen := map[string]bool{}
	for _, n := range names {
		n = strings.TrimSpace(n)
		if len(names) > 1 && n == "" {
			return nil, usage(fmt.Errorf("--quantity %q has an empty name: separate the quantities with single commas", spec))
		}
		q, err := r.Objective(n)
		if err != nil {
			return nil, usage(err)
		}
		if seen[q.Name] {
			return nil, usage(fmt.Errorf("--quantity %q names %s twice", spec, q.Name))
		}
		seen[q.Name] = true
		if len(names) > 1 && !q.Directed() {
			return nil, usage(fmt.Errorf("quantity %q (%s:%d) does not say which values are better: add better = \"lower\" or \"higher\" to it to trade it against the others", q.Name, recipe.FileName, q.Line))
		}
		qs = append(qs, q)
	}
	return qs, nil
}

// variantLabel finds a variant by its label or its id.
func variantLabel(vs []results.Variant, ref string) (string, bool) {
	for _, v := range vs {
		if v.Label == ref || v.ID == ref {
			return v.Label, true
		}
	}
	return "", false
}
