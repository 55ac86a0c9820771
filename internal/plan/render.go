package plan

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"sync/atomic"
	"text/template"
	"text/template/parse"
	"unicode/utf8"

	"golang.org/x/sys/unix"

	"github.com/sweep-cfd/sweep/internal/recipe"
)

// fileAction says what happens to one template file in a variant.
type fileAction int

const (
	doShare  fileAction = iota // small: copy; large: clone, else hard-link and protect
	doCopy                     // a private copy (listed in [case] private)
	doRender                   // execute as a text/template
)

// SmallFile is the size up to which a base-case file that is neither
// rendered nor private is copied into each variant rather than shared:
// copying small files costs little disk, and a solver that rewrites a
// small settings file in place then changes only its own variant.
const SmallFile = 64 << 10

// entry is one item of the template tree.
type entry struct {
	rel    string // slash-separated path relative to the template
	mode   fs.FileMode
	size   int64
	action fileAction
	tmpl   *template.Template
	target string // symlink target
	// protect makes a hard-linked file read-only once: the base case and
	// every variant share its inode, so an in-place edit would change
	// them all; read-only, the edit fails loudly instead.
	protect *sync.Once
}

// layout is the template tree, read and checked once per plan.
type layout struct {
	root    string
	entries []entry
	// How the large files were shared in this plan: copy-on-write
	// clones, or hard links made read-only (counted per variant file).
	cloned, linked atomic.Int64
}

// matches reports whether a slash-separated relative path matches a
// pattern: a pattern without '/' matches the file's name in any directory;
// a pattern with '/' matches the whole relative path.
func matches(pattern, rel string) bool {
	if !strings.Contains(pattern, "/") {
		ok, _ := filepath.Match(pattern, filepath.Base(rel))
		return ok
	}
	ok, _ := filepath.Match(pattern, rel)
	return ok
}

// readLayout walks the template, parses every rendered file and checks
// that each placeholder names a parameter. Problems are reported with the
// template file's path and line.
func readLayout(r *recipe.Recipe) (*layout, error) {
	lay := &layout{root: r.Base}
	used := make([]bool, len(r.Render))
	var problems []string
	err := filepath.WalkDir(r.Base, func(path string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		rel, _ := filepath.Rel(r.Base, path)
		if rel == "." {
			return nil
		}
		rel = filepath.ToSlash(rel)
		if rel == IdentityFile {
			problems = append(problems, fmt.Sprintf("%s: the base case holds a file named %s, which the program writes into every variant; rename or remove it", path, IdentityFile))
			return nil
		}
		info, err := d.Info()
		if err != nil {
			return err
		}
		e := entry{rel: rel, mode: info.Mode(), size: info.Size(), protect: new(sync.Once)}
		switch {
		case d.IsDir():
		case info.Mode()&fs.ModeSymlink != 0:
			if e.target, err = os.Readlink(path); err != nil {
				return err
			}
		case !info.Mode().IsRegular():
			problems = append(problems, fmt.Sprintf("%s: not a regular file, directory or link; remove it from the base case", path))
			return nil
		default:
			for i, g := range r.Render {
				if matches(g, rel) {
					used[i] = true
					e.action = doRender
				}
			}
			if e.action != doRender {
				for _, g := range r.Private {
					if matches(g, rel) {
						e.action = doCopy
					}
				}
			}
			if e.action == doRender {
				t, perr := parseTemplate(path, rel, r)
				if perr != nil {
					problems = append(problems, perr.Error())
					return nil
				}
				e.tmpl = t
			}
		}
		lay.entries = append(lay.entries, e)
		return nil
	})
	if err != nil {
		return nil, fmt.Errorf("read the base case %s: %w", r.Base, err)
	}
	for i, u := range used {
		if !u {
			problems = append(problems, fmt.Sprintf("%s: render pattern %q matches no file in the base case %s; correct the pattern or remove it", filepath.Base(r.File), r.Render[i], r.Base))
		}
	}
	if len(problems) > 0 {
		return nil, fmt.Errorf("%w:\n%s", recipe.ErrInvalid, strings.Join(problems, "\n"))
	}
	return lay, nil
}

