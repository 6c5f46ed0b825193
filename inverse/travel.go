package inverse

import "math"

// Path-averaged readings.
//
// A demodulated AC window is, to first order, the mean of the field along the path the
// sensor walked during the window, not the field at its mean position (near the peak
// over a line they differ by about L^2/(12 h^2) relative, L the travel, h the distance).
// With Problem.Travel set, every model value and derivative for reading i is the mean
// over the segment r_i - T_i .. r_i + T_i by three-point Gauss-Legendre quadrature
// (Abramowitz & Stegun, Handbook of Mathematical Functions, 25.4.29-30, cited from
// memory):
//
//	mean = (5 f(r - a T) + 8 f(r) + 5 f(r + a T)) / 18,   a = sqrt(3/5),
//
// exact for polynomials of degree five along the path. Its remainder on [-1, 1] is
// f^(6)/15750, so for the mean over the path T^6 f^(6)/31500; over a line at distance
// h, where the sixth derivative of 1/(1 + s^2) is 720 at s = 0, the relative error at
// the peak is about 720 (L/2h)^6 / 31500 = 3.6e-4 (L/h)^6 for a travel L = 2|T|,
// 2.3e-8 at L/h = 0.2. Simpson's rule (1/6, 4/6, 1/6 at -T, 0, T) at the same three
// evaluations leaves T^4 f''''/180, 24 (L/2h)^4/180 = 1.3e-5 at L/h = 0.2. The cost is
// three basis evaluations per reading instead of one; nothing when Travel is nil.

// gaussNode is the outer three-point Gauss-Legendre node on [-1, 1], sqrt(3/5).
var gaussNode = math.Sqrt(0.6)

// pathMean combines values at the nodes -gaussNode T, 0, +gaussNode T into the mean over
// the path. The weights sum exactly to one: a constant is returned unchanged.
func pathMean(lo, mid, hi float64) float64 { return (5*(lo+hi) + 8*mid) / 18 }
