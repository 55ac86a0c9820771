package report

import (
	"bytes"
	"fmt"
	"html/template"
	"io"
	"math"
	"sort"
	"strconv"
	"strings"
	"time"
)

// Render writes the study as one self-contained HTML page to w. The page
// fetches nothing: styles are inline and figures are inline SVG. All text
// taken from s is escaped. Render returns an error for malformed figure
// data (a contour grid whose Z does not match X and Y) or a failed write;
// nothing is written to w in the first case.
func Render(w io.Writer, s Study) error {
	v, err := buildView(&s)
	if err != nil {
		return err
	}
	var buf bytes.Buffer
	if err := page.Execute(&buf, v); err != nil {
		return fmt.Errorf("report: %w", err)
	}
	if _, err := buf.WriteTo(w); err != nil {
		return fmt.Errorf("report: write: %w", err)
	}
	return nil
}

type kv struct{ K, V string }

type rankView struct {
	Rank                  int
	Label, Name           string
	IsBaseline            bool
	Group                 string
	Params                []string // in paramNames order
	Mean                  string
	Verdict, VerdictClass string
	Delta, Change         string
}

type quantityView struct {
	Name, Mean            string
	Verdict, VerdictClass string
	Message               string
	Figure                template.HTML
	Samples               int
}

type variantView struct {
	Label, Name, State, StateClass string
	Params                         []kv
	Runtime                        string
	Cores                          int
	ExitStatus                     string
	Log                            string
	Quantities                     []quantityView
	Open                           bool
}

type contourView struct {
	XName, YName string
	Figure       template.HTML
}

type surfaceView struct {
	Model, Response string
	LOORMSE, Noise  string
	Q2, Flag        string
	Optimum         []kv
	OptimumValue    string
	Contours        []contourView
	LOO             template.HTML
	Sens            template.HTML
	Sensitivities   []Sensitivity
	Choice, Source  string
	Notes           []string
	Curve           template.HTML
	CurveParam      string
	SensNote        string
}

type tradeRowView struct {
	Label  string
	Params []string
	Values []string
	Chance string
	Status string
	Front  bool
}

type tradeView struct {
	Objectives    []string
	Title         string
	Limits        string
	Rows          []tradeRowView
	Figure        template.HTML
	PredictedNote string
	Draws         int
}

type meshRow struct{ H, Value string }

type meshView struct {
	Title                          string
	Figure                         template.HTML
	Rows                           []meshRow
	Extrapolated, GCI, Band, Order string
	Convergence                    string
	Warnings                       []string
}

type view struct {
	Name, Description, Generated string
	Caution                      string
	Params                       []Param
	Design                       string
	NVariants                    int
	Objective, Better            string
	Counts                       Counts
	Total                        int
	ParamNames                   []string
	Baseline                     string
	Ranking                      []rankView
	RankFigure                   template.HTML
	Variants                     []variantView
	Surface                      *surfaceView
	SurfaceNote                  string
	Tradeoff                     *tradeView
	Mesh                         []meshView
}

// paramNames returns the recipe parameters in recipe order, followed by
// any other parameter key met in the ranking, sorted.
func paramNames(s *Study) []string {
	seen := map[string]bool{}
	var names []string
	for _, p := range s.Params {
		if !seen[p.Name] {
			seen[p.Name] = true
			names = append(names, p.Name)
		}
	}
	var extra []string
	for _, r := range s.Ranking {
		for k := range r.Params {
			if !seen[k] {
				seen[k] = true
				extra = append(extra, k)
			}
		}
	}
	sort.Strings(extra)
	return append(names, extra...)
}

func sortedKV(m map[string]string, order []string) []kv {
	var out []kv
	seen := map[string]bool{}
	for _, k := range order {
		if v, ok := m[k]; ok {
			out = append(out, kv{k, v})
			seen[k] = true
		}
	}
	var rest []string
	for k := range m {
		if !seen[k] {
			rest = append(rest, k)
		}
	}
	sort.Strings(rest)
	for _, k := range rest {
		out = append(out, kv{k, m[k]})
	}
	return out
}

// verdictClass maps a verdict word to a CSS class: good, warn or bad.
// verdictClass colours a verdict: usable (converged, steady), to be run
// longer (not_converged, too_short, drifting, running), or without a
// value (failed, no_data).
func verdictClass(v string) string {
	switch v {
	case "":
		return ""
	case "converged", "steady":
		return "good"
	case "failed", "no_data":
		return "bad"
	default:
		return "warn"
	}
}