func parseTemplate(path, rel string, r *recipe.Recipe) (*template.Template, error) {
	src, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	if !utf8.Valid(src) || bytes.IndexByte(src, 0) >= 0 {
		return nil, fmt.Errorf("%s: matches a render pattern but is not UTF-8 text; remove it from [case] render (it will be linked as it is)", path)
	}
	t, err := template.New(rel).Option("missingkey=error").Funcs(funcs).Parse(string(src))
	if err != nil {
		return nil, fmt.Errorf("%s: %s", path, strings.TrimPrefix(err.Error(), "template: "))
	}
	var bad []string
	for _, tt := range t.Templates() {
		if tt.Tree == nil {
			continue
		}
		walkFields(tt.Tree.Root, func(n parse.Node, name string) {
			if r.ParamIndex(name) < 0 {
				loc, _ := tt.ErrorContext(n)
				bad = append(bad, fmt.Sprintf("%s (%s): {{.%s}} names no parameter of the recipe; known: %s", path, lineOf(loc), name, paramNames(r)))
			}
		})
		walkLoops(tt.Tree.Root, func(n parse.Node) {
			loc, _ := tt.ErrorContext(n)
			bad = append(bad, fmt.Sprintf("%s (%s): {{range}} is not allowed in a rendered file: it could loop without end; write the values out, or compute them in the solver's input", path, lineOf(loc)))
		})
	}
	if bad != nil {
		return nil, errors.New(strings.Join(bad, "\n"))
	}
	return t, nil
}

// funcs are the arithmetic a template may do on parameter values, so a
// case file can hold a derived setting: {{div 0.125 .reynolds}} is a
// viscosity for a chosen Reynolds number. Every function takes float64
// and returns a finite float64, or an error (a division by zero, an
// overflow) that names the operation, so no "NaN" or "+Inf" reaches a
// case file.
var funcs = template.FuncMap{
	"add": finite2("add", func(a, b float64) float64 { return a + b }),
	"sub": finite2("sub", func(a, b float64) float64 { return a - b }),
	"mul": finite2("mul", func(a, b float64) float64 { return a * b }),
	"div": finite2("div", func(a, b float64) float64 { return a / b }),
	"pow": finite2("pow", math.Pow),
}

// finite2 wraps a binary operation so that a result that is not a finite
// number is an error.
func finite2(name string, f func(a, b float64) float64) func(a, b float64) (float64, error) {
	return func(a, b float64) (float64, error) {
		v := f(a, b)
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return 0, fmt.Errorf("%s %g %g is %g, not a finite number", name, a, b, v)
		}
		return v, nil
	}
}

// walkLoops calls fn for every {{range}} in a template tree.
func walkLoops(n parse.Node, fn func(parse.Node)) {
	switch x := n.(type) {
	case *parse.ListNode:
		if x == nil {
			return
		}
		for _, c := range x.Nodes {
			walkLoops(c, fn)
		}
	case *parse.RangeNode:
		fn(x)
		walkLoops(x.List, fn)
		walkLoops(x.ElseList, fn)
	case *parse.IfNode:
		walkLoops(x.List, fn)
		walkLoops(x.ElseList, fn)
	case *parse.WithNode:
		walkLoops(x.List, fn)
		walkLoops(x.ElseList, fn)
	}
}

// lineOf turns text/template's "name:line:col" location into "line L".
func lineOf(loc string) string {
	parts := strings.Split(loc, ":")
	if len(parts) >= 2 {
		return "line " + parts[len(parts)-2]
	}
	return loc
}

func paramNames(r *recipe.Recipe) string {
	names := make([]string, len(r.Params))
	for i, p := range r.Params {
		names[i] = p.Name
	}
	return strings.Join(names, ", ")
}

// walkFields calls fn for the first identifier of every field reference
// (.name, $.name) in a template tree.
func walkFields(n parse.Node, fn func(parse.Node, string)) {
	switch x := n.(type) {
	case *parse.ListNode:
		if x == nil {
			return
		}
		for _, c := range x.Nodes {
			walkFields(c, fn)
		}
	case *parse.ActionNode:
		walkFields(x.Pipe, fn)
	case *parse.PipeNode:
		if x == nil {
			return
		}
		for _, c := range x.Cmds {
			walkFields(c, fn)
		}
	case *parse.CommandNode:
		for _, a := range x.Args {
			walkFields(a, fn)
		}
	case *parse.FieldNode:
		fn(x, x.Ident[0])
	case *parse.VariableNode:
		if len(x.Ident) > 1 && x.Ident[0] == "$" {
			fn(x, x.Ident[1])
		}
	case *parse.ChainNode:
		walkFields(x.Node, fn)
	case *parse.IfNode:
		walkBranch(&x.BranchNode, fn)
	case *parse.RangeNode:
		walkBranch(&x.BranchNode, fn)
	case *parse.WithNode:
		walkBranch(&x.BranchNode, fn)
	case *parse.TemplateNode:
		walkFields(x.Pipe, fn)
	}
}

