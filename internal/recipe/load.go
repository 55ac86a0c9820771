package recipe

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"regexp"
	"slices"
	"sort"
	"strconv"
	"strings"
	"time"
	"unicode/utf8"

	"github.com/pelletier/go-toml/v2"
)

// rawRecipe is the recipe file's shape. Unknown keys are refused.
type rawRecipe struct {
	Name        string        `toml:"name"`
	Description string        `toml:"description"`
	Case        rawCase       `toml:"case"`
	Params      []rawParam    `toml:"param"`
	Design      rawDesign     `toml:"design"`
	Stages      []rawStage    `toml:"stage"`
	Quantities  []rawQuantity `toml:"quantity"`
	Backend     rawBackend    `toml:"backend"`
}

type rawCase struct {
	Base    string   `toml:"base"`
	Render  []string `toml:"render"`
	Private []string `toml:"private"`
}

type rawParam struct {
	Name   string   `toml:"name"`
	Min    *float64 `toml:"min"`
	Max    *float64 `toml:"max"`
	Log    bool     `toml:"log"`
	Steps  *int     `toml:"steps"`
	Unit   string   `toml:"unit"`
	Levels []any    `toml:"levels"` // numbers, or words
	Mesh   string   `toml:"mesh"`
}

type rawDesign struct {
	Scheme string           `toml:"scheme"`
	Steps  *int             `toml:"steps"`
	Points []map[string]any `toml:"points"`
	File   string           `toml:"file"`
	Seed   uint64           `toml:"seed"`
	Count  int              `toml:"count"`
	// composite: "circumscribed", "inscribed" or "face"; centre points
	Composite    string         `toml:"composite"`
	Centre       *int           `toml:"centre"`
	Trajectories int            `toml:"trajectories"`
	GridLevels   int            `toml:"grid_levels"`
	Baseline     map[string]any `toml:"baseline"`
	Constraints  []string       `toml:"constraints"`
}

type rawStage struct {
	Name     string            `toml:"name"`
	Run      string            `toml:"run"`
	Shell    bool              `toml:"shell"`
	Cores    *int              `toml:"cores"`
	Timeout  string            `toml:"timeout"`
	Retries  int               `toml:"retries"`
	Dir      string            `toml:"dir"`
	Env      map[string]string `toml:"env"`
	Settle   *rawSettle        `toml:"settle"`
	Continue string            `toml:"continue"`
}

var identRE = regexp.MustCompile(`^[A-Za-z][A-Za-z0-9_]*$`)

// Schemes lists the design schemes a recipe may name in [design] scheme.
// Package plan has a generator for each; Load refuses any other name.
var Schemes = map[string]bool{"factorial": true, "table": true, "latin": true, "sobol": true,
	"composite": true, "box_behnken": true, "one_at_a_time": true, "morris": true}

// Load reads and checks the recipe at path. Every problem found is
// reported, each with file:line, in one Errors value (which matches
// ErrInvalid); an unreadable file gives the os error.
func Load(path string) (*Recipe, error) {
	abs, err := filepath.Abs(path)
	if err != nil {
		return nil, err
	}
	data, err := os.ReadFile(abs)
	if err != nil {
		if errors.Is(err, os.ErrNotExist) {
			return nil, fmt.Errorf("no recipe at %s: write one, or start from `sweep new DIR`: %w", abs, err)
		}
		return nil, fmt.Errorf("read recipe: %w", err)
	}
	return Parse(abs, data)
}

