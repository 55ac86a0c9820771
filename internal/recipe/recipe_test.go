package recipe

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/sweep-cfd/sweep/internal/studytest"
)

// writeStudy makes a study directory with a template case and the given
// recipe text, and returns the recipe's path.
func writeStudy(t *testing.T, text string) string {
	t.Helper()
	dir := studytest.Write(t, "", text, map[string]string{"case.txt": "r {{.r}}\n", "run.sh": "#!/bin/sh\n"})
	return filepath.Join(dir, FileName)
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

// Ensure that every recipe mistake is refused with its line, what is
// wrong and what to do, word for word: the whole text of the first error
// is compared, so a change of wording is a change of this table.
func TestLoadBad(t *testing.T) {
	head := "[case]\nbase = \"template\"\n"                // lines 1-2
	param := "[[param]]\nname = \"r\"\nmin = 0\nmax = 1\n" // lines 3-6 after head
	factorial := "[design]\nscheme = \"factorial\"\n"      // lines 7-8 after head and param
	stage := "[[stage]]\nname = \"s\"\nrun = \"true\"\n"   // three lines
	tail := "\n" + factorial + stage                       // a blank line first
	table := func(points string) string {
		return head + param + "[design]\nscheme = \"table\"\n" + points + "\n" + stage
	}
	quantity := func(extra string) string {
		return head + param + factorial + stage + "[[quantity]]\nname = \"drag\"\nfiles = \"f\"\nvalue = 2\n" + extra // extra from line 16
	}
	params := func(n int) string {
		var b strings.Builder
		for i := range n {
			fmt.Fprintf(&b, "[[param]]\nname = \"p%d\"\nlevels = [1, 2]\n", i)
		}
		return b.String()
	}
	many := func(n int, item string) string { return strings.TrimSuffix(strings.Repeat(item+", ", n), ", ") }
	rows := func(n int) string { return "r\n" + strings.Repeat("0.5\n", n) }
	cases := []struct {
		name  string
		text  string
		files map[string]string // further files of the study directory
		want  string            // the first error, whole
	}{
		// Syntax and vocabulary.
		{"syntax", head + "[[param]\n", nil,
			`study.toml:3: not valid TOML: expected ']]' to close array table name`},
		{"unknown key", head + param + "stesp = 3\n" + tail, nil,
			`study.toml:7: unknown key "param.stesp": check its spelling and the table it is in (see ` + "`sweep new`" + ` for a commented recipe)`},
		{"wrong type", head + "[[param]]\nname = 3\n" + tail, nil,
			`study.toml:4: key "name" must be text in quotes, not an integer`},

		// The base case.
		{"no base", "[case]\nbase = \"nowhere\"\n" + param + tail, nil,
			`study.toml:2: base case directory "nowhere" does not exist; create it or correct the path (relative to the recipe)`},
		{"base is the study", "[case]\nbase = \".\"\n" + param + tail, nil,
			`study.toml:2: base case directory "." is the study directory itself, so every variant would get a copy of the whole study, its variants included: move the case into a subdirectory (such as "template") and point base at it`},
		{"base holds the study", "[case]\nbase = \"..\"\n" + param + tail, nil,
			`study.toml:2: base case directory ".." contains the study directory, so every variant would get a copy of the whole study, its variants included: point base at a directory that holds only the case`},
		{"base in variants", "[case]\nbase = \"variants/v001\"\n" + param + tail, map[string]string{"variants/v001/case.txt": "r 0.5\n"},
			`study.toml:2: base case directory "variants/v001" lies in the study's variants/ directory, which the program writes (every new variant would copy the variants before it): copy the case to a directory of its own (such as "template") and point base at it`},
		{"base in the database", "[case]\nbase = \".sweep/case\"\n" + param + tail, map[string]string{".sweep/case/case.txt": "r\n"},
			`study.toml:2: base case directory ".sweep/case" lies in the study's .sweep/ directory, which holds the study database: copy the case to a directory of its own (such as "template") and point base at it`},
		{"render escapes", "[case]\nbase = \"template\"\nrender = [\"../x\"]\n" + param + tail, nil,
			`study.toml:3: render pattern "../x": must be relative to the base case directory and stay inside it`},

		// Parameters.
		{"no param", head + tail, nil,
			`study.toml: the recipe declares no parameter: add at least one [[param]] table`},
		{"bad name", head + "[[param]]\nname = \"1r\"\nmin = 0\nmax = 1\n" + tail, nil,
			`study.toml:4: parameter name "1r" must start with a letter and use only letters, digits and _ (it becomes a template field and an environment variable)`},
		{"duplicate name", head + param + "[[param]]\nname = \"R\"\nlevels = [1]\n" + tail, nil,
			`study.toml:8: parameter "R" is declared twice (first as parameter 1; names differing only in case clash as environment variables)`},
		{"two kinds", head + param + "levels = [1]\n" + tail, nil,
			`study.toml:3: parameter "r" must have either min and max (a range) or levels = [...] (numbers or words), not both or neither`},
		{"min above max", head + "[[param]]\nname = \"r\"\nmin = 5\nmax = 2\n" + tail, nil,
			`study.toml:6: parameter "r" has min (5) above max (2): swap them`},
		{"min equals max", head + "[[param]]\nname = \"r\"\nmin = 0.5\nmax = 0.5\n" + tail, nil,
			`study.toml:6: parameter "r" has min = max = 0.5, a range of no width: for a fixed value write levels = [0.5] instead of min and max, or widen the range`},
		{"min nan", head + "[[param]]\nname = \"r\"\nmin = nan\nmax = 1\n" + tail, nil,
			`study.toml:5: parameter "r": min = nan is not a finite number: write the range's lower end as an ordinary number`},
		{"max inf", head + "[[param]]\nname = \"r\"\nmin = 0\nmax = inf\n" + tail, nil,
			`study.toml:6: parameter "r": max = inf is not a finite number: write the range's upper end as an ordinary number`},
		{"log from zero", head + param + "log = true\n" + tail, nil,
			`study.toml:7: parameter "r" is on a log scale, so min must be above 0 (it is 0)`},
		{"log on words", head + "[[param]]\nname = \"r\"\nlevels = [\"a\", \"b\"]\nlog = true\n" + tail, nil,
			`study.toml:6: parameter "r": log applies to numbers (a min/max range or numeric levels); remove it from this list of words`},
		{"log on levels from zero", head + "[[param]]\nname = \"r\"\nlevels = [0, 10]\nlog = true\n" + tail, nil,
			`study.toml:6: parameter "r" is on a log scale, so its levels must be above 0 (the smallest is 0)`},
		{"steps zero", head + param + "steps = 0\n" + tail, nil,
			`study.toml:7: parameter "r": steps must be 2 or more (it is 0): remove the key to use the design's default`},
		{"steps too many", head + param + "steps = 10001\n" + tail, nil,
			`study.toml:7: parameter "r": steps = 10001 is over the limit of 10000: lower it`},
		{"steps on levels", head + "[[param]]\nname = \"r\"\nlevels = [1, 2]\nsteps = 3\n" + tail, nil,
			`study.toml:6: steps applies only to min/max ranges (levels are listed); remove it from parameter "r"`},
		{"mixed levels", head + "[[param]]\nname = \"r\"\nlevels = [1, \"two\"]\n" + tail, nil,
			`study.toml:5: parameter "r" mixes numbers and words in its levels ("two"); give all levels as numbers or all as words in quotes`},
		{"empty levels", head + "[[param]]\nname = \"r\"\nlevels = []\n" + tail, nil,
			`study.toml:5: parameter "r" has an empty levels list: list its levels, such as levels = [1, 2, 4] or levels = ["round", "square"]`},
		{"too many levels", head + "[[param]]\nname = \"r\"\nlevels = [" + many(10001, "1") + "]\n" + tail, nil,
			`study.toml:5: parameter "r" lists 10001 levels, over the limit of 10000: for many levels use a range (min, max) with steps`},
		{"too many params", head + params(1001) + tail, nil,
			`study.toml:3003: the recipe declares 1001 parameters, over the limit of 1000: vary fewer and keep the others fixed in the base case`},

		// Designs.
		{"unknown scheme", head + param + "\n[design]\nscheme = \"guess\"\n" + stage, nil,
			`study.toml:9: unknown design scheme "guess": use one of box_behnken, composite, factorial, latin, morris, one_at_a_time, sobol, table`},
		{"design steps zero", head + param + "[design]\nscheme = \"factorial\"\nsteps = 0\n" + stage, nil,
			`study.toml:9: steps must be 2 or more (it is 0): remove the key to use the default of 3`},
		{"steps on latin", head + param + "[design]\nscheme = \"latin\"\ncount = 10\nsteps = 3\n" + stage, nil,
			`study.toml:10: steps does not apply to scheme = "latin"; remove it`},
		{"count on factorial", head + param + "[design]\nscheme = \"factorial\"\ncount = 10\n" + stage, nil,
			`study.toml:9: count does not apply to scheme = "factorial"; remove it`},
		{"huge factorial", head + params(17) + factorial + stage, nil,
			`study.toml:54: the full factorial makes 131072 points (the product of the parameters' levels), over the limit of 100000 variants a study may have: lower steps or shorten the levels lists, or use a sampling design such as latin or sobol`},
		{"huge latin", head + param + "[design]\nscheme = \"latin\"\ncount = 1000000000\n" + stage, nil,
			`study.toml:9: count = 1000000000 is over the 2000 points a latin design may have (its maximin search grows with the square of the count: 2000 points take under a minute): lower count, or use scheme = "sobol", which allows up to 100000`},
		{"large latin", head + param + "[design]\nscheme = \"latin\"\ncount = 2001\n" + stage, nil,
			`study.toml:9: count = 2001 is over the 2000 points a latin design may have (its maximin search grows with the square of the count: 2000 points take under a minute): lower count, or use scheme = "sobol", which allows up to 100000`},
		{"huge sobol", head + param + "[design]\nscheme = \"sobol\"\ncount = 100001\n" + stage, nil,
			`study.toml:9: count = 100001 is over the limit of 100000 variants a study may have: lower count`},
		{"sobol dimensions", head + params(22) + "[design]\nscheme = \"sobol\"\ncount = 100\n" + stage, nil,
			`study.toml:69: a sobol design takes at most 21 parameters (the recipe has 22): use scheme = "latin", or vary fewer parameters`},
		{"huge morris", head + param + "[design]\nscheme = \"morris\"\ntrajectories = 50001\n" + stage, nil,
			`study.toml:9: trajectories = 50001 of 2 points each (parameters + 1) make 100002 points, over the limit of 100000 variants a study may have: lower trajectories`},
		{"grid levels", head + param + "[design]\nscheme = \"morris\"\ntrajectories = 4\ngrid_levels = 1002\n" + stage, nil,
			`study.toml:10: grid_levels = 1002 is over the limit of 1000: lower it (4 to 8 levels are usual)`},
		{"centre", head + params(3) + "[design]\nscheme = \"box_behnken\"\ncentre = 1001\n" + stage, nil,
			`study.toml:14: centre = 1001 is over the limit of 1000: lower it (repeated centre points of a deterministic solver are planned once)`},
		{"baseline nan", head + param + "[design]\nscheme = \"one_at_a_time\"\nbaseline = {r = nan}\n" + stage, nil,
			`study.toml:9: baseline r: nan is not a finite number: write an ordinary number`},
		{"too many constraints", head + param + "[design]\nscheme = \"latin\"\ncount = 10\nconstraints = [" + many(1001, `"r < 2"`) + "]\n" + stage, nil,
			`study.toml:10: [design] lists 1001 constraints, over the limit of 1000: combine them with and`},

		// Design tables.
		{"empty table", table("points = []"), nil,
			`study.toml:9: the design table is empty: the study would have no variant`},
		{"point outside range", table("points = [\n {r = 0.5},\n {r = 7},\n]"), nil,
			`study.toml:11: point 2: r = 7 lies outside the range [0, 1]`},
		{"point unknown param", table("points = [{q = 1}]"), nil,
			`study.toml:9: point 1 names "q", which is not a parameter of the recipe`},
		{"point nan", table("points = [{r = 0.5}, {r = nan}]"), nil,
			`study.toml:9: point 2, r: nan is not a finite number: write an ordinary number`},
		{"point inf", table("points = [{r = -inf}]"), nil,
			`study.toml:9: point 1, r: -inf is not a finite number: write an ordinary number`},
		{"too many points", table("points = [" + many(100001, "{r = 0.5}") + "]"), nil,
			`study.toml:9: the design table lists 100001 points, over the limit of 100000 variants a study may have: split it into several studies`},
		{"csv nan", table(`file = "points.csv"`), map[string]string{"points.csv": "r\n0.5\nNaN\n"},
			`points.csv:3: r = "NaN" is not a finite number: write an ordinary number`},
		{"csv bad quote", table(`file = "points.csv"`), map[string]string{"points.csv": "r,name\n\"3\"x,4\n"},
			`points.csv:2: not valid CSV at column 3: extraneous or missing " in quoted-field: put a cell that holds a comma or a quote in double quotes, each inner quote doubled`},
		{"csv short row", table(`file = "points.csv"`), map[string]string{"points.csv": "r,name\n0.5,a\n0.7\n"},
			`points.csv:3: the row has 1 cell and the header 2: give every row one cell per header column`},
		{"csv too many rows", table(`file = "points.csv"`), map[string]string{"points.csv": rows(100001)},
			`points.csv:100002: the design table has more than 100000 points, the limit of variants a study may have: split it into several studies`},

		// Quantities.
		{"bad better", quantity("better = \"less\"\n"), nil,
			`study.toml:16: quantity "drag": better must be "lower" or "higher" (got "less"): it says which values of the quantity are better`},
		{"negative tolerance", quantity("tolerance = -0.1\n"), nil,
			`study.toml:16: quantity "drag": tolerance = -0.1 must be a finite number of 0 or more: the largest 95 % half-width accepted, in the quantity's unit`},
		{"nan relative tolerance", quantity("relative_tolerance = nan\n"), nil,
			`study.toml:16: quantity "drag": relative_tolerance = nan must be a finite number of 0 or more: the largest 95 % half-width accepted, as a fraction of the mean (0.01 is 1 %)`},
		{"nan start", quantity("start = nan\n"), nil,
			`study.toml:16: quantity "drag": start = nan is not a time: give the time from which to average, or remove start to detect the transient`},
		{"zero density", quantity("scale = { density = 0, speed = 1, reference = 1 }\n"), nil,
			`study.toml:16: quantity "drag": scale density = 0 must be a finite number above 0: the fluid's density`},
		{"negative factor", quantity("scale = { factor = -1 }\n"), nil,
			`study.toml:16: quantity "drag": scale factor = -1 must be a finite number above 0: the number the value is multiplied by; to flip its sign, give the value's term a factor: value = {column = 3, factor = -1}`},
		{"zero term factor", head + param + factorial + stage + "[[quantity]]\nname = \"drag\"\nfiles = \"f\"\nvalue = [{column = 2, factor = 0}]\n", nil,
			`study.toml:15: quantity "drag": value 1: factor 0 would make the term always zero: remove the term, or give a factor other than 0`},

		// Stages.
		{"no run", head + param + "\n" + factorial + "[[stage]]\nname = \"s\"\n", nil,
			`study.toml:10: stage "s" has no command: add run = "..."`},
		{"bad timeout", head + param + "\n" + factorial + stage + "timeout = \"ten minutes\"\n", nil,
			`study.toml:13: stage "s": timeout "ten minutes" is not a positive duration; write it like "90s", "45m" or "12h"`},
		{"unclosed quote", head + param + "\n" + factorial + "[[stage]]\nname = \"s\"\nrun = \"echo 'x\"\n", nil,
			`study.toml:12: stage "s": command "echo 'x" has an unclosed single quote`},
		{"template in command", head + param + "\n" + factorial + "[[stage]]\nname = \"s\"\nrun = \"solve {{.r}}\"\n", nil,
			`study.toml:12: stage "s": commands are not templates; read parameter values from the environment (SWEEP_PARAM_<NAME>) or from a rendered file`},
		{"reserved env", head + param + "\n" + factorial + stage + "env = { SWEEP_X = \"1\" }\n", nil,
			`study.toml:13: stage "s": environment variable "SWEEP_X" uses the reserved prefix SWEEP_`},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			path := writeStudy(t, c.text)
			for name, text := range c.files {
				p := filepath.Join(filepath.Dir(path), filepath.FromSlash(name))
				if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
					t.Fatal(err)
				}
				if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
					t.Fatal(err)
				}
			}
			_, err := Load(path)
			if err == nil {
				t.Fatal("accepted a bad recipe")
			}
			if !errors.Is(err, ErrInvalid) {
				t.Errorf("error does not match ErrInvalid: %v", err)
			}
			var es Errors
			if !errors.As(err, &es) || len(es) == 0 {
				t.Fatalf("not a list of located errors: %T %v", err, err)
			}
			if got := es[0].Error(); got != c.want {
				t.Errorf("first error\n %s\nwant\n %s", got, c.want)
			}
		})
	}
}

