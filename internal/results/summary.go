package results

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strconv"

	"github.com/sweep-cfd/sweep/internal/recipe"
)

// Dir is the study's directory of harvested summaries and reports.
const Dir = "results"

// writeSummary writes results/summary.json and results/summary.csv, each
// atomically (temporary file, fsync, rename, directory fsync).
func writeSummary(r *recipe.Recipe, vs []Variant) error {
	dir := filepath.Join(r.Dir, Dir)
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	js, err := json.MarshalIndent(map[string]any{"study": r.Name, "variants": vs}, "", "  ")
	if err != nil {
		return err
	}
	if err := WriteAtomic(filepath.Join(dir, "summary.json"), append(js, '\n')); err != nil {
		return err
	}
	var buf bytes.Buffer
	w := csv.NewWriter(&buf)
	head := []string{"id", "label", "name", "state"}
	for _, p := range r.Params {
		head = append(head, p.Name)
	}
	for _, q := range r.Quantities {
		n := q.Name
		head = append(head, n+"_mean", n+"_half_width", n+"_std_error", n+"_samples", n+"_effective_samples", n+"_transient_end", n+"_verdict")
	}
	w.Write(head)
	for _, v := range vs {
		row := []string{v.ID, v.Label, v.Name, string(v.State)}
		for _, val := range v.Values {
			row = append(row, val.String())
		}
		for _, q := range r.Quantities {
			res, ok := v.Results[q.Name]
			if !ok {
				row = append(row, "", "", "", "", "", "", "")
				continue
			}
			se := math.NaN()
			if HasInterval(res) {
				se = res.Estimate().StdError
			}
			row = append(row, num(res.Mean), num(res.HalfWidth), num(se), strconv.Itoa(res.Samples), num(res.EffectiveSamples), num(res.TransientEnd), string(res.Verdict))
		}
		w.Write(row)
	}
	w.Flush()
	return WriteAtomic(filepath.Join(dir, "summary.csv"), buf.Bytes())
}

// num writes a figure for CSV: full precision, and an empty cell for an
// unknown (NaN) one, so a spreadsheet reads it as missing, not as 0.
func num(x float64) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return ""
	}
	return strconv.FormatFloat(x, 'g', 10, 64)
}

// WriteAtomic replaces path with data so that a reader sees the old file
// or the new one, never a part: it writes a temporary file in the same
// directory, syncs it, renames it over path and syncs the directory.
func WriteAtomic(path string, data []byte) error {
	dir := filepath.Dir(path)
	f, err := os.CreateTemp(dir, "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		return err
	}
	tmp := f.Name()
	if _, err := f.Write(data); err != nil {
		f.Close()
		os.Remove(tmp)
		return err
	}
	if err := f.Sync(); err != nil {
		f.Close()
		os.Remove(tmp)
		return err
	}
	if err := f.Close(); err != nil {
		os.Remove(tmp)
		return err
	}
	if err := os.Chmod(tmp, 0o644); err != nil {
		os.Remove(tmp)
		return err
	}
	if err := os.Rename(tmp, path); err != nil {
		os.Remove(tmp)
		return err
	}
	if d, err := os.Open(dir); err == nil {
		d.Sync()
		d.Close()
	}
	return nil
}
