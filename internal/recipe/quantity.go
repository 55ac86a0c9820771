package recipe

import (
	"fmt"
	"math"
	"slices"
	"strings"
	"time"

	"github.com/sweep-cfd/sweep/internal/harvest"
	"github.com/sweep-cfd/sweep/internal/history"
)

// Quantity is a harvested quantity: where its history lives in a variant
// directory, how its columns become a value, and how it is judged.
type Quantity struct {
	Name string
	Unit string
	// Direction says which values are better: Lower or Higher for an
	// objective, None for a quantity that is only reported.
	Direction Direction
	Spec      history.Quantity
	Opts      harvest.Options
	Line      int
	// From, for a statistic of another quantity's cycles (declared with
	// statistics = [...] on that quantity), names that quantity, and
	// Stat the statistic (see Statistics); the quantity is then named
	// From_Stat and has no history of its own.
	From, Stat string
	// Strouhal holds the reference length and speed of a Strouhal number,
	// St = f L / U.
	Strouhal struct{ Length, Speed float64 }
	// AtMost and AtLeast, when set, are limits the quantity must keep
	// (at_most = 0.3 for lift within a band): a variant outside them is
	// infeasible, and rank, fit and plan --add respect them.
	AtMost, AtLeast *float64
}

// Limited reports whether the quantity has a limit.
func (q *Quantity) Limited() bool { return q.AtMost != nil || q.AtLeast != nil }

// Limits returns the quantity's limits, −Inf and +Inf where it has none.
func (q *Quantity) Limits() (lo, hi float64) {
	lo, hi = math.Inf(-1), math.Inf(1)
	if q.AtLeast != nil {
		lo = *q.AtLeast
	}
	if q.AtMost != nil {
		hi = *q.AtMost
	}
	return lo, hi
}

// LimitText describes the limits in words ("lift ≤ 0.3", "0.1 ≤ lift ≤
// 0.3"), "" without any.
func (q *Quantity) LimitText() string {
	switch {
	case q.AtLeast != nil && q.AtMost != nil:
		return fmt.Sprintf("%g ≤ %s ≤ %g", *q.AtLeast, q.Name, *q.AtMost)
	case q.AtLeast != nil:
		return fmt.Sprintf("%s ≥ %g", q.Name, *q.AtLeast)
	case q.AtMost != nil:
		return fmt.Sprintf("%s ≤ %g", q.Name, *q.AtMost)
	}
	return ""
}

// Statistics are the statistics of a quantity's developed cycles a
// recipe may ask for: the mean of the cycle maxima and minima, the
// amplitude (maximum − minimum), the rms of the fluctuation, the
// frequency (in 1/time units) and the Strouhal number f L / U.
var Statistics = []string{"max", "min", "amplitude", "rms", "frequency", "strouhal"}

// Derived reports whether the quantity is a statistic of another one.
func (q *Quantity) Derived() bool { return q.From != "" }

// Direction says which values of a quantity are better.
type Direction int

const (
	// None marks a quantity with no preferred direction.
	None Direction = iota
	// Lower is better (drag).
	Lower
	// Higher is better (downforce as a positive number, lift-to-drag).
	Higher
)

// String returns the recipe's word for d: "lower", "higher" or "".
func (d Direction) String() string {
	switch d {
	case Lower:
		return "lower"
	case Higher:
		return "higher"
	}
	return ""
}

// Better reports whether value a is better than value b for the
// quantity: smaller when lower is better, larger when higher is better.
// A quantity without a direction is ranked as lower-is-better.
func (q *Quantity) Better(a, b float64) bool {
	if q.Direction == Higher {
		return a > b
	}
	return a < b
}

// LowerIsBetter reports whether smaller values of q rank first.
func (q *Quantity) LowerIsBetter() bool { return q.Direction != Higher }

// Directed reports whether the quantity says which values are better
// (better = "lower" or "higher"): an objective, not only reported.
func (q *Quantity) Directed() bool { return q.Direction != None }

// BetterWord returns "lower" or "higher": which values rank first (lower
// for a quantity that does not say).
func (q *Quantity) BetterWord() string { return BetterWord(q.LowerIsBetter()) }

// BetterWord returns "lower" when lower values are better, else "higher".
func BetterWord(lowerIsBetter bool) string {
	if lowerIsBetter {
		return Lower.String()
	}
	return Higher.String()
}

// Settle says when and how a stage's solver is stopped once its
// averages have settled (converged to their tolerance).
type Settle struct {
	Quantities []string      // every one must have converged
	Every      time.Duration // how often the history is analysed
	MinSamples int           // least number of averaged samples
	By         string        // "signal", "file" or "command"
	Signal     string        // for "signal": TERM, INT, HUP, USR1 or USR2
	File       string        // for "file": created in the stage's directory
	Command    []string      // for "command": run in the stage's directory
}

