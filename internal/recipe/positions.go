package recipe

import (
	"fmt"
	"strings"

	"github.com/pelletier/go-toml/v2/unstable"
)

// keyLines maps every key path of a TOML document to the line where it is
// written. Array-table entries and array elements carry their index, so the
// second [[param]] table's max is "param[1].max" and the third inline point
// of design.points is "design.points[2]". The map is only a guide for error
// messages; a document that does not parse yields what was read before the
// syntax error, and the decoder reports that error itself.
func keyLines(data []byte) map[string]int {
	lines := make(map[string]int)
	var p unstable.Parser
	p.Reset(data)
	count := make(map[string]int)
	prefix := ""
	lineOf := func(n *unstable.Node) int {
		if n == nil || n.Raw.Length == 0 {
			return 0
		}
		return p.Shape(n.Raw).Start.Line
	}
	for p.NextExpression() {
		e := p.Expression()
		switch e.Kind {
		case unstable.Table, unstable.ArrayTable:
			k, first := joinKey(e.Key())
			k = indexParents(k, count)
			if e.Kind == unstable.ArrayTable {
				i := count[k]
				count[k]++
				k = fmt.Sprintf("%s[%d]", k, i)
			}
			prefix = k
			lines[k] = lineOf(first)
		case unstable.KeyValue:
			k, first := joinKey(e.Key())
			if prefix != "" {
				k = prefix + "." + k
			}
			lines[k] = lineOf(first)
			v := e.Value()
			if v.Kind == unstable.Array || v.Kind == unstable.InlineTable {
				elementLines(lines, k, v, lineOf)
			}
		}
	}
	return lines
}

func elementLines(lines map[string]int, key string, v *unstable.Node, lineOf func(*unstable.Node) int) {
	it := v.Children()
	i := 0
	for it.Next() {
		n := it.Node()
		switch v.Kind {
		case unstable.Array:
			k := fmt.Sprintf("%s[%d]", key, i)
			if l := lineOf(n); l > 0 {
				lines[k] = l
			} else {
				lines[k] = lines[key]
			}
			i++
		case unstable.InlineTable:
			if n.Kind == unstable.KeyValue {
				sub, first := joinKey(n.Key())
				lines[key+"."+sub] = lineOf(first)
			}
		}
	}
}

// indexParents adds the current index to every enclosing array of
// tables: after the second [[stage]], the header [stage.early_stop] is
// "stage[1].early_stop".
func indexParents(k string, count map[string]int) string {
	parts := strings.Split(k, ".")
	out := ""
	plain := ""
	for i, p := range parts {
		if i > 0 {
			out += "."
			plain += "."
		}
		out += p
		plain += p
		if i < len(parts)-1 && count[plain] > 0 {
			out += fmt.Sprintf("[%d]", count[plain]-1)
		}
	}
	return out
}

func joinKey(it unstable.Iterator) (string, *unstable.Node) {
	var parts []string
	var first *unstable.Node
	for it.Next() {
		n := it.Node()
		if first == nil {
			first = n
		}
		parts = append(parts, string(n.Data))
	}
	return strings.Join(parts, "."), first
}
