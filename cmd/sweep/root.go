package main

import (
	"errors"
	"path/filepath"
	"runtime/debug"

	"github.com/spf13/cobra"

	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/study"
)

func newRootCmd() *cobra.Command {
	root := &cobra.Command{
		Use:   "sweep",
		Short: "Plan, run and compare CFD design variants",
		Long: `sweep plans the variants of a design study, renders one case per variant
from a base case, runs each variant's stages (mesh, solve, ...) on this
machine's cores from a persistent queue that survives crashes, and reports
where every variant stands.

Results steer engineering decisions only after validation: check mesh and
time-step independence, have qualified people review them, and follow the
codes and licensed practice that apply where you work.

Exit status:
  0    success
  1    the work failed (a job failed, a run could not finish)
  2    bad usage, a bad recipe (the message names file:line), or no study here
  130  interrupted (Ctrl-C or SIGTERM); running jobs were re-queued`,
		SilenceUsage:  true,
		SilenceErrors: true,
		Version:       version(),
	}
	root.SetVersionTemplate("sweep {{.Version}}\n")
	root.SetFlagErrorFunc(func(_ *cobra.Command, err error) error { return usageError{err} })
	root.AddCommand(newDemoCmd(), newNewCmd(), newPlanCmd(), newRunCmd(), newStatusCmd(), newResetCmd(),
		newHarvestCmd(), newRankCmd(), newStatsCmd(), newFitCmd(), newGCICmd(), newReportCmd(), newCancelCmd(), newRecoverCmd(), newLbmCmd())
	addCompletion(root)
	return root
}

// studyDir returns the study directory named by the arguments (default ".").
func studyDir(args []string) string {
	if len(args) == 0 {
		return "."
	}
	return filepath.Clean(args[0])
}

// loadRecipe reads DIR/study.toml.
func loadRecipe(dir string) (*recipe.Recipe, error) {
	return study.Load(dir)
}

func isRecipeError(err error) bool { return errors.Is(err, recipe.ErrInvalid) }

// maxOneDir accepts zero or one study directory.
var maxOneDir = func(cmd *cobra.Command, args []string) error {
	if len(args) > 1 {
		return usageError{errors.New("give at most one study directory")}
	}
	return nil
}

// version returns the module version of this build and, when it was
// built from a checkout, the commit and whether it had changes.
func version() string {
	info, ok := debug.ReadBuildInfo()
	if !ok {
		return "(unknown build)"
	}
	v := info.Main.Version
	var rev, modified string
	for _, s := range info.Settings {
		switch s.Key {
		case "vcs.revision":
			rev = s.Value
		case "vcs.modified":
			if s.Value == "true" {
				modified = ", with uncommitted changes"
			}
		}
	}
	if rev != "" {
		v += " (commit " + rev[:min(12, len(rev))] + modified + ")"
	}
	return v + " " + info.GoVersion
}
