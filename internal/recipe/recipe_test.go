package recipe

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// writeStudy makes a study directory with a template case and the given
// recipe text, and returns the recipe's path.
func writeStudy(t *testing.T, text string) string {
	t.Helper()
	dir := t.TempDir()
	if err := os.MkdirAll(filepath.Join(dir, "template"), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "template", "case.txt"), []byte("r {{.r}}\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(dir, "template", "run.sh"), []byte("#!/bin/sh\n"), 0o755); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(dir, FileName)
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

const good = `name = "demo"
[case]
base = "template"
render = ["case.txt"]

[[param]]
name = "r"
min = 0
max = 0.4
unit = "m"
steps = 3

[[param]]
name = "angle"
levels = [0, 5.5, 10]

[[param]]
name = "shape"
levels = ["round", "square"]

[design]
scheme = "factorial"

[[stage]]
name = "mesh"
run = "./run.sh --stage 'mesh one'"
cores = 2
timeout = "90s"
retries = 2
dir = "."

[[stage]]
name = "solve"
run = "echo $(not expanded)"
`

// Ensure that a complete recipe reads back as written.
func TestLoadGood(t *testing.T) {
	r, err := Load(writeStudy(t, good))
	if err != nil {
		t.Fatal(err)
	}
	if r.Name != "demo" || len(r.Params) != 3 || len(r.Stages) != 2 {
		t.Fatalf("got %+v", r)
	}
	p := r.Params[0]
	if p.Kind != Range || p.Min != 0 || p.Max != 0.4 || p.Steps != 3 || p.Unit != "m" {
		t.Errorf("range param: %+v", p)
	}
	if r.Params[1].Kind != Levels || r.Params[2].Kind != Choice {
		t.Errorf("kinds: %v %v", r.Params[1].Kind, r.Params[2].Kind)
	}
	s := r.Stages[0]
	if got := strings.Join(s.Argv, "|"); got != "./run.sh|--stage|mesh one" {
		t.Errorf("argv %q", got)
	}
	if s.Cores != 2 || s.Timeout.Seconds() != 90 || s.Retries != 2 {
		t.Errorf("stage: %+v", s)
	}
	if got := strings.Join(r.Stages[1].Argv, "|"); got != "echo|$(not|expanded)" {
		t.Errorf("argv must not be shell-expanded: %q", got)
	}
	if r.Stages[1].Cores != 1 {
		t.Errorf("default cores = %d, want 1", r.Stages[1].Cores)
	}
	if err := r.CheckCommands(); err != nil {
		t.Errorf("CheckCommands: %v", err)
	}
}

// Ensure that every recipe mistake is refused with its line and advice.
func TestLoadBad(t *testing.T) {
	tail := "\n[design]\nscheme = \"factorial\"\n[[stage]]\nname = \"s\"\nrun = \"true\"\n"
	head := "[case]\nbase = \"template\"\n"
	param := "[[param]]\nname = \"r\"\nmin = 0\nmax = 1\n"
	cases := []struct {
		name, text string
		line       int
		want       string
	}{
		{"unknown key", head + "[[param]]\nname = \"r\"\nmin = 0\nmax = 1\nstesp = 3\n" + tail, 7, `unknown key "param.stesp"`},
		{"min above max", head + "[[param]]\nname = \"r\"\nmin = 5\nmax = 2\n" + tail, 6, "min (5) above max (2): swap them"},
		{"no template", "[case]\nbase = \"nowhere\"\n" + param + tail, 2, `base case directory "nowhere" does not exist`},
		{"no param", head + tail, 0, "declares no parameter"},
		{"empty table", head + param + "\n[design]\nscheme = \"table\"\npoints = []\n[[stage]]\nname = \"s\"\nrun = \"true\"\n", 10, "design table is empty"},
		{"unknown method", head + param + "\n[design]\nscheme = \"guess\"\n[[stage]]\nname = \"s\"\nrun = \"true\"\n", 9, `unknown design scheme "guess"`},
		{"two kinds", head + "[[param]]\nname = \"r\"\nmin = 0\nmax = 1\nlevels = [1]\n" + tail, 3, "either min and max (a range) or levels = [...] (numbers or words), not both or neither"},
		{"mixed levels", head + "[[param]]\nname = \"r\"\nlevels = [1, \"two\"]\n" + tail, 5, `parameter "r" mixes numbers and words in its levels ("two")`},
		{"empty levels", head + "[[param]]\nname = \"r\"\nlevels = []\n" + tail, 5, `parameter "r" has an empty levels list`},
		{"bad better", head + param + tail + "[[quantity]]\nname = \"drag\"\nfiles = \"f\"\nvalue = 2\nbetter = \"less\"\n", 17, `better must be "lower" or "higher" (got "less")`},
		{"bad name", head + "[[param]]\nname = \"1r\"\nmin = 0\nmax = 1\n" + tail, 4, "must start with a letter"},
		{"duplicate name", head + param + "[[param]]\nname = \"R\"\nlevels = [1]\n" + tail, 8, "declared twice"},
		{"bad timeout", head + param + "\n[design]\nscheme = \"factorial\"\n[[stage]]\nname = \"s\"\nrun = \"true\"\ntimeout = \"ten minutes\"\n", 13, "not a positive duration"},
		{"no run", head + param + "\n[design]\nscheme = \"factorial\"\n[[stage]]\nname = \"s\"\n", 10, `stage "s" has no command`},
		{"unclosed quote", head + param + "\n[design]\nscheme = \"factorial\"\n[[stage]]\nname = \"s\"\nrun = \"echo 'x\"\n", 12, "unclosed single quote"},
		{"template in command", head + param + "\n[design]\nscheme = \"factorial\"\n[[stage]]\nname = \"s\"\nrun = \"solve {{.r}}\"\n", 12, "commands are not templates"},
		{"syntax", head + "[[param]\n", 3, "not valid TOML"},
		{"wrong type", head + "[[param]]\nname = 3\n" + tail, 4, `key "name" must be text in quotes, not an integer`},
		{"point outside range", head + param + "\n[design]\nscheme = \"table\"\npoints = [\n {r = 0.5},\n {r = 7},\n]\n[[stage]]\nname = \"s\"\nrun = \"true\"\n", 12, "r = 7 lies outside the range [0, 1]"},
		{"point unknown param", head + param + "\n[design]\nscheme = \"table\"\npoints = [{q = 1}]\n[[stage]]\nname = \"s\"\nrun = \"true\"\n", 10, `"q", which is not a parameter`},
		{"render escapes", "[case]\nbase = \"template\"\nrender = [\"../x\"]\n" + param + tail, 3, "stay inside it"},
		{"reserved env", head + param + "\n[design]\nscheme = \"factorial\"\n[[stage]]\nname = \"s\"\nrun = \"true\"\nenv = { SWEEP_X = \"1\" }\n", 13, "reserved prefix"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := Load(writeStudy(t, c.text))
			if err == nil {
				t.Fatal("accepted a bad recipe")
			}
			if !errors.Is(err, ErrInvalid) {
				t.Errorf("error does not match ErrInvalid: %v", err)
			}
			msg := err.Error()
			if !strings.Contains(msg, c.want) {
				t.Errorf("message %q does not say %q", msg, c.want)
			}
			var es Errors
			if !errors.As(err, &es) || len(es) == 0 {
				t.Fatalf("not a list of located errors: %T", err)
			}
			if es[0].File != FileName {
				t.Errorf("file %q, want %q", es[0].File, FileName)
			}
			if c.line > 0 && es[0].Line != c.line {
				t.Errorf("line %d, want %d (%s)", es[0].Line, c.line, msg)
			}
		})
	}
}

// Ensure that a missing program is refused before anything runs.
func TestCheckCommands(t *testing.T) {
	text := strings.Replace(good, `run = "echo $(not expanded)"`, `run = "no-such-solver-xyz -i case"`, 1)
	text = strings.Replace(text, `run = "./run.sh --stage 'mesh one'"`, `run = "./missing.sh"`, 1)
	r, err := Load(writeStudy(t, text))
	if err != nil {
		t.Fatal(err)
	}
	err = r.CheckCommands()
	if err == nil {
		t.Fatal("missing programs accepted")
	}
	for _, want := range []string{`program "./missing.sh" not found`, `program "no-such-solver-xyz" is not on PATH`, "study.toml:24:", "study.toml:32:"} {
		if !strings.Contains(err.Error(), want) {
			t.Errorf("%q does not say %q", err, want)
		}
	}
}

// Ensure that unit coordinates map onto each kind of parameter as
// documented, including the factorial's j/(n-1) levels.
func TestParamAt(t *testing.T) {
	rg := Param{Kind: Range, Min: 0.1, Max: 0.4}
	if got := rg.At(1.0 / 3); got.Num != 0.2 {
		t.Errorf("range at 1/3 = %v, want 0.2 (tidied)", got)
	}
	lg := Param{Kind: Range, Min: 1, Max: 100, Log: true}
	if got := lg.At(0.5); got.Num != 10 {
		t.Errorf("log range at 0.5 = %v, want 10", got)
	}
	lv := Param{Kind: Levels, Values: []float64{1, 2, 4, 8}}
	for j := 0; j < 4; j++ {
		if got := lv.At(float64(j) / 3); got.Num != lv.Values[j] {
			t.Errorf("level %d: got %v", j, got)
		}
	}
	ch := Param{Kind: Choice, Choices: []string{"a", "b", "c"}}
	if got := ch.At(0.5); got.Text != "b" {
		t.Errorf("choice at 0.5 = %v", got)
	}
	if got := ch.At(1.7); got.Text != "c" {
		t.Errorf("choice beyond 1 = %v, want clamped to c", got)
	}
}

// Ensure that commands are split like a person reads them and that no
// shell syntax is interpreted.
func TestSplitCommand(t *testing.T) {
	cases := map[string]string{
		`solver -case  "my case"`:      "solver|-case|my case",
		`a 'b c' d\ e`:                 "a|b c|d e",
		`run "x\"y" 'it''s'`:           `run|x"y|its`,
		"x; rm -rf / `y` $(z) | w > v": "x;|rm|-rf|/|`y`|$(z)|||w|>|v",
	}
	for in, want := range cases {
		got, err := SplitCommand(in)
		if err != nil {
			t.Errorf("%q: %v", in, err)
			continue
		}
		if strings.Join(got, "|") != want {
			t.Errorf("%q -> %q, want %q", in, strings.Join(got, "|"), want)
		}
	}
	for _, bad := range []string{"", "   ", `a "b`, `a 'b`, `a \`} {
		if _, err := SplitCommand(bad); err == nil {
			t.Errorf("%q accepted", bad)
		}
	}
}

// Ensure that a CSV design table is read and checked with its own lines.
func TestTableCSV(t *testing.T) {
	text := strings.Replace(good, `scheme = "factorial"`, `scheme = "table"
file = "points.csv"`, 1)
	path := writeStudy(t, text)
	csv := "name,r,angle,shape\nbase,0.1,0,round\n# a comment\n,0.2,10,square\n"
	os.WriteFile(filepath.Join(filepath.Dir(path), "points.csv"), []byte(csv), 0o644)
	r, err := Load(path)
	if err != nil {
		t.Fatal(err)
	}
	if len(r.Design.Points) != 2 || r.Design.Points[0].Name != "base" || r.Design.Points[1].Values[2].Text != "square" {
		t.Fatalf("points: %+v", r.Design.Points)
	}
	os.WriteFile(filepath.Join(filepath.Dir(path), "points.csv"), []byte("r,angle,shape\n0.1,0,round\n0.2,3,oval\n"), 0o644)
	_, err = Load(path)
	if err == nil || !strings.Contains(err.Error(), "points.csv:3: angle = 3 is not one of the parameter's values") ||
		!strings.Contains(err.Error(), "shape = oval is not one of the parameter's choices") {
		t.Errorf("bad table: %v", err)
	}
}

func FuzzSplitCommand(f *testing.F) {
	for _, s := range []string{`a "b c" 'd'`, `x\ y`, `"`, `'`, "\\"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		args, err := SplitCommand(s)
		if err == nil && len(args) == 0 {
			t.Fatalf("%q: no error and no arguments", s)
		}
	})
}

