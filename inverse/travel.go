package inverse

import "math"

// Path-averaged readings (Problem.Travel): see the package documentation for the
// quadrature and its remainder.

// gaussNode is the outer three-point Gauss-Legendre node on [-1, 1], sqrt(3/5).
var gaussNode = math.Sqrt(0.6)

// pathMean combines values at the nodes -gaussNode T, 0, +gaussNode T into the mean over
// the path. The weights sum exactly to one: a constant is returned unchanged.
func pathMean(lo, mid, hi float64) float64 { return (5*(lo+hi) + 8*mid) / 18 }
