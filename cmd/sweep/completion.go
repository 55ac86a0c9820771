package main

import (
	"os"

	"github.com/spf13/cobra"

	"github.com/sweep-cfd/sweep/internal/ui"
)

// harvestProgress shows a bar while a large study is harvested (on a
// terminal only).
func harvestProgress() func(done, total int) {
	return ui.NewCounter(os.Stderr, "harvest").Step
}

// completeStudyDirs completes the study-directory argument with
// directories.
func completeStudyDirs(cmd *cobra.Command, args []string, _ string) ([]string, cobra.ShellCompDirective) {
	if len(args) > 0 {
		return nil, cobra.ShellCompDirectiveNoFileComp
	}
	return nil, cobra.ShellCompDirectiveFilterDirs
}

// completeQuantities completes a quantity flag with the names the
// recipe of the study named on the command line (or ".") declares.
func completeQuantities(cmd *cobra.Command, args []string, _ string) ([]string, cobra.ShellCompDirective) {
	r, err := loadRecipe(studyDir(args))
	if err != nil {
		return nil, cobra.ShellCompDirectiveNoFileComp
	}
	var names []string
	for _, q := range r.Quantities {
		names = append(names, q.Name)
	}
	return names, cobra.ShellCompDirectiveNoFileComp
}

// addCompletion wires shell completion (cobra's `sweep completion SHELL`)
// for study directories and quantity names.
func addCompletion(root *cobra.Command) {
	for _, c := range root.Commands() {
		switch c.Name() {
		case "demo", "plan", "run", "status", "reset", "harvest", "rank", "fit", "gci", "cancel", "report", "recover":
			c.ValidArgsFunction = completeStudyDirs
		}
		for _, flag := range []string{"by", "quantity"} {
			if c.Flags().Lookup(flag) != nil {
				c.RegisterFlagCompletionFunc(flag, completeQuantities)
			}
		}
	}
}
