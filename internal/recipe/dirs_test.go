package recipe_test

import (
	"testing"

	"github.com/sweep-cfd/sweep/internal/plan"
	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/store"
)

// Ensure that the directories a base case must stay out of are the ones
// the program writes: the rendered variants and the study database.
func TestStudyDirNames(t *testing.T) {
	if recipe.VariantsDirName != plan.VariantsDir {
		t.Errorf("variants directory %q, plan writes %q", recipe.VariantsDirName, plan.VariantsDir)
	}
	if recipe.StoreDirName != store.Dir {
		t.Errorf("database directory %q, store uses %q", recipe.StoreDirName, store.Dir)
	}
}