// Ensure that every key of the earlier recipe vocabulary is refused, at
// its line, with the message that names its replacement, and that the
// recipe is not read with the old key taken as the new one.
func TestLoadRenamedKeys(t *testing.T) {
	head := "[case]\nbase = \"template\"\n"
	param := "[[param]]\nname = \"r\"\nmin = 0\nmax = 1\n"
	design := "[design]\nscheme = \"factorial\"\n"
	stage := "[[stage]]\nname = \"s\"\nrun = \"true\"\n"
	quantity := "[[quantity]]\nname = \"drag\"\nfiles = \"f\"\nvalue = 2\n"
	cases := []struct {
		name, text string
		want       string
	}{
		{"template", "[case]\ntemplate = \"template\"\n" + param + design + stage,
			`study.toml:2: key "template" is now "base": write base = "DIR", the base case directory (relative to the recipe)`},
		{"copy", head + "copy = [\"*.dat\"]\n" + param + design + stage,
			`study.toml:3: key "copy" is now "private": write private = ["PATTERN", ...], the files each variant gets its own copy of`},
		{"values", head + "[[param]]\nname = \"r\"\nvalues = [1, 2]\n" + design + stage,
			`study.toml:5: key "values" is now "levels": write levels = [...] (numbers, or words in quotes)`},
		{"choices", head + "[[param]]\nname = \"r\"\nchoices = [\"a\", \"b\"]\n" + design + stage,
			`study.toml:5: key "choices" is now "levels": write levels = ["word", ...]`},
		{"method", head + param + "[design]\nmethod = \"factorial\"\n" + stage,
			`study.toml:8: key "method" is now "scheme": write scheme = "factorial" (or another scheme)`},
		{"morris levels", head + param + "[design]\nscheme = \"morris\"\ntrajectories = 4\nlevels = 4\n" + stage,
			`study.toml:10: key "levels" of [design] is now "grid_levels": write grid_levels = N, the levels of the Morris grid`},
		{"goal", head + param + design + quantity + "goal = \"minimize\"\n" + stage,
			`study.toml:13: key "goal" is now "better": write better = "lower" (was "minimize") or better = "higher" (was "maximize")`},
		{"early_stop", head + param + design + quantity + stage + "[stage.early_stop]\nquantities = [\"drag\"]\nevery = \"2s\"\n",
			`study.toml:16: table [stage.early_stop] is now [stage.settle] (the same keys inside): rename the table header`},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := Load(writeStudy(t, c.text))
			if err == nil {
				t.Fatal("an old key was accepted")
			}
			if !errors.Is(err, ErrInvalid) {
				t.Errorf("error does not match ErrInvalid: %v", err)
			}
			if err.Error() != c.want {
				t.Errorf("message\n %q\nwant\n %q", err.Error(), c.want)
			}
		})
	}
}

