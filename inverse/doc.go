// Package inverse holds the physics core of undercurrent: forward models of the magnetic
// field of currents and magnetised objects, and the separable least-squares solver that
// finds conductors, their currents and their uncertainties from three-axis field
// readings.
//
// A caller needs only Problem (readings at positions), Settings (nil is fine),
// FitLines or FitStrengths, and Result.
//
// # Units and frames
//
// Positions are metres in a local east, north, up frame; readings are nanotesla on the
// same axes; currents are amperes (RMS for AC phasors); the forward models return tesla.
// Mu0 is the CODATA 2022 value (NIST), defined once.
//
// # Forward models
//
// Every model is linear in its strength, B(r) = Phi(r; geometry) c, and gives analytic
// derivatives with respect to its geometry (FieldJac), checked against finite
// differences in the tests.
//
//	Line        infinite straight filament through p0 along unit u (Biot-Savart/Ampere):
//	              rho = (r - p0) - ((r - p0).u) u,   B = (mu0 I / 2 pi) (u x rho) / |rho|^2
//	Segment     finite filament a -> b (Hanson & Hirshman, Phys. Plasmas 9(10), 4410, 2002):
//	              Ri = r - a, Rf = r - b, c = Ri x Rf,
//	              B = (mu0 I / 4 pi) c (|Ri| + |Rf|) / (|Ri||Rf| (|Ri||Rf| + Ri.Rf))
//	            evaluated without cancellation: when Ri.Rf < 0,
//	              |Ri||Rf| + Ri.Rf = |c|^2 / (|Ri||Rf| - Ri.Rf),
//	            and c = (b - a) x (r - m) with m the midpoint.
//	Polyline    chain of segments, one current per segment (current lost along a route).
//	Dipole      B = (mu0 / 4 pi) (3 rhat (m . rhat) - m) / |r|^3.
//	Background  uniform field B0 plus optionally a source-free gradient G (symmetric,
//	            traceless: five terms) about an origin.
//
// # Line parametrisation
//
// A fitted line crosses a vertical plane through the centroid of the readings, fixed
// perpendicular to its starting direction, at offset s along the plane and height z; its
// direction is
//
//	u = (sin az cos dip, cos az cos dip, -sin dip)
//
// with az the azimuth clockwise from north and dip positive descending along u. Over
// several traverses az and dip are fitted from the start. A single three-axis traverse
// determines them too: B_line = (mu0 I / 2 pi) u x d / |d|^2 is perpendicular to u
// everywhere, so as the sensor passes over the line the background-free field vectors
// sweep the plane perpendicular to u, and that plane fixes u. To first order a turn
// delta_az about the vertical puts a component delta_az B_across out of the traverse's
// vertical plane (along the line), and a tilt delta_dip puts delta_dip B_up there;
// both vary along the traverse, so a uniform background cannot absorb them (only a one-
// or two-component log would lose them). The plane of the traverse is then the crossing
// plane, so s and z are the line's crossing of it, and at zero offset their derivatives
// are orthogonal to those of az and dip: freeing the angles leaves the Cramer-Rao bound
// on current and depth unchanged to first order. A single-traverse line is first fitted
// with az perpendicular and dip 0 held (the seeding of the crossing is made for that),
// then released and iterated from there, with az kept within 80 degrees of the
// perpendicular (a line turned along the traverse no longer varies along it, and its
// crossing runs off to infinity). A line ending within 10 degrees of that bound is
// refitted with the bound at 88 degrees; when that turns it beyond 80 degrees and fits
// better, the bound, not the readings, stopped it, and it is taken as at the bound.
// When the covariance shows the angles not determined (rank loss, a sigma above 15
// degrees) or az is at that bound, a count of lines with such a line is rejected, and
// for the final fit (or when its line lies at the edge of the search region, or its
// strongest line crosses the traverse's line beyond the readings' ends more than 60
// degrees from the perpendicular) the angles are held perpendicular and level again and
// reported as not identifiable, with a note saying why (for the bound, that the line
// would cross the traverse at under 10 degrees, which a single traverse is not fitted
// for). Settings.Azimuth and Settings.Dip hold them on request. Bounds
// keep every line at least Settings.MinDepth below the lowest sensor.
//
// # Separable least squares (variable projection)
//
// With the geometry theta fixed, the strengths c (currents, background) solve a linear
// problem, c(theta) = Phi(theta)^+ y, so only theta is iterated on the reduced residual
//
//	r(theta) = P_perp(theta) y,  P_perp = I - Phi Phi^+
//
// (Golub & Pereyra, SIAM J. Numer. Anal. 10(2):413-432, 1973; review in Inverse Problems
// 19:R1-R26, 2003). Phi = QR by Householder reflections; the residual handed to the
// optimiser is Q2^T y and its Jacobian Kaufman's approximation -Q2^T (dPhi/dtheta) c
// (Kaufman, BIT 15:49-57, 1975), which gives the exact gradient. AC phasor readings are
// stacked as real and imaginary parts sharing one geometry: the strengths become complex
// currents, reported as RMS magnitude and phase.
//
// The uniform background is projected out analytically. Its three basis columns B (one
// per axis, the row weights on that axis's rows and zero elsewhere) have disjoint
// supports, so with Phi = [L, B]
//
//	P_perp = P_perp(P_B L) P_B,   P_B v = v - B (B^T B)^-1 B^T v   (a weighted mean per axis)
//
// and only the projected line and dipole columns P_B L are factored by Householder QR;
// the background strengths follow as c_B = (B^T B)^-1 B^T (y - L c_L). The projected
// residual and Kaufman's Jacobian become Q2^T P_B y and -Q2^T P_B (dPhi/dtheta) c, with
// the same norm and the same gradient as before, at a fraction of the cost.
//
// # Path-averaged readings
//
// A demodulated AC window holds, to first order, the mean of the field along the path
// the sensor walked during the window, not the field at its mean position; near the
// peak over a line at distance h they differ by about L^2/(12 h^2) relative for a
// travel L. With Problem.Travel set (the half-travel T_i of each reading), every model
// value, derivative and basis column for reading i is the mean over the segment
// r_i - T_i .. r_i + T_i by three-point Gauss-Legendre quadrature,
//
//	mean f = (5 f(r - a T) + 8 f(r) + 5 f(r + a T)) / 18,   a = sqrt(3/5)
//
// (Abramowitz & Stegun 25.4.29-30, from memory), exact for a field of degree five
// along the path; the remainder, T^6 f^(6)/31500, is about 3.6e-4 (L/h)^6 of the peak
// field of a line (2.3e-8 at L/h = 0.2, where Simpson's rule at the same cost leaves
// 1.3e-5). The path does not depend on the geometry, so the Jacobian is the same
// weighted sum of the Jacobians at the nodes: fillPhi and dPhiC evaluate the point
// models at the three node sets and combine them, and everything downstream (the
// uniform-background projection, the Householder factors, the covariance, the
// residuals) is unchanged. FitStrengths and StrengthsRSS average their basis the same
// way. The cost is three basis evaluations per reading; nothing when Travel is nil.
// Seeding reads the field at the centre points, which is close enough to start from.
//
// # Currents that vary in time by a known ratio
//
// Every source is linear in its strength (DOMAIN.md, forward models), so when each
// conductor's current at reading i is r_i times its value at r = 1 (a DC traction load
// recorded at the rectifier, r_i = I_ref(t_i) / mean I_ref), the model stays separable:
//
//	B_i = bg + r_i Phi_i(theta) c
//
// With Problem.Scale = r, fillPhi and dPhiC multiply the rows of the line columns and
// of their derivatives by r_i after the path average, before the row weights; a
// dipole (a magnetised object, whose field does not follow the current) and the
// background are left alone. The strengths fitted are then those
// at r = 1. Seeding reads the unscaled anomaly, which is close enough to start from.
//
// # Levenberg-Marquardt
//
// The optimiser is Levenberg-Marquardt with scaled trust-region steps (J. J. More,
// "The Levenberg-Marquardt algorithm: implementation and theory", Numerical Analysis,
// Springer LNM 630, 105-116, 1978): at each iteration the column-scaled Jacobian
// J D^-1 is factored by QR (never J^T J); the step p minimises ||J p + r|| subject to
// ||D p|| <= Delta, found on the small triangular factor through its singular value
// decomposition and a safeguarded Newton iteration for the Levenberg parameter. When
// the factor R is well conditioned (||R||_F ||R^-1||_F, a bound on its condition
// number, four orders of magnitude below the level at which the SVD would drop a
// singular value) and the Gauss-Newton step R^-1 Q^T r lies within the region, that
// step is taken by back substitution and the SVD is not formed: the same step in exact
// arithmetic, for n^3/6 flops (R^-1, for the bound) instead of the Jacobi sweeps'
// several n^3. The radius grows or shrinks with the ratio of actual to predicted
// reduction. Simple bounds
// are kept by freezing components on a bound whose gradient points outwards and
// projecting trial points. The engine reproduces the NIST StRD certified values for
// Misra1a and MGH09 from both certified starts. Result.Status says why it stopped. Line
// fits also stop when a step changes chi-square by less than 1e-4: the parameters are
// then within about 0.015 standard errors of the minimum (converged to the noise floor).
//
// The small dense factorisations are done in the package on contiguous columns
// (house.go): Householder QR in the LAPACK convention (Golub & Van Loan, Matrix
// Computations, 4th ed., 5.1) and the singular value decomposition of the small
// triangular factors by one-sided Jacobi rotations (Demmel & Veselic, SIAM J. Matrix
// Anal. Appl. 13(4):1204-1245, 1992), both checked against gonum in the tests. A
// reflector's inner products with two or four columns are formed in one pass (dotPair,
// dotQuad: amd64 assembly that sums each product exactly as gonum's floats.Dot does, so
// the numbers are the same bit for bit; elsewhere they are floats.Dot calls). Where the
// processor has AVX2 (cpufeat.go), the QR and its updates run AVX2 kernels that also form
// the next reflector's inner products in the pass that applies the current one
// (housekern_amd64.s), and the line basis and its derivatives are computed for four
// readings at a time (linekern_amd64.s); both do the same operations in the same order as
// the portable code, without fused multiply-adds, so on amd64 the answers are the same
// with or without AVX2, which the tests check bit for bit. The work buffers of a FitLines call are
// lent by a pooled scratch and reused by the next call (scratch.go); the Result holds
// none of them.
//
// # Starting values and the number of conductors
//
// No starting guess is needed. Starts come from the field itself (common practice, see
// DOMAIN.md): the horizontal component across a line peaks over it and its half-width at
// half maximum equals the depth below the sensor; the horizontal anomaly at the peak is
// perpendicular to the line, and the region above half the peak is elongated along it.
// Starts are ranked by their projected sum of squares and the best are iterated. On
// surveys of more than 256 readings the ranking uses an evenly spaced subsample of about
// 128, and a start of one line (or of the count the caller set) is iterated there to
// convergence before the polish on every reading, which then needs one or two iterations
// to reach the full data's minimum (lines the automatic count tries beyond those and
// starts with magnetised objects go straight to the full data). For K
// lines the starts are the best K-1 fit plus a line at the peak of its residual, or one of
// its lines split into a close pair (a cable and its return). When the K-1 fit was
// refitted as a go-and-return pair and the K-line fit misses the noise, the same starts
// are grown from the K-1 lines as polished before that refit too: a pair that two
// lines collapse into can stand for three conductors metres apart, which starts beside
// the pair do not reach.
//
// With Settings.Count = 0 the count K = 1..4 is chosen by an information criterion,
//
//	AIC = chi2 + 2k,  BIC = chi2 + k ln N   (N ln(RSS/N) in place of chi2 when the noise
//	                                          is estimated)
//
// with an over-fitting guard: a further line is accepted only if the criterion falls and
// every line's current differs from zero by more than three sigma, no line sits on a
// bound, and no two lines coincide within their uncertainty (a line with no current has
// no identifiable position). Result.Criteria reports the values.
//
// # Ferrous objects
//
// A magnetised object (a valve, a buried drum) has a dipole field that a line fit would
// absorb as a spurious or biased current. Settings.Dipoles fits point dipoles with the
// lines, each seeded under the peak of the residual of the fit without it, with its
// position and moment (three more linear strengths) reported with sigmas.
//
// # Uncertainty
//
// The covariance comes from the full Jacobian [d(Phi c)/dtheta, Phi] at the solution,
// not from the reduced problem:
//
//	C = s^2 (J^T J)^-1,  s^2 = Problem.Sigma^2, or RSS/(N - k) when Sigma is zero
//
// computed from the singular value decomposition of the column-scaled J (after QR; the
// triangular factor of J is assembled from the variable projection's own factors, the
// background and basis blocks known in closed form and only the geometry block factored
// anew, which gives R^T R = J^T J without forming J), so a
// rank-deficient direction is detected and the quantities depending on it are reported
// as not identifiable instead of with a meaningless sigma. Reported quantities (current,
// phase, depth, offset, azimuth, dip) get their sigmas by the delta method. On the
// DOMAIN.md Cramer-Rao example the empirical scatter over repeated noisy surveys matches
// the bound and the reported sigmas.
//
// # Robust fitting
//
// Settings.Robust applies Huber weights by iterative reweighting (Huber, Ann. Math.
// Statist. 35(1):73-101, 1964; Holland & Welsch, Commun. Statist. A6(9):813-827, 1977):
// threshold 1.345 robust standard deviations, scale 1.4826 times the median absolute
// deviation of the residuals (citation details from memory). The covariance of such a
// fit is Huber's asymptotic covariance of an M-estimate of regression (Huber, Robust
// Statistics, Wiley 1981, section 7.6; from memory), with the robust scale s:
//
//	cov = K^2 [sum psi(r_i/s)^2 / (n-p)] / [mean psi'(r_i/s)]^2 s^2 (J^T J)^-1
//	K   = 1 + (p/n) var(psi') / [mean psi']^2
//
// J the unweighted full Jacobian; on Gaussian noise its sigmas are 1/sqrt(0.95) times
// the least-squares ones (TestRobustSigmasGaussianNoise). With Problem.Sigma given the
// covariance is sigma^2 (J^T W J)^-1 with the final weights W.
package inverse
