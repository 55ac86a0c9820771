package plan

import (
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"time"

	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/records"
	"github.com/sweep-cfd/sweep/internal/store"
)

// IdentityFile is the name of the file, in every variant directory, that
// says which variant of which study the directory is: written at plan
// time with the case, so that a study's state can be rebuilt from its
// directories if its database is lost (sweep recover).
const IdentityFile = ".sweep-variant.json"

// Identity is the content of a variant's identity file.
type Identity struct {
	Study   string         `json:"study"` // the study's id
	Seq     uint64         `json:"seq"`
	ID      string         `json:"id"`
	Label   string         `json:"label"`
	Name    string         `json:"name,omitempty"`
	Params  []string       `json:"params"` // parameter names, in the order of Values
	Values  []recipe.Value `json:"values"`
	Where   string         `json:"where,omitempty"`
	Added   bool           `json:"added,omitempty"`
	Created time.Time      `json:"created"`
}

// Variant returns the database record the identity describes.
func (id Identity) Variant() store.Variant {
	return store.Variant{Seq: id.Seq, ID: id.ID, Label: id.Label, Name: id.Name, Values: records.Values(id.Values),
		Where: id.Where, Rendered: true, Added: id.Added, Created: id.Created}
}

func writeIdentity(dir, study string, params []string, v store.Variant) error {
	b, err := json.MarshalIndent(Identity{Study: study, Seq: v.Seq, ID: v.ID, Label: v.Label, Name: v.Name, Params: params,
		Values: records.RecipeValues(v.Values), Where: v.Where, Added: v.Added, Created: v.Created}, "", "  ")
	if err != nil {
		return err
	}
	return os.WriteFile(filepath.Join(dir, IdentityFile), append(b, '\n'), 0o644)
}

// ReadIdentity reads a variant directory's identity file.
func ReadIdentity(dir string) (Identity, error) {
	var id Identity
	b, err := os.ReadFile(filepath.Join(dir, IdentityFile))
	if err != nil {
		return id, err
	}
	if err := json.Unmarshal(b, &id); err != nil {
		return id, fmt.Errorf("%s: %w", filepath.Join(dir, IdentityFile), err)
	}
	if id.ID == "" || id.Seq == 0 || id.Label == "" || len(id.Values) != len(id.Params) {
		return id, fmt.Errorf("%s: incomplete identity", filepath.Join(dir, IdentityFile))
	}
	return id, nil
}

// ErrNoIdentity is wrapped when a directory has no identity file.
var ErrNoIdentity = errors.New("no identity file")

// PointKey returns the key under which the database finds a planned
// variant from its design point: its name, or else its values.
func PointKey(names []string, v store.Variant) string {
	return pointKey(names, recipe.Point{Name: v.Name, Values: records.RecipeValues(v.Values)})
}
