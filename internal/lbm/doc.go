// Package lbm is the built-in two-dimensional flow solver: a lattice
// Boltzmann solver for laminar flow past a body in a channel. It runs as a
// separate process (the `sweep lbm CASEFILE` subcommand), reads a case
// file and writes a force-coefficient history as plain text columns, as a
// user's own solver would, so newcomers and the tests get a real unsteady
// flow with a start-up transient, vortex shedding and a mean drag that
// depends on the geometry.
//
// It is a 2D laminar demonstrator for the study workflow, not a design tool
// for real vehicles.
//
// # Method
//
// D2Q9 lattice, two-relaxation-time (TRT) collision with the magic parameter
// Λ = (τ⁺ − 1/2)(τ⁻ − 1/2) = 1/4 (Ginzburg, Verhaeghe and d'Humières 2008,
// Commun. Comput. Phys. 3, 427-478) and the incompressible equilibrium of
// He and Luo (1997, J. Stat. Phys. 88, 927-944),
//
//	e_q = w_q (ρ + 3 c_q·j + 9/2 (c_q·j)² − 3/2 j²),  u = j/ρ₀,  ρ₀ = 1,
//
// so density only carries pressure (p = ρ/3) and a density offset does not
// change the velocity. Kinematic viscosity ν = (τ⁺ − 1/2)/3.
//
// Boundaries: Zou-He velocity inlet (uniform or parabolic profile) on the
// first column; partially non-reflecting pressure outlet; halfway
// bounce-back walls, optionally moving at the inflow speed (a rolling road)
// or free-slip; the body by the interpolated bounce-back of Bouzidi,
// Firdaouss and Lallemand (2001); force by momentum exchange (Ladd 1994).
// See boundary.go for the formulas.
//
// Start-up: the fluid starts at rest and the inflow rises as
// U(t) = U sin²(πt/(2T)) over the ramp time T. During the ramp the whole
// fluid is accelerated with the inflow by a uniform body force (applied as
// an equilibrium shift), so the channel needs no pressure gradient to set
// the fluid column moving; in a weakly compressible scheme that gradient
// would compress the fluid by Δρ ≈ 3 L_x dU/dt (lattice units), 10-20 % in
// the box case. The body sees the start-up as a smooth acceleration from
// rest, which gives the drag history its initial transient.
//
// # Lattice units
//
// Lengths are in units of the reference length L, with n = cells_per_length
// lattice cells per L; times are in convective units L/U. The lattice speed
// u of the reference velocity (the mean inflow speed) is chosen so that
// τ⁺ = 1/2 + 3 u n / Re is near 0.55 with the peak inflow speed between 0.05
// and 0.1 lattice units (Mach 0.09 to 0.17):
//
//	u = clamp(0.05 Re/(3n) · k, 0.05, 0.1) / k,  k = 1 (uniform) or 3/2 (parabolic),
//
// unless the case sets lattice_velocity. One step advances u/n convective
// units. Cases with τ⁺ − 1/2 below 0.03 (Re/n above about 10) are rejected:
// below that the scheme turns noisy at the moving ground and the inlet
// corners and then blows up. A run that blows up stops with ErrDiverged and
// the place it started.
//
// Coefficients: C_D = 2F_x/(ρ₀U²L), C_L = 2F_y/(ρ₀U²L) with F the force per
// unit span, U the final reference velocity and L the reference length
// (C = 2F/(u² n) in lattice units).
//
// # Case file
//
// TOML, every length in reference lengths, every time in convective units:
//
//	title = "..."                  # optional
//	[domain]
//	length, height                 # channel size; inlet at x = 0, ground at y = 0
//	cells_per_length               # resolution n
//	[flow]
//	reynolds                       # Re = U L / ν
//	inflow = "uniform" | "parabolic"
//	ramp_time = 1.0                # start-up time T
//	bottom = "wall" | "moving" | "slip"
//	top = "wall" | "slip"
//	lattice_velocity = 0.0         # 0: automatic
//	[body]
//	shape = "cylinder": center = [x, y], diameter
//	shape = "box": nose_x, length, height, clearance, nose_radius,
//	               taper_angle (degrees), taper_length
//	[run]
//	end_time | steps               # one of the two
//	output_interval, output        # history rows and file name
//	threads = 1                    # goroutines sharing the rows
//	steady_tolerance = 0.0         # > 0: stop once C_D, C_L settle
//
// Unknown keys and invalid values are reported with file:line and what to
// change (see CaseError).
//
// # Output
//
// The history file starts with the header line "# time Cd Cl" and has one
// row per output interval, flushed as written; on cancellation a last row
// for the current step is written before the file is closed. The log gives
// the case, τ⁺, τ⁻, the Mach number, progress and the lattice updates per
// second (MLUPS).
//
// # Validation
//
// Against the DFG benchmark (Schäfer and Turek 1996) and the high-accuracy
// 2D-1 values of Nabh (1998) via John and Matthies (2001), measured:
//
//	2D-1, Re 20, n = 20:  C_D 5.5952 (+0.28 %), C_L 0.00993 (−6.5 %)
//	2D-1, Re 20, n = 40:  C_D 5.5862 (+0.12 %), C_L 0.01036 (−2.4 %)
//	2D-2, Re 100, n = 20: St 0.2980, C_D max 3.285, C_L max 1.006
//	2D-2, Re 100, n = 40: St 0.3007, C_D max 3.268, C_L max 1.016
//
// (bands: St 0.295-0.305, C_D max 3.22-3.24, C_L max 0.99-1.01), and plane
// Poiseuille flow (profile within 0.11 % of the peak speed,
// pressure gradient within 0.2 % at 16 cells across).
package lbm
