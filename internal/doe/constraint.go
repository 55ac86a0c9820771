package doe

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strings"

	"github.com/expr-lang/expr"
	"github.com/expr-lang/expr/file"
	"github.com/expr-lang/expr/vm"
)

// ErrInfeasible reports that the constraints reject (almost) every point
// offered, so no design of the requested size could be completed.
var ErrInfeasible = errors.New("constraint admits almost none of the space")

// ConstraintError reports an expression that does not compile: what is
// wrong and where. Line and Column count from 1 within the expression; they
// are 0 when the fault concerns the whole expression (for instance, it does
// not give true or false). A caller that read the expression from a file
// can add the file's own position in front.
type ConstraintError struct {
	Expr   string // the expression as given
	Line   int    // line within Expr, from 1; 0 for the whole expression
	Column int    // column (in characters) within the line, from 1
	Msg    string // what is wrong
}

func (e *ConstraintError) Error() string {
	if e.Line == 0 {
		return fmt.Sprintf("constraint %q: %s", e.Expr, e.Msg)
	}
	return fmt.Sprintf("constraint %q: line %d, column %d: %s", e.Expr, e.Line, e.Column, e.Msg)
}

// Constraint is a compiled condition on named parameter values, such as
// "nose_radius + taper_length < 0.8". A point satisfies it when the
// expression is true.
type Constraint struct {
	src   string
	names []string
	prog  *vm.Program
}

// String returns the expression as given.
func (c *Constraint) String() string { return c.src }

// constraintFuncs are the mathematical functions a constraint may call in
// addition to the expression language's own (abs, min, max, ceil, floor,
// round), and pi. All take and give float64.
var constraintFuncs = []struct {
	name string
	f1   func(float64) float64
	f2   func(float64, float64) float64
}{
	{name: "sqrt", f1: math.Sqrt},
	{name: "exp", f1: math.Exp},
	{name: "log", f1: math.Log},
	{name: "log10", f1: math.Log10},
	{name: "sin", f1: math.Sin},
	{name: "cos", f1: math.Cos},
	{name: "tan", f1: math.Tan},
	{name: "asin", f1: math.Asin},
	{name: "acos", f1: math.Acos},
	{name: "atan", f1: math.Atan},
	{name: "atan2", f2: math.Atan2},
	{name: "hypot", f2: math.Hypot},
}

// CompileConstraint compiles src, a boolean expression over the parameter
// names, with the expression language of github.com/expr-lang/expr:
// arithmetic (+ − * / % and ** or ^ for powers), comparisons, and, or, not,
// && || !, the ternary a ? b : c, the functions abs, min, max, floor, ceil,
// round, sqrt, exp, log, log10, sin, cos, tan, asin, acos, atan, atan2,
// hypot, and the constant pi. Every name must be one of names (each value
// is a float64) or one of those functions, and the expression must give
// true or false.
//
// A compile error is a *ConstraintError giving the position of the fault.
// A repeated name, or one taken by a function above or pi, is a plain
// error.
func CompileConstraint(src string, names []string) (*Constraint, error) {
	env := make(map[string]any, len(names)+1)
	for _, n := range names {
		if _, dup := env[n]; dup {
			return nil, fmt.Errorf("constraint %q: parameter name %q given twice", src, n)
		}
		if reservedName(n) {
			return nil, fmt.Errorf("constraint %q: parameter name %q is taken by a constraint function or constant; rename the parameter", src, n)
		}
		env[n] = 0.0
	}
	env["pi"] = math.Pi
	opts := []expr.Option{expr.Env(env), expr.AsBool()}
	for _, f := range constraintFuncs {
		if f.f1 != nil {
			fn := f.f1
			opts = append(opts, expr.Function(f.name, func(p ...any) (any, error) {
				return fn(p[0].(float64)), nil
			}, new(func(float64) float64)))
		} else {
			fn := f.f2
			opts = append(opts, expr.Function(f.name, func(p ...any) (any, error) {
				return fn(p[0].(float64), p[1].(float64)), nil
			}, new(func(float64, float64) float64)))
		}
	}
	prog, err := compileSafely(src, opts)
	if err != nil {
		ce := &ConstraintError{Expr: src, Msg: err.Error()}
		var fe *file.Error
		if errors.As(err, &fe) {
			ce.Msg = fe.Message
			ce.Line, ce.Column = fe.Line, fe.Column+1
			if ce.Line < 1 {
				ce.Line = 1
			}
		} else if got, found := strings.CutPrefix(err.Error(), "expected bool, but got "); found {
			ce.Msg = "the expression must give true or false, not a " + got
		}
		return nil, ce
	}
	return &Constraint{src: src, names: slices.Clone(names), prog: prog}, nil
}

