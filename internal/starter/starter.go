package starter

import (
	"embed"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
)

//go:embed files
var files embed.FS

// Write copies the starter study into dir, which must be empty or absent.
// Scripts keep their executable bit.
func Write(dir string) error {
	if ents, err := os.ReadDir(dir); err == nil && len(ents) > 0 {
		return fmt.Errorf("%s is not empty; choose a new directory for the study", dir)
	} else if err != nil && !errors.Is(err, fs.ErrNotExist) {
		return err
	}
	root, _ := fs.Sub(files, "files")
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