// Parse checks recipe text as if read from the file at path (which must be
// absolute; the study directory is its directory).
func Parse(path string, data []byte) (*Recipe, error) {
	rel := filepath.Base(path)
	pr := &problems{file: rel, lines: keyLines(data)}
	if !utf8.Valid(data) {
		pr.at("", "the recipe is not valid UTF-8 text; save it as UTF-8")
		return nil, pr.list
	}
	var raw rawRecipe
	dec := toml.NewDecoder(bytes.NewReader(data)).DisallowUnknownFields()
	if err := dec.Decode(&raw); err != nil {
		decodeProblems(pr, err)
		return nil, pr.list
	}
	r := &Recipe{File: path, Dir: filepath.Dir(path), Name: raw.Name, Description: raw.Description}
	if r.Name == "" {
		r.Name = filepath.Base(r.Dir)
	}
	checkCase(pr, r, raw.Case)
	checkParams(pr, r, raw.Params)
	checkDesign(pr, r, raw.Design)
	checkQuantities(pr, r, raw.Quantities)
	checkStages(pr, r, raw.Stages)
	checkBackend(pr, r, raw.Backend)
	if len(pr.list) > 0 {
		return nil, pr.list
	}
	return r, nil
}

func decodeProblems(pr *problems, err error) {
	var strict *toml.StrictMissingError
	if errors.As(err, &strict) {
		renamedTables := map[string]bool{}
		for _, e := range strict.Errors {
			row, _ := e.Position()
			path := e.Key()
			key := strings.Join(path, ".")
			if t, msg, ok := renamedTable(path); ok {
				if !renamedTables[t] {
					renamedTables[t] = true
					for _, l := range tableLines(pr.lines, t) {
						pr.list = append(pr.list, &Error{File: pr.file, Line: l, Msg: msg})
					}
				}
				continue
			}
			msg, ok := renamedKeys[key]
			if !ok {
				msg = fmt.Sprintf("unknown key %q: check its spelling and the table it is in (see `sweep new` for a commented recipe)", key)
			}
			pr.list = append(pr.list, &Error{File: pr.file, Line: row, Msg: msg})
		}
		sort.SliceStable(pr.list, func(i, j int) bool { return pr.list[i].Line < pr.list[j].Line })
		return
	}
	var de *toml.DecodeError
	if errors.As(err, &de) {
		row, _ := de.Position()
		msg := "not valid TOML: " + strings.TrimPrefix(de.Error(), "toml: ")
		if m := typeErrRE.FindStringSubmatch(de.Error()); m != nil {
			msg = fmt.Sprintf("key %q must be %s, not %s", tomlName(m[2]), goTypeWords(m[3]), article(m[1]))
		}
		pr.list = append(pr.list, &Error{File: pr.file, Line: row, Msg: msg})
		return
	}
	pr.list = append(pr.list, &Error{File: pr.file, Msg: tidyDecodeError(err.Error())})
}

// typeErrRE matches the decoder's message for a value of the wrong type.
var typeErrRE = regexp.MustCompile(`cannot decode TOML (\w+) into struct field \S*\.(\w+) of type (\S+)`)

// tomlName turns a raw struct field name back into its recipe key.
func tomlName(field string) string {
	for _, t := range []reflect.Type{reflect.TypeOf(rawRecipe{}), reflect.TypeOf(rawCase{}), reflect.TypeOf(rawParam{}), reflect.TypeOf(rawDesign{}), reflect.TypeOf(rawStage{}), reflect.TypeOf(rawQuantity{}), reflect.TypeOf(rawSettle{}), reflect.TypeOf(rawBackend{})} {
		if f, ok := t.FieldByName(field); ok {
			return f.Tag.Get("toml")
		}
	}
	return strings.ToLower(field)
}

func goTypeWords(t string) string {
	switch {
	case t == "string":
		return "text in quotes"
	case strings.HasPrefix(t, "float") || t == "*float64":
		return "a number"
	case strings.HasPrefix(t, "int") || strings.HasPrefix(t, "uint") || t == "*int":
		return "a whole number"
	case t == "bool":
		return "true or false"
	case strings.HasPrefix(t, "[]"):
		return "a list [...]"
	case strings.HasPrefix(t, "map"):
		return "a table { ... }"
	}
	return "of type " + t
}

func article(kind string) string {
	switch kind {
	case "integer":
		return "an integer"
	case "array":
		return "an array"
	case "inline":
		return "an inline table"
	}
	return "a " + kind
}