func walkBranch(b *parse.BranchNode, fn func(parse.Node, string)) {
	walkFields(b.Pipe, fn)
	walkFields(b.List, fn)
	walkFields(b.ElseList, fn)
}

// render writes one variant's case into dir, which must not exist.
func (lay *layout) render(dir string, data map[string]any) error {
	if err := os.Mkdir(dir, 0o755); err != nil {
		return err
	}
	var buf bytes.Buffer
	for _, e := range lay.entries {
		src := filepath.Join(lay.root, filepath.FromSlash(e.rel))
		dst := filepath.Join(dir, filepath.FromSlash(e.rel))
		switch {
		case e.mode.IsDir():
			if err := os.Mkdir(dst, e.mode.Perm()|0o700); err != nil {
				return err
			}
		case e.mode&fs.ModeSymlink != 0:
			if err := os.Symlink(e.target, dst); err != nil {
				return err
			}
		case e.action == doRender:
			buf.Reset()
			if err := e.tmpl.Execute(&buf, data); err != nil {
				return fmt.Errorf("render %s: %w", src, err)
			}
			if !utf8.Valid(buf.Bytes()) {
				return fmt.Errorf("render %s: the result is not valid UTF-8 text", src)
			}
			if err := os.WriteFile(dst, buf.Bytes(), e.mode.Perm()); err != nil {
				return err
			}
		case e.action == doCopy:
			if err := copyFile(src, dst, e.mode.Perm()); err != nil {
				return err
			}
		case e.size <= SmallFile:
			if err := copyFile(src, dst, e.mode.Perm()); err != nil {
				return err
			}
		default:
			if err := lay.share(e, src, dst); err != nil {
				return err
			}
		}
	}
	return nil
}

// share gives a variant a large base-case file without copying its data:
// a copy-on-write clone where the filesystem makes one (each variant may
// then change its file freely), otherwise a hard link, with the shared
// file made read-only so an in-place edit fails instead of changing the
// base case and every variant; a copy where even a link is refused.
func (lay *layout) share(e entry, src, dst string) error {
	ok, err := cloneFile(src, dst, e.mode.Perm())
	if err != nil {
		return err
	}
	if ok {
		lay.cloned.Add(1)
		return nil
	}
	e.protect.Do(func() {
		if e.mode.Perm()&0o222 != 0 {
			os.Chmod(src, e.mode.Perm()&^0o222)
		}
	})
	if err := os.Link(src, dst); err != nil {
		return copyFile(src, dst, e.mode.Perm())
	}
	lay.linked.Add(1)
	return nil
}

// cloneFile makes dst a copy-on-write clone of src (the FICLONE ioctl;
// btrfs, XFS with reflink, and others). It reports false, leaving no
// file, where the filesystem cannot clone.
func cloneFile(src, dst string, perm fs.FileMode) (bool, error) {
	in, err := os.Open(src)
	if err != nil {
		return false, err
	}
	defer in.Close()
	out, err := os.OpenFile(dst, os.O_WRONLY|os.O_CREATE|os.O_EXCL, perm)
	if err != nil {
		return false, err
	}
	if err := unix.IoctlFileClone(int(out.Fd()), int(in.Fd())); err != nil {
		out.Close()
		os.Remove(dst)
		return false, nil
	}
	return true, out.Close()
}

func copyFile(src, dst string, perm fs.FileMode) error {
	in, err := os.Open(src)
	if err != nil {
		return err
	}
	defer in.Close()
	out, err := os.OpenFile(dst, os.O_WRONLY|os.O_CREATE|os.O_EXCL, perm)
	if err != nil {
		return err
	}
	if _, err := io.Copy(out, in); err != nil {
		out.Close()
		return err
	}
	return out.Close()
}
