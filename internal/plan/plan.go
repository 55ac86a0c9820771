package plan

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"strings"
	"sync"
	"time"

	"github.com/google/uuid"

	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/records"
	"github.com/sweep-cfd/sweep/internal/store"
)

// VariantsDir is the directory, inside a study, of the rendered cases.
const VariantsDir = "variants"

// ErrChanged is returned when a named design point already planned now has
// other values.
var ErrChanged = errors.New("planned point changed")

// Progress receives planning progress.
type Progress interface {
	Rendered(done, total int)
}

// Options control Plan.
type Options struct {
	DryRun   bool // compute and report, write nothing
	Progress Progress
	// Extra points are planned after the design's, as variants marked
	// added (proposed by a sequential design); later plans keep them.
	Extra []recipe.Point
}

// Row is one variant in a plan's result.
type Row struct {
	Seq    uint64
	Label  string
	ID     string
	Name   string
	Values []recipe.Value
	New    bool
}

// Result describes what a plan did (or would do, on a dry run).
type Result struct {
	Design     string // the design and its quality
	Rows       []Row  // the design's variants, in design order
	Added      int
	Kept       int
	Duplicates int // design points equal to an earlier point, planned once
	Retired    int // variants planned before that the design no longer lists (kept)
	NewJobs    int // jobs added to existing variants for stages added to the recipe
	// BackupErr says why the database copy made after the plan failed
	// (the plan itself is recorded); nil when the copy was made.
	BackupErr error
	// Large base-case files given to the new variants as copy-on-write
	// clones, or as hard links to the read-only shared file.
	Cloned, Linked int64
}

// Dir returns a variant's directory.
func Dir(studyDir, label string) string { return filepath.Join(studyDir, VariantsDir, label) }

// Label returns the readable label of the variant with sequence number seq.
func Label(seq uint64) string { return fmt.Sprintf("v%03d", seq) }

// Plan plans the recipe's study: see the package comment. The caller holds
// the study lock (store.Acquire) unless opts.DryRun.
func Plan(ctx context.Context, r *recipe.Recipe, opts Options) (*Result, error) {
	if err := r.CheckCommands(); err != nil {
		return nil, err
	}
	lay, err := readLayout(r)
	if err != nil {
		return nil, err
	}
	pts, note, err := Points(r)
	if err != nil {
		return nil, err
	}
	nDesign := len(pts)
	pts = append(pts, opts.Extra...)
	names := make([]string, len(r.Params))
	for i, p := range r.Params {
		names[i] = p.Name
	}

	var st *store.Store
	if opts.DryRun && !store.Exists(r.Dir) {
		st = nil
	} else {
		st, err = store.Open(r.Dir, store.Options{})
		if err != nil {
			return nil, err
		}
		defer st.Close()
	}

	res := &Result{Design: note}
	var study store.Study
	var fresh []store.Variant // variants to render and add
	existing := map[uint64]bool{}
	view := func(tx *store.Tx) error {
		s, ok, err := tx.Study()
		if err != nil {
			return err
		}
		if !ok {
			s = store.Study{ID: uuid.NewString(), Created: time.Now().UTC(), NextSeq: 1, Params: names}
		}
		if !slices.Equal(s.Params, names) {
			return fmt.Errorf("%w: this study was planned with the parameters [%s] and the recipe now declares [%s]; a study keeps its parameter set: restore it, or plan the new set in a new study directory",
				recipe.ErrInvalid, strings.Join(s.Params, ", "), strings.Join(names, ", "))
		}
		seen := map[string]bool{}
		var changed []string
		for n, pt := range pts {
			key := pointKey(names, pt)
			if seen[key] {
				res.Duplicates++
				continue
			}
			seen[key] = true
			if seq, ok := tx.PointKey(key); ok {
				v, _, err := tx.Variant(seq)
				if err != nil {
					return err
				}
				planned := records.RecipeValues(v.Values)
				if !sameValues(planned, pt.Values) {
					changed = append(changed, fmt.Sprintf("%s: point %q is variant %s, planned with %s; now %s: give the changed point a new name, or restore its values",
						pt.Where, pt.Name, v.Label, describe(names, planned), describe(names, pt.Values)))
					continue
				}
				existing[seq] = true
				res.Kept++
				res.Rows = append(res.Rows, Row{Seq: v.Seq, Label: v.Label, ID: v.ID, Name: v.Name, Values: planned})
				if !v.Rendered {
					fresh = append(fresh, v)
				}
				continue
			}
			v := store.Variant{Seq: s.NextSeq, ID: uuid.NewString(), Label: Label(s.NextSeq), Name: pt.Name,
				Values: records.Values(pt.Values), Where: pt.Where, Created: time.Now().UTC(), Added: n >= nDesign}
			s.NextSeq++
			fresh = append(fresh, v)
			res.Added++
			res.Rows = append(res.Rows, Row{Seq: v.Seq, Label: v.Label, ID: v.ID, Name: v.Name, Values: pt.Values, New: true})
		}
		if changed != nil {
			return fmt.Errorf("%w: %w:\n%s", recipe.ErrInvalid, ErrChanged, strings.Join(changed, "\n"))
		}
		study = s
		return tx.Variants(func(v store.Variant) error {
			if !existing[v.Seq] && v.Rendered && !v.Added {
				res.Retired++
			}
			return nil
		})
	}
	if st != nil {
		err = st.View(view)
	} else {
		err = view(nil)
	}
	if err != nil {
		return nil, err
	}
	if planned := int(study.NextSeq - 1); planned > recipe.MaxVariants {
		return nil, fmt.Errorf("%w: %s:%d: the study would have %d variants, over the limit of %d a study may have: plan the rest in another study",
			recipe.ErrInvalid, filepath.Base(r.File), r.Design.Line, planned, recipe.MaxVariants)
	}
	if opts.DryRun {
		return res, nil
	}

	// Render every new variant into a temporary directory and move it into
	// place; only then record it. A crash leaves at worst a directory that
	// no record points at, which the next plan replaces.
	vdir := filepath.Join(r.Dir, VariantsDir)
	if err := os.MkdirAll(vdir, 0o755); err != nil {
		return nil, err
	}
	cleanTemp(vdir)
	if err := renderAll(ctx, r, lay, study, fresh, opts.Progress); err != nil {
		return nil, err
	}
	res.Cloned, res.Linked = lay.cloned.Load(), lay.linked.Load()
	err = st.Update(func(tx *store.Tx) error {
		if err := tx.PutStudy(study); err != nil {
			return err
		}
		for _, v := range fresh {
			v.Rendered = true
			if err := tx.PutVariant(v); err != nil {
				return err
			}
			if err := tx.PutPointKey(PointKey(names, v), v.Seq); err != nil {
				return err
			}
		}
		// Every variant of the design gets a job for every stage; stages
		// added to the recipe after a first plan reach existing variants.
		for _, row := range res.Rows {
			seq := row.Seq
			for i, s := range r.Stages {
				_, ok, err := tx.Job(seq, i)
				if err != nil {
					return err
				}
				if ok {
					continue
				}
				if !row.New {
					res.NewJobs++
				}
				if err := tx.PutJob(store.Job{Variant: seq, Stage: s.Name, Index: i, State: store.Pending}); err != nil {
					return err
				}
			}
		}
		return nil
	})
	if err != nil {
		for _, v := range fresh {
			os.RemoveAll(Dir(r.Dir, v.Label))
		}
		return nil, fmt.Errorf("record the plan: %w", err)
	}
	// A consistent copy of the database, for `sweep recover`; a plan that
	// could not make it still stands.
	res.BackupErr = st.Backup()
	return res, nil
}