func tidyDecodeError(s string) string {
	s = strings.TrimPrefix(s, "toml: ")
	return s + " (check the value's type: quote words, leave numbers bare)"
}

func checkCase(pr *problems, r *Recipe, c rawCase) {
	if c.Base == "" {
		pr.at("case", "[case] needs base = \"DIR\", the base case directory (relative to the recipe)")
		return
	}
	r.Base = c.Base
	if !filepath.IsAbs(r.Base) {
		r.Base = filepath.Join(r.Dir, r.Base)
	}
	st, err := os.Stat(r.Base)
	switch {
	case err != nil:
		pr.at("case.base", "base case directory %q does not exist; create it or correct the path (relative to the recipe)", c.Base)
	case !st.IsDir():
		pr.at("case.base", "base %q is a file; it must be the base case directory", c.Base)
	default:
		if why := baseOverlap(r.Dir, r.Base); why != "" {
			pr.at("case.base", "base case directory %q %s", c.Base, why)
		}
	}
	for i, g := range c.Render {
		if err := checkGlob(g); err != nil {
			pr.at(fmt.Sprintf("case.render[%d]", i), "render pattern %q: %v", g, err)
		}
	}
	for i, g := range c.Private {
		if err := checkGlob(g); err != nil {
			pr.at(fmt.Sprintf("case.private[%d]", i), "private pattern %q: %v", g, err)
		}
	}
	r.Render, r.Private = c.Render, c.Private
}

// The directories the program writes inside a study: the rendered cases
// (plan.VariantsDir) and the study database (store.Dir). A test checks
// that these names agree with those packages.
const (
	variantsDirName = "variants"
	storeDirName    = ".sweep"
)

// baseOverlap says what is wrong when the base case directory overlaps
// the study's own files: a base case is copied into every variant, so it
// must hold neither the study nor what the program writes into it.
func baseOverlap(study, base string) string {
	study, base = resolved(study), resolved(base)
	switch {
	case base == study:
		return "is the study directory itself, so every variant would get a copy of the whole study, its variants included: move the case into a subdirectory (such as \"template\") and point base at it"
	case inside(study, base):
		return "contains the study directory, so every variant would get a copy of the whole study, its variants included: point base at a directory that holds only the case"
	case base == filepath.Join(study, variantsDirName) || inside(base, filepath.Join(study, variantsDirName)):
		return "lies in the study's variants/ directory, which the program writes (every new variant would copy the variants before it): copy the case to a directory of its own (such as \"template\") and point base at it"
	case base == filepath.Join(study, storeDirName) || inside(base, filepath.Join(study, storeDirName)):
		return "lies in the study's .sweep/ directory, which holds the study database: copy the case to a directory of its own (such as \"template\") and point base at it"
	}
	return ""
}

// resolved returns the absolute path with symbolic links resolved, or the
// cleaned path when that fails.
func resolved(path string) string {
	if p, err := filepath.EvalSymlinks(path); err == nil {
		return p
	}
	return filepath.Clean(path)
}

// inside reports whether path lies strictly inside dir.
func inside(path, dir string) bool {
	rel, err := filepath.Rel(dir, path)
	return err == nil && rel != "." && rel != ".." && !strings.HasPrefix(rel, ".."+string(filepath.Separator))
}

func checkGlob(g string) error {
	if g == "" {
		return errors.New("empty pattern")
	}
	if filepath.IsAbs(g) || strings.HasPrefix(filepath.Clean(g), "..") {
		return errors.New("must be relative to the base case directory and stay inside it")
	}
	if _, err := filepath.Match(g, ""); err != nil {
		return fmt.Errorf("bad pattern syntax: %v", err)
	}
	return nil
}

