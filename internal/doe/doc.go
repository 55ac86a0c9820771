// Package doe builds designs of experiments in the unit cube [0,1]^k.
//
// Every design returns points as rows of coordinates in [0,1]; mapping a
// coordinate to a parameter's value (range, integer level, categorical
// choice, log scale) is the recipe's job, so designs stay independent of
// units and parameter kinds. Designs that use randomness take an explicit
// seed (a PCG generator from math/rand/v2) and are reproducible from it.
//
// The designs, one file each:
//
//   - FullFactorial: every combination of equally spaced levels.
//   - LatinHypercube: a Latin hypercube optimised for the maximin
//     distance by the enhanced stochastic evolutionary algorithm of Jin,
//     Chen & Sudjianto (2005) on the Morris–Mitchell φ_p criterion;
//     RandomLatinHypercube is the unoptimised baseline.
//   - Sobol, SobolPoints: the Sobol' sequence with the Joe & Kuo (2008)
//     direction numbers, Gray-code order, optional Owen scrambling.
//   - CentralComposite, CentralCompositeCoded: circumscribed, inscribed
//     and face-centred central composite designs with rotatable α.
//   - BoxBehnken, BoxBehnkenCoded: Box–Behnken designs for 3 to 7 factors.
//   - OneAtATime: each factor moved alone around a baseline.
//   - Morris, MorrisEffects: elementary-effects screening trajectories and
//     their μ, μ*, σ summaries.
//
// Constraints (CompileConstraint, Constrain) reject design points whose
// parameter values fail a boolean expression, dropping them from structured
// designs or replacing them with further candidates for space-filling ones.
// MinDistance, PhiP and CenteredL2Discrepancy measure how well a design
// fills the cube.
//
// Structured designs also come in coded units (CentralCompositeCoded,
// BoxBehnkenCoded), the levels a response-surface fit uses.
package doe