type rawQuantity struct {
	Name         string   `toml:"name"`
	Unit         string   `toml:"unit"`
	Files        string   `toml:"files"`
	Time         any      `toml:"time"`
	Value        any      `toml:"value"`
	Comment      string   `toml:"comment"`
	Scale        rawScale `toml:"scale"`
	Better       string   `toml:"better"`
	Tolerance    float64  `toml:"tolerance"`
	RelTolerance float64  `toml:"relative_tolerance"`
	Start        *float64 `toml:"start"`
	AtMost       *float64 `toml:"at_most"`
	AtLeast      *float64 `toml:"at_least"`
	Statistics   []string `toml:"statistics"`
	Strouhal     *struct {
		Length *float64 `toml:"length"`
		Speed  *float64 `toml:"speed"`
	} `toml:"strouhal"`
}

type rawScale struct {
	Factor    *float64 `toml:"factor"`
	Density   *float64 `toml:"density"`
	Speed     *float64 `toml:"speed"`
	Reference *float64 `toml:"reference"`
}

type rawSettle struct {
	Quantities []string `toml:"quantities"`
	Every      string   `toml:"every"`
	MinSamples int      `toml:"min_samples"`
	By         string   `toml:"by"`
	Signal     string   `toml:"signal"`
	File       string   `toml:"file"`
	Command    string   `toml:"command"`
}

// Signals a recipe may name for a settle stop.
var stopSignals = []string{"TERM", "INT", "HUP", "USR1", "USR2"}

func checkQuantities(pr *problems, r *Recipe, raws []rawQuantity) {
	seen := map[string]bool{}
	for i, rq := range raws {
		key := fmt.Sprintf("quantity[%d]", i)
		q := Quantity{Name: rq.Name, Unit: rq.Unit, Line: pr.line(key)}
		switch {
		case rq.Name == "":
			pr.at(key, "quantity %d has no name: add name = \"drag\" (or similar)", i+1)
		case !identRE.MatchString(rq.Name):
			pr.at(key+".name", "quantity name %q must start with a letter and use only letters, digits and _", rq.Name)
		case seen[rq.Name]:
			pr.at(key+".name", "quantity %q is declared twice", rq.Name)
		}
		seen[rq.Name] = true
		switch rq.Better {
		case "":
		case "lower":
			q.Direction = Lower
		case "higher":
			q.Direction = Higher
		default:
			pr.at(key+".better", "quantity %q: better must be \"lower\" or \"higher\" (got %q): it says which values of the quantity are better", rq.Name, rq.Better)
		}
		q.Spec = history.Quantity{Files: rq.Files, Comment: rq.Comment, Scale: checkScale(pr, key, rq.Name, rq.Scale)}
		if rq.Files == "" {
			pr.at(key, "quantity %q needs files = \"GLOB\": the history files, relative to the variant directory", rq.Name)
		}
		if rq.Time != nil {
			if err := q.Spec.Time.UnmarshalTOML(rq.Time); err != nil {
				pr.at(key+".time", "quantity %q: time: %v", rq.Name, err)
			}
		}
		switch v := rq.Value.(type) {
		case nil:
			pr.at(key, "quantity %q needs value = a column (\"Cd\" or 3) or a list of columns to sum", rq.Name)
		case []any:
			for j, x := range v {
				var t history.Term
				if err := t.UnmarshalTOML(x); err != nil {
					pr.at(fmt.Sprintf("%s.value[%d]", key, j), "quantity %q: value %d: %v", rq.Name, j+1, err)
				}
				q.Spec.Value = append(q.Spec.Value, t)
			}
		default:
			var t history.Term
			if err := t.UnmarshalTOML(v); err != nil {
				pr.at(key+".value", "quantity %q: value: %v", rq.Name, err)
			}
			q.Spec.Value = []history.Term{t}
		}
		if rq.Files != "" && rq.Value != nil {
			if err := q.Spec.Validate(); err != nil {
				pr.at(key, "quantity %q: %v", rq.Name, err)
			}
		}
		if !(rq.Tolerance >= 0) || math.IsInf(rq.Tolerance, 0) {
			pr.at(key+".tolerance", "quantity %q: tolerance = %s must be a finite number of 0 or more: the largest 95 %% half-width accepted, in the quantity's unit", rq.Name, tomlNumber(rq.Tolerance))
		}
		if !(rq.RelTolerance >= 0) || math.IsInf(rq.RelTolerance, 0) {
			pr.at(key+".relative_tolerance", "quantity %q: relative_tolerance = %s must be a finite number of 0 or more: the largest 95 %% half-width accepted, as a fraction of the mean (0.01 is 1 %%)", rq.Name, tomlNumber(rq.RelTolerance))
		}
		if rq.Start != nil && (math.IsNaN(*rq.Start) || math.IsInf(*rq.Start, 0)) {
			pr.at(key+".start", "quantity %q: start = %s is not a time: give the time from which to average, or remove start to detect the transient", rq.Name, tomlNumber(*rq.Start))
		}
		q.Opts = harvest.Options{Abs: max(rq.Tolerance, 0), Rel: max(rq.RelTolerance, 0), Start: rq.Start}
		checkLimits(pr, key, &q, rq)
		r.Quantities = append(r.Quantities, q)
		for _, d := range derivedQuantities(pr, key, q, rq) {
			if seen[d.Name] {
				pr.at(key+".statistics", "quantity %q: its statistic %q is named %q, which another quantity is already called; rename one", rq.Name, d.Stat, d.Name)
			}
			seen[d.Name] = true
			r.Quantities = append(r.Quantities, d)
		}
	}
}