func checkParams(pr *problems, r *Recipe, raws []rawParam) {
	if len(raws) == 0 {
		pr.at("", "the recipe declares no parameter: add at least one [[param]] table")
		return
	}
	if len(raws) > MaxParams {
		pr.at(fmt.Sprintf("param[%d]", MaxParams), "the recipe declares %d parameters, over the limit of %d: vary fewer and keep the others fixed in the base case", len(raws), MaxParams)
		raws = raws[:MaxParams]
	}
	seen := map[string]int{}
	for i, rp := range raws {
		key := fmt.Sprintf("param[%d]", i)
		p := Param{Name: rp.Name, Unit: rp.Unit, Log: rp.Log, Line: pr.line(key)}
		switch {
		case rp.Name == "":
			pr.at(key, "parameter %d has no name: add name = \"...\"", i+1)
		case !identRE.MatchString(rp.Name):
			pr.at(key+".name", "parameter name %q must start with a letter and use only letters, digits and _ (it becomes a template field and an environment variable)", rp.Name)
		default:
			up := strings.ToUpper(rp.Name)
			if j, dup := seen[up]; dup {
				pr.at(key+".name", "parameter %q is declared twice (first as parameter %d; names differing only in case clash as environment variables)", rp.Name, j+1)
			}
			seen[up] = i
		}
		if (rp.Min != nil || rp.Max != nil) == (rp.Levels != nil) {
			pr.at(key, "parameter %q must have either min and max (a range) or levels = [...] (numbers or words), not both or neither", rp.Name)
			r.Params = append(r.Params, p)
			continue
		}
		switch {
		case rp.Min != nil || rp.Max != nil:
			p.Kind = Range
			if rp.Min == nil || rp.Max == nil {
				pr.at(key, "range parameter %q needs both min and max", rp.Name)
				break
			}
			p.Min, p.Max = *rp.Min, *rp.Max
			finite := true
			for _, b := range []struct {
				key, end string
				v        float64
			}{{"min", "lower", p.Min}, {"max", "upper", p.Max}} {
				if math.IsNaN(b.v) || math.IsInf(b.v, 0) {
					pr.at(key+"."+b.key, "parameter %q: %s = %s is not a finite number: write the range's %s end as an ordinary number", rp.Name, b.key, tomlNumber(b.v), b.end)
					finite = false
				}
			}
			switch {
			case !finite:
			case p.Min > p.Max:
				pr.at(key+".max", "parameter %q has min (%g) above max (%g): swap them", rp.Name, p.Min, p.Max)
			case p.Min == p.Max:
				pr.at(key+".max", "parameter %q has min = max = %g, a range of no width: for a fixed value write levels = [%g] instead of min and max, or widen the range", rp.Name, p.Min, p.Min)
			}
			if finite && p.Log && p.Min <= 0 {
				pr.at(key+".log", "parameter %q is on a log scale, so min must be above 0 (it is %g)", rp.Name, p.Min)
			}
			if rp.Steps != nil {
				switch s := *rp.Steps; {
				case s < 2:
					pr.at(key+".steps", "parameter %q: steps must be 2 or more (it is %d): remove the key to use the design's default", rp.Name, s)
				case s > MaxSteps:
					pr.at(key+".steps", "parameter %q: steps = %d is over the limit of %d: lower it", rp.Name, s, MaxSteps)
				default:
					p.Steps = s
				}
			}
		default:
			checkLevels(pr, key, &p, rp.Levels)
		}
		if rp.Steps != nil && p.Kind != Range {
			pr.at(key+".steps", "steps applies only to min/max ranges (levels are listed); remove it from parameter %q", rp.Name)
		}
		switch rp.Mesh {
		case "":
		case "resolution", "spacing", "cells2d", "cells3d":
			if p.Kind == Choice {
				pr.at(key+".mesh", "parameter %q: a mesh level must be numeric", rp.Name)
			}
			for _, q := range r.Params {
				if q.Mesh != "" {
					pr.at(key+".mesh", "parameter %q: only one parameter can be the mesh level (%q is already)", rp.Name, q.Name)
				}
			}
			p.Mesh = rp.Mesh
		default:
			pr.at(key+".mesh", "parameter %q: mesh must be \"resolution\" (cells per length), \"spacing\" (cell size), \"cells2d\" or \"cells3d\" (cell counts) (got %q)", rp.Name, rp.Mesh)
		}
		switch {
		case rp.Log && p.Kind == Choice:
			pr.at(key+".log", "parameter %q: log applies to numbers (a min/max range or numeric levels); remove it from this list of words", rp.Name)
		case rp.Log && p.Kind == Levels && slices.Min(p.Values) <= 0:
			pr.at(key+".log", "parameter %q is on a log scale, so its levels must be above 0 (the smallest is %g)", rp.Name, slices.Min(p.Values))
		}
		r.Params = append(r.Params, p)
	}
}