func buildView(s *Study) (*view, error) {
	v := &view{
		Name:        s.Name,
		Description: s.Description,
		Caution:     s.Caution,
		Params:      s.Params,
		Design:      s.Design,
		NVariants:   len(s.Variants),
		Objective:   s.Objective,
		Better:      s.Better,
		Counts:      s.Counts,
		Total:       s.Counts.Done + s.Counts.Failed + s.Counts.Pending + s.Counts.Running,
		Baseline:    s.Baseline,
	}
	if !s.Generated.IsZero() {
		v.Generated = s.Generated.Format("2006-01-02 15:04 MST")
	}
	v.ParamNames = paramNames(s)
	for _, r := range s.Ranking {
		rv := rankView{
			Rank: r.Rank, Label: r.Label, Name: r.Name, Group: r.Group,
			IsBaseline: s.Baseline != "" && r.Label == s.Baseline,
			Mean:       fmtPM(r.Mean, r.HalfWidth),
			Verdict:    r.Verdict, VerdictClass: verdictClass(r.Verdict),
		}
		for _, k := range v.ParamNames {
			rv.Params = append(rv.Params, r.Params[k])
		}
		if r.Delta != nil {
			hw := math.NaN()
			if r.DeltaHalfWidth != nil {
				hw = *r.DeltaHalfWidth
			}
			rv.Delta = fmtSignedPM(*r.Delta, hw)
		}
		if r.ChangePercent != nil {
			rv.Change = fmt.Sprintf("%+.2f %%", *r.ChangePercent)
		}
		v.Ranking = append(v.Ranking, rv)
	}
	objLabel := withUnit(s.Objective, s.ObjectiveUnit)
	if objLabel == "" {
		objLabel = "objective"
	}
	var err error
	if v.RankFigure, err = rankingFigure(s.Ranking, s.Baseline, "mean "+objLabel+", 95 % interval"); err != nil {
		return nil, err
	}
	for _, va := range s.Variants {
		vv := variantView{
			Label: va.Label, Name: va.Name, State: va.State, StateClass: stateClass(va.State),
			Params:     sortedKV(va.Params, v.ParamNames),
			Cores:      va.Cores,
			ExitStatus: va.ExitStatus,
			Log:        strings.Join(va.LogTail, "\n"),
			Open:       stateClass(va.State) == "bad",
		}
		if va.Runtime > 0 {
			vv.Runtime = fmtDuration(va.Runtime)
		}
		for _, q := range va.Quantities {
			fig, err := historyFigure(q)
			if err != nil {
				return nil, fmt.Errorf("report: variant %s, %s: %w", va.Label, q.Name, err)
			}
			vv.Quantities = append(vv.Quantities, quantityView{
				Name: withUnit(q.Name, q.Unit), Mean: fmtPM(q.Mean, q.HalfWidth),
				Verdict: q.Verdict, VerdictClass: verdictClass(q.Verdict),
				Message: q.Message, Figure: fig, Samples: min(len(q.Time), len(q.Value)),
			})
		}
		v.Variants = append(v.Variants, vv)
	}
	if s.Surface != nil {
		if v.Surface, err = buildSurface(s.Surface); err != nil {
			return nil, err
		}
	}
	v.SurfaceNote = s.SurfaceNote
	if s.Tradeoff != nil {
		if v.Tradeoff, err = buildTradeoff(s.Tradeoff, v.ParamNames); err != nil {
			return nil, err
		}
	}
	for _, m := range s.Mesh {
		mv, err := buildMesh(m, objLabel)
		if err != nil {
			return nil, err
		}
		v.Mesh = append(v.Mesh, mv)
	}
	return v, nil
}

func stateClass(state string) string {
	switch strings.ToLower(state) {
	case "failed", "error", "cancelled", "canceled":
		return "bad"
	case "done", "finished", "succeeded":
		return "good"
	default:
		return "warn"
	}
}

func buildSurface(s *Surface) (*surfaceView, error) {
	sv := &surfaceView{
		Model: s.Model, Response: s.Response,
		LOORMSE: fmtNum(s.LOORMSE), Noise: fmtNum(s.Noise),
		Flag:          s.Flag,
		OptimumValue:  fmtPM(s.OptimumValue, s.OptimumHalfWidth),
		Sensitivities: s.Sensitivities,
	}
	if s.Q2 != nil {
		sv.Q2 = strconv.FormatFloat(*s.Q2, 'f', 3, 64)
	}
	keys := make([]string, 0, len(s.Optimum))
	for k := range s.Optimum {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		sv.Optimum = append(sv.Optimum, kv{k, fmtNum(s.Optimum[k])})
	}
	for i := range s.Contours {
		c := &s.Contours[i]
		fig, err := contourFigure(c, s.Response)
		if err != nil {
			return nil, err
		}
		sv.Contours = append(sv.Contours, contourView{c.XName, c.YName, fig})
	}
	sv.Choice, sv.Source, sv.Notes = s.Choice, s.OptimumSource, s.Notes
	var err error
	if s.Curve != nil {
		sv.CurveParam = s.Curve.Param
		if sv.Curve, err = curveFigure(s.Curve, s.Response); err != nil {
			return nil, err
		}
	}
	if sv.LOO, err = looFigure(s); err != nil {
		return nil, err
	}
	if len(s.Sensitivities) == 1 {
		// One parameter owns all the variance: nothing to estimate.
		sv.Sensitivities = nil
		sv.SensNote = fmt.Sprintf("With one parameter, %s, its Sobol' index is 1 by definition.", s.Sensitivities[0].Param)
	} else if sv.Sens, err = sensitivityFigure(s.Sensitivities); err != nil {
		return nil, err
	}
	return sv, nil
}

