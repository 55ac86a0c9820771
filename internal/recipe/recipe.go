package recipe

import (
	"math"
	"time"

	"github.com/sweep-cfd/sweep/internal/doe"
)

// FileName is the recipe's file name inside a study directory.
const FileName = "study.toml"

// Recipe is a checked study recipe. Paths in it are absolute.
type Recipe struct {
	File        string // absolute path of the recipe file
	Dir         string // the study directory (the recipe file's directory)
	Name        string
	Description string
	Base        string   // absolute path of the base case directory (the template every variant is rendered from)
	Render      []string // glob patterns, relative to Base, of files rendered with text/template
	Private     []string // glob patterns of files every variant gets its own copy of, instead of a shared link
	Params      []Param
	Design      Design
	Stages      []Stage
	Quantities  []Quantity
	Backend     Backend
}

// Kind is the kind of a parameter.
type Kind int

const (
	// Range is a continuous parameter between Min and Max.
	Range Kind = iota
	// Levels is a numeric parameter that takes one of a list of values.
	Levels
	// Choice is a categorical parameter that takes one of a list of words.
	Choice
)

func (k Kind) String() string {
	switch k {
	case Range:
		return "range"
	case Levels:
		return "levels"
	case Choice:
		return "choice"
	}
	return "unknown"
}

// Param is one design parameter.
type Param struct {
	Name    string
	Kind    Kind
	Min     float64 // Range
	Max     float64 // Range
	Log     bool    // Range: points are spread evenly in log(value); Range or numeric Levels: surfaces are fitted in log10(value)
	Steps   int     // Range: number of levels in a factorial design (0: use the design's default)
	Unit    string
	Values  []float64 // Levels
	Choices []string  // Choice
	// Mesh marks the parameter as the mesh level of a grid-convergence
	// study and says how its value reads: "resolution" (cells per
	// length), "spacing" (cell size), "cells2d" or "cells3d" (cell counts).
	Mesh string
	Line int // line of the parameter's table in the recipe
}

// Stage is one step run on every variant, in recipe order.
type Stage struct {
	Name    string
	Command string   // the command line as written
	Argv    []string // the command split into arguments (sh -c when Shell)
	Shell   bool     // run Command with sh -c; parameter values still only reach it as environment variables
	Cores   int
	Timeout time.Duration // 0: none
	Retries int
	Dir     string            // working directory relative to the variant directory ("" = the variant directory)
	Env     map[string]string // extra constant environment variables
	// ContinueArgv, when set, runs instead of Argv when the stage runs
	// again after an interruption or a failure: it continues the
	// solver's run (from its last restart data) rather than starting over.
	ContinueCommand string
	ContinueArgv    []string
	ContinueLine    int // line of the continue key in the recipe
	// Settle, when set, stops the stage's solver once the named
	// quantities' averages have settled (converged to their tolerance).
	Settle *Settle
	Line   int
}

// Design says how the variants' points are chosen.
type Design struct {
	Scheme string  // "factorial" or "table"; further schemes come from package doe
	Steps  int     // default number of levels per range parameter in a factorial
	Points []Point // for "table": the explicit points, from the recipe or a CSV file
	Seed   uint64
	Count  int // number of points for sampling designs (latin, sobol)
	Line   int

	Composite    string  // composite: "circumscribed", "inscribed" or "face"
	Centre       int     // composite, box_behnken: centre-point replicates
	Trajectories int     // morris: number of trajectories
	GridLevels   int     // morris: levels of the grid (even)
	Baseline     []Value // one_at_a_time: the baseline point (nil: the centre)
	// Constraints are expressions over parameter names that every point
	// must satisfy; sampling designs replace failing points, structured
	// designs drop them.
	Constraints []*doe.Constraint
}

// Point is one explicit design point: a value for every parameter, and an
// optional free-text name that identifies it across re-planning.
type Point struct {
	Name   string
	Values []Value // in the order of Recipe.Params
	Where  string  // "file:line" where the point was written
}

// ParamIndex returns the index of the named parameter, or -1.
func (r *Recipe) ParamIndex(name string) int {
	for i, p := range r.Params {
		if p.Name == name {
			return i
		}
	}
	return -1
}

// CellSize returns the representative cell size for a mesh parameter's
// value (see Param.Mesh), in the unit the value implies.
func (p Param) CellSize(v float64) float64 {
	switch p.Mesh {
	case "resolution":
		return 1 / v
	case "cells2d":
		return math.Pow(v, -0.5)
	case "cells3d":
		return math.Pow(v, -1.0/3)
	}
	return v
}