// checkLevels reads a levels list: all numbers (a numeric parameter with
// discrete levels) or all words (a categorical one).
func checkLevels(pr *problems, key string, p *Param, raw []any) {
	if len(raw) == 0 {
		pr.at(key+".levels", "parameter %q has an empty levels list: list its levels, such as levels = [1, 2, 4] or levels = [\"round\", \"square\"]", p.Name)
		p.Kind = Levels
		return
	}
	if len(raw) > MaxLevels {
		pr.at(key+".levels", "parameter %q lists %d levels, over the limit of %d: for many levels use a range (min, max) with steps", p.Name, len(raw), MaxLevels)
		p.Kind = Levels
		return
	}
	_, words := raw[0].(string)
	if words {
		p.Kind = Choice
	} else {
		p.Kind = Levels
	}
	seenW := map[string]bool{}
	for j, x := range raw {
		at := fmt.Sprintf("%s.levels[%d]", key, j)
		switch v := x.(type) {
		case string:
			if !words {
				pr.at(at, "parameter %q mixes numbers and words in its levels (%q); give all levels as numbers or all as words in quotes", p.Name, v)
				continue
			}
			if v == "" {
				pr.at(at, "parameter %q has an empty level %d: write a word", p.Name, j+1)
			}
			if seenW[v] {
				pr.at(at, "parameter %q lists the level %q twice", p.Name, v)
			}
			seenW[v] = true
			p.Choices = append(p.Choices, v)
		case int64, float64:
			f, _ := v.(float64)
			if i, ok := v.(int64); ok {
				f = float64(i)
			}
			if words {
				pr.at(at, "parameter %q mixes words and numbers in its levels (%g); give all levels as numbers or all as words in quotes", p.Name, f)
				continue
			}
			if math.IsNaN(f) || math.IsInf(f, 0) {
				pr.at(at, "parameter %q: level %d is %g; levels must be finite numbers", p.Name, j+1, f)
				continue
			}
			p.Values = append(p.Values, f)
		default:
			pr.at(at, "parameter %q: level %d (%v) is neither a number nor a word in quotes", p.Name, j+1, x)
		}
	}
	if dup := firstDup(p.Values); dup >= 0 {
		pr.at(key+".levels", "parameter %q lists the level %g twice", p.Name, p.Values[dup])
	}
}

func firstDup(xs []float64) int {
	seen := map[float64]bool{}
	for i, x := range xs {
		if seen[x] {
			return i
		}
		seen[x] = true
	}
	return -1
}