// reservedName reports whether a parameter name would hide a function or
// constant that CompileConstraint adds to the language.
func reservedName(n string) bool {
	if n == "pi" {
		return true
	}
	for _, f := range constraintFuncs {
		if f.name == n {
			return true
		}
	}
	return false
}

// compileSafely turns a panic of the expression compiler on malformed
// input into an error, so that no user text can crash the program.
func compileSafely(src string, opts []expr.Option) (prog *vm.Program, err error) {
	defer func() {
		if r := recover(); r != nil {
			prog, err = nil, fmt.Errorf("cannot compile the expression: %v", r)
		}
	}()
	return expr.Compile(src, opts...)
}

// CompileConstraints compiles each expression of srcs (see
// CompileConstraint). The error of the first expression that fails is
// wrapped with its index, and errors.As finds the *ConstraintError.
func CompileConstraints(srcs []string, names []string) ([]*Constraint, error) {
	cs := make([]*Constraint, len(srcs))
	for i, s := range srcs {
		c, err := CompileConstraint(s, names)
		if err != nil {
			return nil, fmt.Errorf("constraint %d: %w", i+1, err)
		}
		cs[i] = c
	}
	return cs, nil
}

// Eval reports whether values satisfy the constraint. values must hold
// every name the constraint was compiled with; extra names are ignored.
func (c *Constraint) Eval(values map[string]float64) (bool, error) {
	env := make(map[string]any, len(c.names)+1)
	for _, n := range c.names {
		v, ok := values[n]
		if !ok {
			return false, fmt.Errorf("constraint %q: parameter %q has no value", c.src, n)
		}
		env[n] = v
	}
	env["pi"] = math.Pi
	out, err := expr.Run(c.prog, env)
	if err != nil {
		return false, fmt.Errorf("constraint %q: %w", c.src, err)
	}
	ok, _ := out.(bool)
	return ok, nil
}

// Mapping turns a unit-cube point into named parameter values. The caller
// supplies it (ranges, integer levels, categorical choices, log scales).
type Mapping func(u []float64) map[string]float64

// Feasible reports whether the point u, mapped by m, satisfies every
// constraint in cs.
func Feasible(u []float64, m Mapping, cs []*Constraint) (bool, error) {
	if len(cs) == 0 {
		return true, nil
	}
	vals := m(u)
	for _, c := range cs {
		ok, err := c.Eval(vals)
		if err != nil || !ok {
			return false, err
		}
	}
	return true, nil
}

// Candidates is a source of further points in the unit cube, drawn when a
// design point fails the constraints. *Sobol implements it; so does
// UniformCandidates.
type Candidates interface {
	Next() []float64
}

// UniformCandidates draws independent uniform points in [0,1)^k from a PCG
// generator seeded with seed.
type UniformCandidates struct {
	k   int
	rng *rand.Rand
}

// NewUniformCandidates returns a seeded source of uniform points in
// [0,1)^k. It panics if k < 1.
func NewUniformCandidates(k int, seed uint64) *UniformCandidates {
	if k < 1 {
		panic("doe: need at least one factor")
	}
	return &UniformCandidates{k: k, rng: newRand(seed, streamUniform)}
}

// Next returns a new uniform point.
func (u *UniformCandidates) Next() []float64 {
	p := make([]float64, u.k)
	for j := range p {
		p[j] = u.rng.Float64()
	}
	return p
}

// ConstrainOptions configures Constrain.
type ConstrainOptions struct {
	// Mapping turns unit points into the values the constraints read.
	// Required.
	Mapping Mapping
	// Candidates supplies replacements for failing points. Nil means the
	// design is structured (composite, Box–Behnken, factorial, Morris…):
	// failing points are dropped and reported, never moved.
	Candidates Candidates
	// Spread is how many feasible candidates are weighed for each
	// replacement; the one farthest (largest distance to its nearest
	// neighbour) from the points already kept wins, a greedy maximin fill.
	// 0 or 1 takes the first feasible candidate, which keeps the order of a
	// low-discrepancy sequence: use it with Sobol. A Spread of 10–50 suits a
	// Latin hypercube with uniform candidates.
	Spread int
	// MaxTries bounds the number of candidates drawn in all. Zero means
	// 10000 + 1000·(points to replace)·max(Spread, 1), so that a constraint
	// admitting less than about 0.1 % of the cube fails rather than runs on.
	MaxTries int
}

