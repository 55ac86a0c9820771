package starter

import (
	"embed"
	"io/fs"

	"github.com/sweep-cfd/sweep/recipes"
)

//go:embed files
var files embed.FS

// Write copies the starter study into dir, which must be empty or absent.
// Scripts keep their executable bit.
func Write(dir string) error {
	root, _ := fs.Sub(files, "files")
	return recipes.WriteFS(root, dir)
}