// checkLimits reads a quantity's at_most and at_least.
func checkLimits(pr *problems, key string, q *Quantity, rq rawQuantity) {
	for _, l := range []struct {
		key string
		v   *float64
	}{{"at_most", rq.AtMost}, {"at_least", rq.AtLeast}} {
		if l.v != nil && (math.IsNaN(*l.v) || math.IsInf(*l.v, 0)) {
			pr.at(key+"."+l.key, "quantity %q: %s = %s must be a finite number, in the quantity's unit", rq.Name, l.key, tomlNumber(*l.v))
			return
		}
	}
	if rq.AtMost != nil && rq.AtLeast != nil && !(*rq.AtLeast < *rq.AtMost) {
		pr.at(key+".at_least", "quantity %q: at_least = %g is not below at_most = %g, so no value is allowed: give the band's lower limit in at_least and its upper one in at_most", rq.Name, *rq.AtLeast, *rq.AtMost)
		return
	}
	q.AtMost, q.AtLeast = rq.AtMost, rq.AtLeast
}

// derivedQuantities reads a quantity's statistics = [...] and strouhal =
// {length, speed}, and returns one quantity per statistic, named
// <quantity>_<statistic>, judged with the quantity's relative tolerance.
func derivedQuantities(pr *problems, key string, q Quantity, rq rawQuantity) []Quantity {
	var out []Quantity
	wantSt := false
	seen := map[string]bool{}
	for j, st := range rq.Statistics {
		at := fmt.Sprintf("%s.statistics[%d]", key, j)
		if !slices.Contains(Statistics, st) {
			pr.at(at, "quantity %q: unknown statistic %q: use %s", rq.Name, st, strings.Join(Statistics, ", "))
			continue
		}
		if seen[st] {
			pr.at(at, "quantity %q lists the statistic %q twice", rq.Name, st)
			continue
		}
		seen[st] = true
		d := Quantity{Name: rq.Name + "_" + st, From: rq.Name, Stat: st, Line: q.Line,
			Opts: harvest.Options{Rel: q.Opts.Rel, Confidence: q.Opts.Confidence}}
		switch st {
		case "max", "min", "amplitude", "rms":
			d.Unit = q.Unit
			d.Opts.Abs = q.Opts.Abs
		case "frequency":
			d.Unit = "1/time"
		case "strouhal":
			wantSt = true
		}
		if d.Opts.Abs == 0 && d.Opts.Rel == 0 {
			d.Opts.Rel = 0.01
		}
		out = append(out, d)
	}
	switch {
	case wantSt && rq.Strouhal == nil:
		pr.at(key+".statistics", "quantity %q asks for the strouhal statistic: add strouhal = { length = L, speed = U }, the reference length and speed of St = f L / U", rq.Name)
	case !wantSt && rq.Strouhal != nil:
		pr.at(key+".strouhal", "quantity %q has strouhal = {...} but does not list \"strouhal\" in statistics; add it, or remove the table", rq.Name)
	case wantSt:
		var l, u float64
		for name, v := range map[string]**float64{"length": &rq.Strouhal.Length, "speed": &rq.Strouhal.Speed} {
			if *v == nil || !(**v > 0) || math.IsInf(**v, 0) {
				pr.at(key+".strouhal", "quantity %q: strouhal needs %s = a number above 0 (the reference %s of St = f L / U)", rq.Name, name, name)
			}
		}
		if rq.Strouhal.Length != nil {
			l = *rq.Strouhal.Length
		}
		if rq.Strouhal.Speed != nil {
			u = *rq.Strouhal.Speed
		}
		for i := range out {
			if out[i].Stat == "strouhal" {
				out[i].Strouhal.Length, out[i].Strouhal.Speed = l, u
			}
		}
	}
	return out
}

