package recipe

import (
	"regexp"
	"sort"
	"strings"
)

// renamedKeys maps keys of earlier recipe versions (dotted paths without
// array indices) to the message that names their replacement. An old key
// is refused, never read as its new name, so a recipe has one meaning.
var renamedKeys = map[string]string{
	"case.template": `key "template" is now "base": write base = "DIR", the base case directory (relative to the recipe)`,
	"case.copy":     `key "copy" is now "private": write private = ["PATTERN", ...], the files each variant gets its own copy of`,
	"param.values":  `key "values" is now "levels": write levels = [...] (numbers, or words in quotes)`,
	"param.choices": `key "choices" is now "levels": write levels = ["word", ...]`,
	"design.method": `key "method" is now "scheme": write scheme = "factorial" (or another scheme)`,
	"design.levels": `key "levels" of [design] is now "grid_levels": write grid_levels = N, the levels of the Morris grid`,
	"quantity.goal": `key "goal" is now "better": write better = "lower" (was "minimize") or better = "higher" (was "maximize")`,
}

// renamedTables maps tables of earlier recipe versions to the message
// that names their replacement.
var renamedTables = map[string]string{
	"stage.early_stop": `table [stage.early_stop] is now [stage.settle] (the same keys inside): rename the table header`,
}

// renamedTable reports whether the key path lies in a renamed table, and
// returns the table's path and message.
func renamedTable(path []string) (table, msg string, ok bool) {
	for i := 1; i <= len(path); i++ {
		t := strings.Join(path[:i], ".")
		if m, ok := renamedTables[t]; ok {
			return t, m, true
		}
	}
	return "", "", false
}

var indexRE = regexp.MustCompile(`\[\d+\]`)

// tableLines returns the lines of every header of the table path (without
// indices) in the key-line map, in order.
func tableLines(lines map[string]int, table string) []int {
	var out []int
	for k, l := range lines {
		if indexRE.ReplaceAllString(k, "") == table {
			out = append(out, l)
		}
	}
	sort.Ints(out)
	return out
}

// SchemeNames returns the design schemes a recipe may name, sorted.
func SchemeNames() []string {
	names := make([]string, 0, len(Schemes))
	for m := range Schemes {
		names = append(names, m)
	}
	sort.Strings(names)
	return names
}
