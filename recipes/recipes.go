// Package recipes ships complete example studies, each a directory with a
// recipe (study.toml) and its template case, that `sweep` runs as they
// are:
//
//   - box-demo: the demo study of `sweep demo`, a 2D box-shaped body near a
//     moving ground whose nose-corner radius and tail taper angle vary;
//   - cylinder-dfg: the DFG cylinder benchmark (Schäfer and Turek 1996,
//     case 2D-1) at three lattice resolutions, for a grid-convergence
//     study.
//
// Both run the built-in solver (`sweep lbm`), so they need nothing but
// this program. A third study in this directory, cylinder-gerris, drives
// an external solver (Debian's gerris2D); it is not embedded, since it
// needs that solver installed.
package recipes

import (
	"embed"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"sort"
)

//go:embed box-demo cylinder-dfg
var files embed.FS

// Names lists the shipped studies.
func Names() []string {
	ents, _ := fs.ReadDir(files, ".")
	var names []string
	for _, e := range ents {
		if e.IsDir() {
			names = append(names, e.Name())
		}
	}
	sort.Strings(names)
	return names
}

// Write copies the named study into dir, which must be empty or absent.
// Scripts (*.sh) keep an executable bit.
func Write(name, dir string) error {
	root, err := fs.Sub(files, name)
	if err != nil {
		return err
	}
	if _, err := fs.Stat(root, "study.toml"); err != nil {
		return fmt.Errorf("no shipped study named %q (have: %v)", name, Names())
	}
	return WriteFS(root, dir)
}

// WriteFS copies a study held in root into dir, which must be empty or
// absent. Scripts (*.sh) keep an executable bit.
func WriteFS(root fs.FS, dir string) error {
	if ents, err := os.ReadDir(dir); err == nil && len(ents) > 0 {
		return fmt.Errorf("%s is not empty; choose a new directory for the study", dir)
	} else if err != nil && !errors.Is(err, fs.ErrNotExist) {
		return err
	}
	return fs.WalkDir(root, ".", func(path string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		dst := filepath.Join(dir, filepath.FromSlash(path))
		if d.IsDir() {
			return os.MkdirAll(dst, 0o755)
		}
		b, err := fs.ReadFile(root, path)
		if err != nil {
			return err
		}
		mode := os.FileMode(0o644)
		if filepath.Ext(path) == ".sh" {
			mode = 0o755
		}
		return os.WriteFile(dst, b, mode)
	})
}