// Ensure that levels take numbers or words with one key, and that the
// better key sets the quantity's direction.
func TestLoadLevelsAndBetter(t *testing.T) {
	text := "[case]\nbase = \"template\"\n[[param]]\nname = \"n\"\nlevels = [2, 4.5, 8]\n[[param]]\nname = \"w\"\nlevels = [\"a\", \"b\"]\n" +
		"[design]\nscheme = \"factorial\"\n[[quantity]]\nname = \"lift\"\nfiles = \"f\"\nvalue = 3\n[[quantity]]\nname = \"down\"\nfiles = \"f\"\nvalue = 2\nbetter = \"higher\"\n" +
		"[[stage]]\nname = \"s\"\nrun = \"true\"\n"
	r, err := Load(writeStudy(t, text))
	if err != nil {
		t.Fatal(err)
	}
	if p := r.Params[0]; p.Kind != Levels || len(p.Values) != 3 || p.Values[1] != 4.5 {
		t.Errorf("numeric levels: %+v", p)
	}
	if p := r.Params[1]; p.Kind != Choice || strings.Join(p.Choices, ",") != "a,b" {
		t.Errorf("word levels: %+v", p)
	}
	q, err := r.Objective("")
	if err != nil || q.Name != "down" || q.Direction != Higher || !q.Better(2, 1) || q.Better(1, 2) || q.LowerIsBetter() {
		t.Errorf("objective %+v, %v: want down, higher is better", q, err)
	}
	if l := r.Quantity("lift"); l.Direction != None || !l.Better(1, 2) {
		t.Errorf("lift: %+v", l)
	}
}