// Ensure that a missing program is refused before anything runs, the
// program of continue as well as that of run, each at its own line.
func TestCheckCommands(t *testing.T) {
	text := strings.Replace(good, `run = "echo $(not expanded)"`, `run = "no-such-solver-xyz -i case"
continue = "no-such-solver-xyz -restart"`, 1)
	text = strings.Replace(text, `run = "./run.sh --stage 'mesh one'"`, `run = "./missing.sh"
continue = "./resume.sh"`, 1)
	path := writeStudy(t, text)
	r, err := Load(path)
	if err != nil {
		t.Fatal(err)
	}
	err = r.CheckCommands()
	if err == nil {
		t.Fatal("missing programs accepted")
	}
	base := filepath.Join(filepath.Dir(path), "template")
	want := strings.Join([]string{
		`study.toml:24: stage "mesh": program "./missing.sh" not found (looked for ` + filepath.Join(base, "missing.sh") + `); add it to the base case or correct run`,
		`study.toml:27: stage "mesh": continue: program "./resume.sh" not found (looked for ` + filepath.Join(base, "resume.sh") + `); add it to the base case or correct continue`,
		`study.toml:33: stage "solve": program "no-such-solver-xyz" is not on PATH; install it, or give its path`,
		`study.toml:36: stage "solve": continue: program "no-such-solver-xyz" is not on PATH; install it, or give its path`,
	}, "\n")
	if err.Error() != want {
		t.Errorf("got\n%s\nwant\n%s", err, want)
	}
	var es Errors
	if !errors.As(err, &es) || !errors.Is(err, ErrInvalid) {
		t.Errorf("not a list of recipe errors: %T", err)
	}

	// A continue command that is not executable is refused like run's.
	if err := os.WriteFile(filepath.Join(base, "missing.sh"), []byte("#!/bin/sh\n"), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(base, "resume.sh"), []byte("#!/bin/sh\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	r.Stages = r.Stages[:1]
	want = `study.toml:27: stage "mesh": continue: ` + filepath.Join(base, "resume.sh") + ` is not an executable file; chmod +x it, or run it through its interpreter (for example continue = "sh ./resume.sh")`
	if err := r.CheckCommands(); err == nil || err.Error() != want {
		t.Errorf("got\n%v\nwant\n%s", err, want)
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
	// Tidying to 12 digits must not leave a range whose ends have more.
	fine := Param{Kind: Range, Min: 0.1234567890123, Max: 3.0000000000007}
	for _, p := range []Param{fine, {Kind: Range, Min: fine.Min, Max: fine.Max, Log: true}} {
		for _, u := range []float64{0, 1} {
			if v := p.At(u); v.Num < p.Min || v.Num > p.Max {
				t.Errorf("log %v: at %g: %v lies outside [%v, %v]", p.Log, u, v, p.Min, p.Max)
			}
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

// Ensure that statistics = [...] on a quantity declares one quantity per
// statistic of its cycles, named quantity_statistic, that a Strouhal
// number needs its reference length and speed, and that mistakes are
// refused at their line.
func TestLoadStatistics(t *testing.T) {
	head := "[case]\nbase = \"template\"\n[[param]]\nname = \"r\"\nmin = 0\nmax = 1\n[design]\nscheme = \"factorial\"\n[[stage]]\nname = \"s\"\nrun = \"true\"\n"
	good := head + "[[quantity]]\nname = \"lift\"\nfiles = \"f\"\nvalue = 3\ntolerance = 0.01\nstatistics = [\"max\", \"rms\", \"strouhal\"]\nstrouhal = { length = 0.1, speed = 1.5 }\n"
	r, err := Load(writeStudy(t, good))
	if err != nil {
		t.Fatal(err)
	}
	var names []string
	for _, q := range r.Quantities {
		names = append(names, q.Name)
	}
	if strings.Join(names, ",") != "lift,lift_max,lift_rms,lift_strouhal" {
		t.Fatalf("quantities %v", names)
	}
	st := r.Quantity("lift_strouhal")
	if !st.Derived() || st.From != "lift" || st.Stat != "strouhal" || st.Strouhal.Length != 0.1 || st.Strouhal.Speed != 1.5 {
		t.Errorf("strouhal quantity %+v", st)
	}
	if mx := r.Quantity("lift_max"); mx.Opts.Abs != 0.01 {
		t.Errorf("the maximum keeps its quantity's absolute tolerance (same unit): %+v", mx.Opts)
	}
	for _, c := range []struct{ text, want string }{
		{"statistics = [\"peak\"]\n", `study.toml:16: quantity "lift": unknown statistic "peak": use max, min, amplitude, rms, frequency, strouhal`},
		{"statistics = [\"strouhal\"]\n", `study.toml:16: quantity "lift" asks for the strouhal statistic: add strouhal = { length = L, speed = U }, the reference length and speed of St = f L / U`},
		{"statistics = [\"max\"]\nstrouhal = { length = 1, speed = 1 }\n", `study.toml:17: quantity "lift" has strouhal = {...} but does not list "strouhal" in statistics; add it, or remove the table`},
		{"statistics = [\"strouhal\"]\nstrouhal = { length = 0, speed = 1 }\n", `study.toml:17: quantity "lift": strouhal needs length = a number above 0 (the reference length of St = f L / U)`},
	} {
		_, err := Load(writeStudy(t, head+"[[quantity]]\nname = \"lift\"\nfiles = \"f\"\nvalue = 3\n"+c.text))
		if err == nil || err.Error() != c.want {
			t.Errorf("got %v\nwant %s", err, c.want)
		}
	}
}

// Ensure that at_most and at_least give a quantity its limits, and that a
// band that allows nothing or a limit that is not a number is refused at
// its line.
func TestLoadLimits(t *testing.T) {
	head := "[case]\nbase = \"template\"\n[[param]]\nname = \"r\"\nmin = 0\nmax = 1\n[design]\nscheme = \"factorial\"\n[[stage]]\nname = \"s\"\nrun = \"true\"\n[[quantity]]\nname = \"drag\"\nfiles = \"f\"\nvalue = 2\nbetter = \"lower\"\n"
	r, err := Load(writeStudy(t, head+"[[quantity]]\nname = \"lift\"\nfiles = \"f\"\nvalue = 3\nat_least = -0.1\nat_most = 0.3\n"))
	if err != nil {
		t.Fatal(err)
	}
	lift := r.Quantity("lift")
	if lo, hi := lift.Limits(); !lift.Limited() || lo != -0.1 || hi != 0.3 || lift.LimitText() != "-0.1 ≤ lift ≤ 0.3" {
		t.Errorf("lift limits %g, %g, %q", lo, hi, lift.LimitText())
	}
	if d := r.Quantity("drag"); d.Limited() {
		t.Errorf("drag has no limits: %+v", d)
	}
	for _, c := range []struct{ text, want string }{
		{"at_least = 0.3\nat_most = 0.1\n", `study.toml:21: quantity "lift": at_least = 0.3 is not below at_most = 0.1, so no value is allowed: give the band's lower limit in at_least and its upper one in at_most`},
		{"at_most = nan\n", `study.toml:21: quantity "lift": at_most = nan must be a finite number, in the quantity's unit`},
	} {
		_, err := Load(writeStudy(t, head+"[[quantity]]\nname = \"lift\"\nfiles = \"f\"\nvalue = 3\n"+c.text))
		if err == nil || err.Error() != c.want {
			t.Errorf("got %v\nwant %s", err, c.want)
		}
	}
}
