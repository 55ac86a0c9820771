// File: Force coefficients, C = F/(½ρU²A) (textbook definition, common
// practice).

package history

import "math"

// DynamicPressure returns q = ½ ρ U², in Pa for ρ in kg/m^3 and U in m/s.
func DynamicPressure(rho, u float64) float64 {
	return 0.5 * rho * u * u
}

// Coefficient returns the force coefficient
//
//	C = F / (½ ρ U² A),
//
// with A a reference area for a 3D body, or a reference length for a 2D
// case whose force is per unit span. It panics unless ρ, U and A are
// positive and finite.
func Coefficient(f, rho, u, ref float64) float64 {
	for _, v := range []float64{rho, u, ref} {
		if !(v > 0) || math.IsInf(v, 1) {
			panic("history: coefficient needs positive finite density, speed and reference")
		}
	}
	return f / (DynamicPressure(rho, u) * ref)
}