func sameValues(a, b []recipe.Value) bool {
	return slices.EqualFunc(a, b, recipe.Value.Equal)
}

func describe(names []string, vals []recipe.Value) string {
	parts := make([]string, len(vals))
	for i, v := range vals {
		parts[i] = names[i] + "=" + v.String()
	}
	return strings.Join(parts, " ")
}

// Data returns the template data of a variant: each parameter's value by
// name, numbers as float64 and words as strings.
func Data(r *recipe.Recipe, vals []recipe.Value) map[string]any {
	m := make(map[string]any, len(vals))
	for i, p := range r.Params {
		if vals[i].IsText() {
			m[p.Name] = vals[i].Text
		} else {
			m[p.Name] = vals[i].Num
		}
	}
	return m
}

const tempPrefix = ".partial-"

// cleanTemp removes what an interrupted plan left in the variants
// directory.
func cleanTemp(vdir string) {
	ents, _ := os.ReadDir(vdir)
	for _, e := range ents {
		if strings.HasPrefix(e.Name(), tempPrefix) {
			os.RemoveAll(filepath.Join(vdir, e.Name()))
		}
	}
}

func renderAll(ctx context.Context, r *recipe.Recipe, lay *layout, study store.Study, vs []store.Variant, p Progress) error {
	if len(vs) == 0 {
		return nil
	}
	vdir := filepath.Join(r.Dir, VariantsDir)
	tmp, err := os.MkdirTemp(vdir, tempPrefix)
	if err != nil {
		return err
	}
	defer os.RemoveAll(tmp)
	workers := min(runtime.NumCPU(), len(vs))
	work := make(chan store.Variant)
	var (
		mu   sync.Mutex
		errs []error
		done int
		ok   []string // final directories made, removed again on failure
	)
	var wg sync.WaitGroup
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for v := range work {
				final := Dir(r.Dir, v.Label)
				err := renderOne(r, lay, study, v, filepath.Join(tmp, v.Label), final)
				mu.Lock()
				if err != nil {
					errs = append(errs, fmt.Errorf("variant %s: %w", v.Label, err))
				} else {
					ok = append(ok, final)
				}
				done++
				if p != nil {
					p.Rendered(done, len(vs))
				}
				mu.Unlock()
			}
		}()
	}
	for _, v := range vs {
		if ctx.Err() != nil {
			break
		}
		work <- v
	}
	close(work)
	wg.Wait()
	if err := ctx.Err(); err != nil {
		errs = append(errs, err)
	}
	if errs != nil {
		for _, d := range ok {
			os.RemoveAll(d)
		}
		return errors.Join(errs...)
	}
	return nil
}

// renderOne renders a variant into dir (inside the plan's temporary
// directory) and moves it to final.
func renderOne(r *recipe.Recipe, lay *layout, study store.Study, v store.Variant, dir, final string) error {
	err := lay.render(dir, Data(r, records.RecipeValues(v.Values)))
	if err == nil {
		err = writeIdentity(dir, study.ID, study.Params, v)
	}
	if err != nil {
		os.RemoveAll(dir)
		return err
	}
	// A directory at the final place belongs to no record (a record is
	// written only after its directory is in place): it is what a plan
	// interrupted between rename and commit left behind.
	if _, err := os.Lstat(final); err == nil {
		if err := os.RemoveAll(final); err != nil {
			os.RemoveAll(dir)
			return err
		}
	}
	if err := os.Rename(dir, final); err != nil {
		os.RemoveAll(dir)
		return err
	}
	return nil
}
