// Package inverse holds the physics core of undercurrent: forward models of the magnetic
// field of currents and magnetised objects, and the separable least-squares solver that
// finds conductors from three-axis field readings.
//
// # Forward models
//
// All fields are in tesla, positions in metres (local east, north, up), currents in
// amperes. Every model is linear in its strength, B = Phi(geometry) c, which the solver
// exploits. Mu0 is the CODATA 2022 value.
//
//	Line      infinite filament, B = (mu0 I / 2 pi) (u x rho) / |rho|^2
//	Segment   finite filament (Hanson & Hirshman, Phys. Plasmas 9(10), 4410, 2002), in a
//	          cancellation-free form
//	Polyline  chain of segments, one current per segment
//	Dipole    point dipole, B = (mu0 / 4 pi)(3 rhat (m.rhat) - m)/r^3
//	Background uniform field with an optional source-free linear gradient
package inverse
