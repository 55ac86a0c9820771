package plan

import (
	"bytes"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"text/template"
	"text/template/parse"
	"unicode/utf8"

	"github.com/sweep-cfd/sweep/internal/recipe"
)

// FuzzRender checks that no rendered file of a base case and no parameter
// value crash the renderer: the file is read and checked as a template
// (readLayout, parseTemplate) and rendered into a variant directory
// (render). A template that is refused is refused as a recipe problem; a
// rendered file is UTF-8 text, and a file without actions is copied as it
// is.
func FuzzRender(f *testing.F) {
	for _, s := range []struct {
		text  string
		r     float64
		shape string
	}{
		{"radius {{.r}}\nshape {{.shape}}\n", 0.25, "round"},
		{"nu {{div 0.125 .r}}\narea {{mul (pow .r 2) 3.14159}}\n", 0.1, "square"},
		{"{{if eq .shape \"round\"}}r {{.r}}{{else}}none{{end}}\n", 0, "round"},
		{"{{range 3}}{{.}} {{end}}{{printf \"%.3e\" .r}}\n", 1e-300, "x"},
		{"{{define \"row\"}}{{.}};{{end}}{{template \"row\" .r}}{{with .shape}}{{.}}{{end}}", -1, "é"},
		{"{{.radius}}", 1, "round"},
		{"{{div 1 .r}} {{sub .r .r}}", 0, ""},
		{"{{.r | printf \"%v\"}} {{len .shape}} {{index .shape 0}}", math.Inf(1), "a"},
		{"{{/* a comment */}}plain text, no action\n", 0.5, "round"},
		{"{{", 0.5, "round"},
	} {
		f.Add(s.text, s.r, s.shape)
	}
	dir := f.TempDir()
	base := filepath.Join(dir, "template")
	if err := os.Mkdir(base, 0o755); err != nil {
		f.Fatal(err)
	}
	r := &recipe.Recipe{
		File: filepath.Join(dir, recipe.FileName), Dir: dir, Base: base,
		Render: []string{"case.txt"},
		Params: []recipe.Param{
			{Name: "r", Kind: recipe.Range, Min: -1, Max: 1},
			{Name: "n", Kind: recipe.Levels, Values: []float64{1, 2, 4}},
			{Name: "shape", Kind: recipe.Choice, Choices: []string{"round", "square"}},
		},
	}
	f.Fuzz(func(t *testing.T, text string, rv float64, shape string) {
		if err := os.WriteFile(filepath.Join(base, "case.txt"), []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		lay, err := readLayout(r)
		if err != nil {
			if !errors.Is(err, recipe.ErrInvalid) {
				t.Fatalf("%q: refused, but not as a recipe problem: %v", text, err)
			}
			return
		}
		if len(lay.entries) != 1 || lay.entries[0].tmpl == nil {
			t.Fatalf("%q: layout %+v", text, lay.entries)
		}
		if !bounded(lay.entries[0].tmpl) {
			return // a loop whose length the input sets: not run here
		}
		if len(shape) > 64 {
			shape = shape[:64] // bounds a range over the word (see bounded)
		}
		vdir := filepath.Join(t.TempDir(), "v001")
		data := Data(r, []recipe.Value{recipe.Num(rv), recipe.Num(2), recipe.Word(shape)})
		if err := lay.render(vdir, data); err != nil {
			return
		}
		out, err := os.ReadFile(filepath.Join(vdir, "case.txt"))
		if err != nil {
			t.Fatalf("%q: rendered, but %v", text, err)
		}
		if !utf8.Valid(out) {
			t.Fatalf("%q: rendered text is not UTF-8: %q", text, out)
		}
		if !strings.Contains(text, "{{") && !bytes.Equal(out, []byte(text)) {
			t.Fatalf("%q without actions rendered as %q", text, out)
		}
	})
}

// bounded reports whether executing t surely ends soon: every range loops
// over a literal count of at most 100, a field or a dot (the data hold
// numbers and words only), with at most 1000 iterations nested, and no
// range runs where a template may call itself.
func bounded(t *template.Template) bool {
	ok := true
	named := len(t.Templates()) > 1
	var walk func(n parse.Node, iters int)
	walk = func(n parse.Node, iters int) {
		switch x := n.(type) {
		case *parse.ListNode:
			if x == nil {
				return
			}
			for _, c := range x.Nodes {
				walk(c, iters)
			}
		case *parse.IfNode:
			walk(x.List, iters)
			walk(x.ElseList, iters)
		case *parse.WithNode:
			walk(x.List, iters)
			walk(x.ElseList, iters)
		case *parse.RangeNode:
			count := rangeCount(x.Pipe)
			if named || count < 0 || iters*count > 1000 {
				ok = false
				return
			}
			walk(x.List, iters*max(count, 1))
			walk(x.ElseList, iters)
		}
	}
	for _, tt := range t.Templates() {
		if tt.Tree != nil {
			walk(tt.Tree.Root, 1)
		}
	}
	return ok
}

// rangeCount returns an upper bound of the iterations of a range over
// pipe, or -1 when the input sets it.
func rangeCount(pipe *parse.PipeNode) int {
	if pipe == nil || len(pipe.Cmds) != 1 || len(pipe.Cmds[0].Args) != 1 {
		return -1
	}
	switch a := pipe.Cmds[0].Args[0].(type) {
	case *parse.NumberNode:
		if a.IsInt && a.Int64 >= 0 && a.Int64 <= 100 {
			return int(a.Int64)
		}
	case *parse.FieldNode, *parse.DotNode:
		return 64 // a number (refused) or a word of the input
	}
	return -1
}