func checkDesign(pr *problems, r *Recipe, d rawDesign) {
	r.Design = Design{Scheme: d.Scheme, Seed: d.Seed, Count: d.Count, Line: pr.line("design"),
		Composite: d.Composite, Trajectories: d.Trajectories, GridLevels: d.GridLevels}
	if d.Scheme == "" {
		pr.at("design", "[design] needs scheme = one of %s", strings.Join(SchemeNames(), ", "))
		return
	}
	if !Schemes[d.Scheme] {
		pr.at("design.scheme", "unknown design scheme %q: use one of %s", d.Scheme, strings.Join(SchemeNames(), ", "))
		return
	}
	if d.Steps != nil {
		switch s := *d.Steps; {
		case s < 2:
			pr.at("design.steps", "steps must be 2 or more (it is %d): remove the key to use the default of 3", s)
		case s > MaxSteps:
			pr.at("design.steps", "steps = %d is over the limit of %d: lower it", s, MaxSteps)
		default:
			r.Design.Steps = s
		}
	}
	if d.Count < 0 {
		pr.at("design.count", "count must be positive (it is %d)", d.Count)
	}
	checkSampling(pr, r, d)
	switch d.Scheme {
	case "factorial":
		if d.Points != nil || d.File != "" {
			pr.at("design", "points and file belong to scheme = \"table\"; remove them or change the scheme")
		}
		if r.Design.Steps == 0 {
			r.Design.Steps = 3
		}
	case "table":
		switch {
		case d.Points != nil && d.File != "":
			pr.at("design", "give the table either inline (points = [...]) or as a CSV file (file = \"...\"), not both")
		case d.Points != nil:
			r.Design.Points = inlinePoints(pr, r, d.Points)
		case d.File != "":
			path := d.File
			if !filepath.IsAbs(path) {
				path = filepath.Join(r.Dir, path)
			}
			pts, errs := readPointsCSV(path, r.Params)
			for _, e := range errs {
				pr.list = append(pr.list, e)
			}
			if errs == nil && len(pts) == 0 {
				pr.at("design.file", "the design table %s has no rows: the study would have no variant", d.File)
			}
			r.Design.Points = pts
		default:
			pr.at("design", "scheme = \"table\" needs points = [ {param = value, ...}, ... ] or file = \"points.csv\"")
		}
	}
	checkSize(pr, r)
}

func inlinePoints(pr *problems, r *Recipe, raws []map[string]any) []Point {
	if len(raws) == 0 {
		pr.at("design.points", "the design table is empty: the study would have no variant")
		return nil
	}
	if len(raws) > MaxVariants {
		pr.at("design.points", "the design table lists %d points, over the limit of %d variants a study may have: split it into several studies", len(raws), MaxVariants)
		return nil
	}
	var pts []Point
	for i, m := range raws {
		key := fmt.Sprintf("design.points[%d]", i)
		pt := Point{Values: make([]Value, len(r.Params)), Where: fmt.Sprintf("%s:%d", pr.file, pr.line(key))}
		have := make([]bool, len(r.Params))
		ok := true
		for k, v := range m {
			if k == "name" {
				s, isStr := v.(string)
				if !isStr || s == "" {
					pr.at(key, "point %d: name must be a non-empty string", i+1)
					ok = false
				}
				pt.Name = s
				continue
			}
			j := r.ParamIndex(k)
			if j < 0 {
				pr.at(key, "point %d names %q, which is not a parameter of the recipe", i+1, k)
				ok = false
				continue
			}
			val, err := toValue(v)
			if err != nil {
				pr.at(key, "point %d, %s: %v", i+1, k, err)
				ok = false
				continue
			}
			if good, why := r.Params[j].Check(val); !good {
				pr.at(key, "point %d: %s = %s %s", i+1, k, val, why)
				ok = false
			}
			pt.Values[j], have[j] = val, true
		}
		for j, h := range have {
			if !h && r.Params[j].Name != "" {
				pr.at(key, "point %d gives no value for parameter %q", i+1, r.Params[j].Name)
				ok = false
			}
		}
		if ok {
			pts = append(pts, pt)
		}
	}
	return pts
}

// toValue reads a parameter value written in the recipe: a number, which
// must be finite, or a word.
func toValue(v any) (Value, error) {
	switch x := v.(type) {
	case int64:
		return Num(float64(x)), nil
	case float64:
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return Value{}, fmt.Errorf("%s is not a finite number: write an ordinary number", tomlNumber(x))
		}
		return Num(x), nil
	case string:
		if x == "" {
			return Value{}, errors.New("empty word")
		}
		return Word(x), nil
	}
	return Value{}, fmt.Errorf("value %v is neither a number nor a word", v)
}

// tomlNumber writes x as a recipe would spell it: nan, inf and -inf in
// TOML's words.
func tomlNumber(x float64) string {
	switch {
	case math.IsNaN(x):
		return "nan"
	case math.IsInf(x, 1):
		return "inf"
	case math.IsInf(x, -1):
		return "-inf"
	}
	return strconv.FormatFloat(x, 'g', -1, 64)
}