// ConstrainResult is the outcome of Constrain.
type ConstrainResult struct {
	// Points is the constrained design. With candidates, it has as many
	// rows as the design, replacements in the place of the failed rows;
	// without, the failing rows are left out and the others keep their
	// order.
	Points [][]float64
	// Replaced lists the indices of the design rows that failed and were
	// replaced.
	Replaced []int
	// Dropped lists the indices of the design rows that failed and were
	// left out (no candidate source).
	Dropped []int
	// Tried is the number of candidates drawn.
	Tried int
}

// Constrain checks every row of design against the constraints cs through
// opts.Mapping. Without opts.Candidates it drops the failing rows (the
// right treatment for structured designs, whose remaining runs keep their
// coded levels; note a Morris trajectory with a dropped row loses the
// effects of both its steps). With candidates it replaces each failing row
// in turn by a feasible candidate, the first one or, with Spread > 1, the
// best spread of Spread feasible candidates. Replaced rows of a Latin
// hypercube no longer keep the Latin property; a replaced Sobol' prefix is
// no longer a net, but stays a low-discrepancy set within the feasible
// region.
//
// It returns an error wrapping ErrInfeasible when every row of a
// structured design fails, or when MaxTries candidates did not supply the
// replacements; and the first evaluation error of a constraint. It panics
// if opts.Mapping is nil.
func Constrain(design [][]float64, cs []*Constraint, opts ConstrainOptions) (ConstrainResult, error) {
	if opts.Mapping == nil {
		panic("doe: Constrain needs a mapping")
	}
	checkRows(design)
	var res ConstrainResult
	ok := make([]bool, len(design))
	for i, p := range design {
		f, err := Feasible(p, opts.Mapping, cs)
		if err != nil {
			return ConstrainResult{}, fmt.Errorf("design point %d: %w", i+1, err)
		}
		ok[i] = f
	}
	if opts.Candidates == nil {
		for i, p := range design {
			if ok[i] {
				res.Points = append(res.Points, p)
			} else {
				res.Dropped = append(res.Dropped, i)
			}
		}
		if len(design) > 0 && len(res.Points) == 0 {
			return res, fmt.Errorf("%w: all %d design points fail the constraints", ErrInfeasible, len(design))
		}
		return res, nil
	}
	need := 0
	for _, f := range ok {
		if !f {
			need++
		}
	}
	spread := max(opts.Spread, 1)
	maxTries := opts.MaxTries
	if maxTries <= 0 {
		maxTries = 10000 + 1000*need*spread
	}
	res.Points = make([][]float64, len(design))
	var kept [][]float64
	for i, p := range design {
		if ok[i] {
			res.Points[i] = p
			kept = append(kept, p)
		}
	}
	found := 0
	for i := range design {
		if ok[i] {
			continue
		}
		var best []float64
		bestD := -1.0
		for n := 0; n < spread; {
			if res.Tried >= maxTries {
				return res, fmt.Errorf("%w: %d of %d candidates satisfied the constraints, %d of %d replacements found",
					ErrInfeasible, found, res.Tried, len(res.Replaced), need)
			}
			c := opts.Candidates.Next()
			res.Tried++
			if len(design) > 0 && len(c) != len(design[0]) {
				panic("doe: candidate dimension differs from the design's")
			}
			f, err := Feasible(c, opts.Mapping, cs)
			if err != nil {
				return res, fmt.Errorf("candidate point: %w", err)
			}
			if !f {
				continue
			}
			found++
			n++
			if spread == 1 {
				best = c
				break
			}
			d := math.Inf(1)
			for _, q := range kept {
				d = min(d, sqDist(c, q))
			}
			if d > bestD {
				best, bestD = c, d
			}
		}
		res.Points[i] = best
		kept = append(kept, best)
		res.Replaced = append(res.Replaced, i)
	}
	return res, nil
}
