package report

import "time"

// Study is everything the report shows. The caller fills it from the
// recipe, the queue and the harvested results; Render only presents it.
type Study struct {
	Name, Description string
	Generated         time.Time
	Params            []Param
	Design            string // e.g. "full factorial, 9 points"
	Objective         string // quantity name, e.g. "drag"
	Better            string // "lower" or "higher": which values of the objective are better
	Counts            Counts
	Ranking           []RankRow // best first
	Baseline          string    // label of the baseline variant, or ""
	Variants          []Variant
	Surface           *Surface    // nil if no response surface was fitted
	SurfaceNote       string      // why there is no surface, when Surface is nil
	Tradeoff          *Tradeoff   // nil unless the report weighs several objectives
	Mesh              []MeshStudy // may be empty
	Caution           string      // one sentence printed prominently
	ObjectiveUnit     string      // unit of the objective, e.g. "N"; may be empty
}

// Param is one design parameter of the recipe.
type Param struct {
	Name  string
	Kind  string // "range", "levels" or "choice"
	Range string // e.g. "0 .. 0.4" or "a, b, c"
	Unit  string
}

// Counts are the variant states at the time of the report.
type Counts struct {
	Done, Failed, Pending, Running int
}

// RankRow is one ranked variant. Mean ± HalfWidth is its 95 % interval.
// Delta, DeltaHalfWidth and ChangePercent compare it with the baseline
// and are nil when no baseline is set.
type RankRow struct {
	Rank           int
	Label, Name    string
	Params         map[string]string
	Mean           float64
	HalfWidth      float64
	Verdict        string
	Group          string // letters: rows sharing a letter are not distinguishable
	Delta          *float64
	DeltaHalfWidth *float64
	ChangePercent  *float64
}

// Variant is one run of the solver and what was harvested from it.
type Variant struct {
	Label, Name, State string
	Params             map[string]string
	Runtime            time.Duration
	Cores              int
	ExitStatus         string   // for failed variants, e.g. "exit status 3"
	LogTail            []string // for failed variants
	Quantities         []QuantitySeries
}

// QuantitySeries is the history of one harvested quantity. The samples
// in [Time[0], TransientEnd] were discarded as start-up transient; Mean ±
// HalfWidth is the average over the rest and its 95 % interval.
type QuantitySeries struct {
	Name            string
	Unit            string // may be empty
	Time, Value     []float64
	TransientEnd    float64
	Mean, HalfWidth float64
	Verdict         string
	Message         string
}

// Surface is a fitted response surface and its checks.
type Surface struct {
	Model            string
	Response         string
	LOORMSE, Noise   float64
	Q2               *float64
	Flag             string
	Observed         []float64 // one per run
	LOOPredicted     []float64 // leave-one-out prediction of each run
	Labels           []string
	Sensitivities    []Sensitivity
	Contours         []Contour // one per pair of the most sensitive parameters
	Optimum          map[string]float64
	OptimumValue     float64
	OptimumHalfWidth float64
	// Choice says how the model was chosen; OptimumSource whether the
	// optimum is the surface's ("surface") or a measured run ("run
	// v004"); Notes what deserves caution (bounds, limits, gaps).
	Choice        string
	OptimumSource string
	Notes         []string
	// Curve, for a study of one numeric parameter, is the fitted curve
	// with the runs.
	Curve *Curve
}

// Curve is a one-parameter surface: the fitted mean and the half-width of
// its 95 % interval at X, and the runs with their own 95 % half-widths.
type Curve struct {
	Param                   string
	X, Mean, HalfWidth      []float64
	RunX, RunY, RunHalfWide []float64
}

// Tradeoff weighs two or more objectives: every variant's averages with
// their 95 % half-widths, which are on the front, and the front the
// surfaces predict. The figure plots the first two objectives.
type Tradeoff struct {
	Objectives []string // names, e.g. "drag", "downforce"
	Better     []string // "lower" or "higher", per objective
	Units      []string
	Limits     []string // the recipe's limits, in words
	// Lo and Hi hold each objective's own limits (±Inf for none), drawn
	// as dotted lines.
	Lo, Hi []float64
	Rows   []TradeRow
	// Predicted holds the predicted front's points, each with one mean
	// per objective (nil when no front could be predicted, with
	// PredictedNote saying why).
	Predicted     [][]float64
	PredictedNote string
	Draws         int
}

// TradeRow is one variant of a trade-off: Mean[j] ± HalfWidth[j] for
// objective j.
type TradeRow struct {
	Label           string
	Params          map[string]string
	Mean, HalfWidth []float64
	Front           bool    // on the front of the means
	Chance          float64 // of being on the front
	Status          string  // in words
}

// Sensitivity holds the first-order and total Sobol' indices of one
// parameter with their standard errors.
type Sensitivity struct {
	Param          string
	First, FirstSE float64
	Total, TotalSE float64
}

// Contour is the surface over a grid of two parameters, the others held
// at the optimum. Z[j][i] is the value at (X[i], Y[j]).
type Contour struct {
	XName, YName string
	X, Y         []float64
	Z            [][]float64
	RunsX, RunsY []float64 // the runs, drawn as points
	OptX, OptY   float64   // the optimum, marked
}

// MeshStudy is a grid-convergence study: the value on each grid, fine to
// coarse, against the representative cell size H. GCI is the fine-grid
// convergence index as a fraction of the fine-grid value (0.022 for
// 2.2 %), as in Celik et al. (2008), J. Fluids Eng. 130, 078001.
type MeshStudy struct {
	Title               string
	H, Value, HalfWidth []float64 // fine to coarse
	Extrapolated        float64   // Richardson extrapolation to h = 0
	GCI                 float64   // relative, fine grid
	Order               float64   // apparent order p
	Convergence         string
	Warnings            []string
}