func checkStages(pr *problems, r *Recipe, raws []rawStage) {
	if len(raws) == 0 {
		pr.at("", "the recipe declares no stage: add a [[stage]] table with name and run")
		return
	}
	seen := map[string]bool{}
	for i, rs := range raws {
		key := fmt.Sprintf("stage[%d]", i)
		s := Stage{Name: rs.Name, Command: rs.Run, Shell: rs.Shell, Retries: rs.Retries, Dir: rs.Dir, Env: rs.Env, Cores: 1, Line: pr.line(key)}
		switch {
		case rs.Name == "":
			pr.at(key, "stage %d has no name: add name = \"...\" (for example \"mesh\" or \"solve\")", i+1)
		case !identRE.MatchString(rs.Name):
			pr.at(key+".name", "stage name %q must start with a letter and use only letters, digits and _ (it names log files)", rs.Name)
		case seen[rs.Name]:
			pr.at(key+".name", "stage %q is declared twice", rs.Name)
		}
		seen[rs.Name] = true
		if rs.Cores != nil {
			s.Cores = *rs.Cores
			if s.Cores < 1 {
				pr.at(key+".cores", "stage %q: cores must be 1 or more (it is %d)", rs.Name, s.Cores)
			}
		}
		if rs.Retries < 0 {
			pr.at(key+".retries", "stage %q: retries cannot be negative", rs.Name)
		}
		if rs.Timeout != "" {
			d, err := time.ParseDuration(rs.Timeout)
			if err != nil || d <= 0 {
				pr.at(key+".timeout", "stage %q: timeout %q is not a positive duration; write it like \"90s\", \"45m\" or \"12h\"", rs.Name, rs.Timeout)
			}
			s.Timeout = d
		}
		if rs.Dir != "" && (filepath.IsAbs(rs.Dir) || strings.HasPrefix(filepath.Clean(rs.Dir), "..")) {
			pr.at(key+".dir", "stage %q: dir %q must be a subdirectory of the variant directory", rs.Name, rs.Dir)
		}
		for k := range rs.Env {
			if !envNameRE.MatchString(k) {
				pr.at(key+".env", "stage %q: environment variable name %q is not valid (letters, digits and _, not starting with a digit)", rs.Name, k)
			} else if strings.HasPrefix(k, EnvPrefix) {
				pr.at(key+".env", "stage %q: environment variable %q uses the reserved prefix %s", rs.Name, k, EnvPrefix)
			}
		}
		switch {
		case strings.TrimSpace(rs.Run) == "":
			pr.at(key, "stage %q has no command: add run = \"...\"", rs.Name)
		case rs.Shell:
			s.Argv = []string{"sh", "-c", rs.Run, "sh"}
		default:
			argv, err := SplitCommand(rs.Run)
			if err != nil {
				pr.at(key+".run", "stage %q: %v", rs.Name, err)
			}
			if strings.Contains(rs.Run, "{{") {
				pr.at(key+".run", "stage %q: commands are not templates; read parameter values from the environment (%sPARAM_<NAME>) or from a rendered file", rs.Name, EnvPrefix)
			}
			s.Argv = argv
		}
		if rs.Continue != "" {
			s.ContinueCommand = rs.Continue
			s.ContinueLine = pr.line(key + ".continue")
			if rs.Shell {
				s.ContinueArgv = []string{"sh", "-c", rs.Continue, "sh"}
			} else if argv, err := SplitCommand(rs.Continue); err != nil {
				pr.at(key+".continue", "stage %q: continue: %v", rs.Name, err)
			} else {
				s.ContinueArgv = argv
			}
		}
		checkSettle(pr, r, key, &s, rs.Settle)
		r.Stages = append(r.Stages, s)
	}
}

var envNameRE = regexp.MustCompile(`^[A-Za-z_][A-Za-z0-9_]*$`)