func buildTradeoff(t *Tradeoff, params []string) (*tradeView, error) {
	tv := &tradeView{PredictedNote: t.PredictedNote, Draws: t.Draws, Limits: strings.Join(t.Limits, ", ")}
	var what []string
	for j, o := range t.Objectives {
		u := ""
		if j < len(t.Units) {
			u = t.Units[j]
		}
		tv.Objectives = append(tv.Objectives, withUnit(o, u))
		what = append(what, fmt.Sprintf("%s (%s is better)", o, t.Better[j]))
	}
	tv.Title = strings.Join(what, " against ")
	for _, r := range t.Rows {
		rv := tradeRowView{Label: r.Label, Chance: fmt.Sprintf("%.0f %%", 100*r.Chance), Status: r.Status, Front: r.Front}
		for _, k := range params {
			rv.Params = append(rv.Params, r.Params[k])
		}
		for j := range r.Mean {
			rv.Values = append(rv.Values, fmtPM(r.Mean[j], r.HalfWidth[j]))
		}
		tv.Rows = append(tv.Rows, rv)
	}
	var err error
	if tv.Figure, err = tradeoffFigure(t); err != nil {
		return nil, err
	}
	return tv, nil
}

func buildMesh(m MeshStudy, ylabel string) (meshView, error) {
	mv := meshView{
		Title:        m.Title,
		Extrapolated: fmtNum(m.Extrapolated),
		Order:        fmtNum(m.Order),
		Convergence:  m.Convergence,
		Warnings:     m.Warnings,
	}
	if finite(m.GCI) {
		mv.GCI = fmt.Sprintf("%.2g %%", 100*m.GCI)
	}
	if _, lo, hi, ok := gciBand(m); ok {
		mv.Band = fmtNum(lo) + " .. " + fmtNum(hi)
	}
	for i := range min(len(m.H), len(m.Value)) {
		hw := math.NaN()
		if i < len(m.HalfWidth) {
			hw = m.HalfWidth[i]
		}
		mv.Rows = append(mv.Rows, meshRow{fmtNum(m.H[i]), fmtPM(m.Value[i], hw)})
	}
	fig, err := meshFigure(m, ylabel)
	if err != nil {
		return mv, fmt.Errorf("report: mesh study %s: %w", m.Title, err)
	}
	mv.Figure = fig
	return mv, nil
}

// fmtNum formats v with 4 significant digits; NaN and ±Inf print as "–".
func fmtNum(v float64) string {
	if !finite(v) {
		return "–"
	}
	return strconv.FormatFloat(v, 'g', 4, 64)
}

// decimals returns the number of decimals that shows hw with two
// significant digits, or -1 if that is not a sensible fixed format.
func decimals(hw float64) int {
	if !finite(hw) || hw <= 0 {
		return -1
	}
	d := 1 - int(math.Floor(math.Log10(hw)))
	if d < 0 || d > 12 {
		return -1
	}
	return d
}

// fmtPM formats an estimate and its half-width: the half-width with two
// significant digits and the estimate rounded to the same decimal place
// (JCGM 100:2008, the GUM, §7.2.6: at most two significant digits for an
// uncertainty — from memory). Without a positive half-width the estimate
// alone is printed with 4 significant digits.
func fmtPM(mean, hw float64) string {
	if !finite(mean) {
		return "–"
	}
	d := decimals(hw)
	if d < 0 {
		if finite(hw) && hw > 0 {
			return fmtNum(mean) + " ± " + strconv.FormatFloat(hw, 'g', 2, 64)
		}
		return fmtNum(mean)
	}
	return strconv.FormatFloat(mean, 'f', d, 64) + " ± " + strconv.FormatFloat(hw, 'f', d, 64)
}

// fmtSignedPM is fmtPM with an explicit sign on the estimate.
func fmtSignedPM(v, hw float64) string {
	s := fmtPM(v, hw)
	if finite(v) && v >= 0 {
		s = "+" + s
	}
	return s
}

// fmtDuration prints a run time rounded to the second (to the
// millisecond below one second).
func fmtDuration(d time.Duration) string {
	if d < time.Second {
		return d.Round(time.Millisecond).String()
	}
	return d.Round(time.Second).String()
}