// checkScale reads a quantity's scale. Every number given must be finite
// and above 0: a zero density, speed or reference would divide by zero,
// and a factor of 0 or below would silently drop or flip the value (a sign
// belongs to the value's terms). A scale with a refused number is left
// out of the quantity, so that only these messages report it.
func checkScale(pr *problems, key, name string, raw rawScale) history.Scale {
	ok := true
	for _, f := range []struct {
		key, what string
		v         *float64
	}{
		{"factor", "the number the value is multiplied by; to flip its sign, give the value's term a factor: value = {column = 3, factor = -1}", raw.Factor},
		{"density", "the fluid's density", raw.Density},
		{"speed", "the reference speed", raw.Speed},
		{"reference", "the reference area (a length for a 2D case)", raw.Reference},
	} {
		if f.v != nil && (!(*f.v > 0) || math.IsInf(*f.v, 0)) {
			pr.at(key+".scale."+f.key, "quantity %q: scale %s = %s must be a finite number above 0: %s", name, f.key, tomlNumber(*f.v), f.what)
			ok = false
		}
	}
	if !ok {
		return history.Scale{}
	}
	get := func(p *float64) float64 {
		if p == nil {
			return 0
		}
		return *p
	}
	return history.Scale{Factor: get(raw.Factor), Density: get(raw.Density), Speed: get(raw.Speed), Reference: get(raw.Reference)}
}

func checkSettle(pr *problems, r *Recipe, key string, s *Stage, raw *rawSettle) {
	if raw == nil {
		return
	}
	key += ".settle"
	es := &Settle{Quantities: raw.Quantities, MinSamples: raw.MinSamples, By: raw.By, Signal: raw.Signal, File: raw.File, Every: 30 * time.Second}
	if len(es.Quantities) == 0 {
		pr.at(key, "stage %q: [stage.settle] needs quantities = [\"...\"], the quantities whose averages must settle", s.Name)
	}
	for _, name := range es.Quantities {
		if q := r.Quantity(name); q == nil {
			pr.at(key+".quantities", "stage %q: [stage.settle] names %q, which is not a declared [[quantity]]", s.Name, name)
		} else if q.Derived() {
			pr.at(key+".quantities", "stage %q: [stage.settle] names %q, a statistic of %q; name %q itself (its cycles settle with it)", s.Name, name, q.From, q.From)
		}
	}
	if raw.Every != "" {
		d, err := time.ParseDuration(raw.Every)
		if err != nil || d <= 0 {
			pr.at(key+".every", "stage %q: every %q is not a positive duration; write it like \"20s\"", s.Name, raw.Every)
		}
		es.Every = d
	}
	if es.MinSamples < 0 {
		pr.at(key+".min_samples", "stage %q: min_samples cannot be negative", s.Name)
	}
	if es.By == "" {
		es.By = "signal"
	}
	switch es.By {
	case "signal":
		if es.Signal == "" {
			es.Signal = "TERM"
		}
		es.Signal = strings.TrimPrefix(strings.ToUpper(es.Signal), "SIG")
		if !slices.Contains(stopSignals, es.Signal) {
			pr.at(key+".signal", "stage %q: signal %q is not one of %s", s.Name, raw.Signal, strings.Join(stopSignals, ", "))
		}
	case "file":
		if es.File == "" || strings.HasPrefix(es.File, "/") || strings.HasPrefix(es.File, "..") {
			pr.at(key+".file", "stage %q: by = \"file\" needs file = \"NAME\", relative to the stage's directory", s.Name)
		}
	case "command":
		argv, err := SplitCommand(raw.Command)
		if err != nil {
			pr.at(key+".command", "stage %q: settle command: %v", s.Name, err)
		}
		es.Command = argv
	default:
		pr.at(key+".by", "stage %q: by must be \"signal\", \"file\" or \"command\" (got %q)", s.Name, es.By)
	}
	s.Settle = es
}

// Quantity returns the named quantity, or nil.
func (r *Recipe) Quantity(name string) *Quantity {
	for i := range r.Quantities {
		if r.Quantities[i].Name == name {
			return &r.Quantities[i]
		}
	}
	return nil
}

// Objective returns the quantity that ranks variants: the named one, or
// else the first that says which values are better, or else the first
// declared; nil if the recipe declares none.
func (r *Recipe) Objective(name string) (*Quantity, error) {
	if name != "" {
		if q := r.Quantity(name); q != nil {
			return q, nil
		}
		names := make([]string, len(r.Quantities))
		for i, q := range r.Quantities {
			names[i] = q.Name
		}
		return nil, fmt.Errorf("no quantity %q in the recipe (declared: %s)", name, strings.Join(names, ", "))
	}
	for i := range r.Quantities {
		if r.Quantities[i].Direction != None {
			return &r.Quantities[i], nil
		}
	}
	if len(r.Quantities) > 0 {
		return &r.Quantities[0], nil
	}
	return nil, fmt.Errorf("%s declares no [[quantity]]: add one saying which history file and column to read", FileName)
}
