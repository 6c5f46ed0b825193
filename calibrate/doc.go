// Package calibrate turns raw magnetometer readings into fields a physicist
// would trust, and records what it did. It sits between ingest and inverse:
// it imports ingest for the Samples type and nothing downstream.
//
// Every algorithm works on plain slices ([][3]float64, []float64); thin
// adapters apply them to *ingest.Samples in place.
//
// # Sensor calibration (hard and soft iron)
//
// A three-axis sensor turned through many orientations in a steady field F
// reads points on an ellipsoid rather than a sphere:
//
//	r = D b + o,   |b| = F,
//
// with o the hard-iron offset and D the combined soft-iron, scale and
// non-orthogonality distortion. FitEllipsoid fits the general quadric
//
//	a x² + b y² + c z² + 2f yz + 2g xz + 2h xy + 2p x + 2q y + 2r z + d = 0
//
// by the direct algebraic method of Li and Griffiths (Proc. Geometric
// Modeling and Processing 2004, 335-340), which imposes 4J - I² = 1 with
// I = a+b+c and J = ab+bc+ca-f²-g²-h² so that the solution is an ellipsoid,
// and solves the resulting generalised eigenproblem. Writing the quadric as
// (r-o)ᵀ A (r-o) = 1 gives the offset o and the correction
//
//	W = s A^(1/2),   corrected = W (r - o),
//
// where A^(1/2) is the symmetric square root and s scales the result to a
// reference field (given) or to the radius of the sphere with the fitted
// ellipsoid's volume (det W = 1). An optional Gauss-Newton refinement then
// minimises Σ (|W(r-o)| - F)² over o and the six entries of the symmetric
// W, in the spirit of the maximum-likelihood refinement of Vasconcelos et
// al. (IEEE Trans. Aerosp. Electron. Syst. 47(2), 2011). Any fit fixes W
// only up to a rotation; the symmetric choice is the one nearest the
// identity.
//
// A spin log that does not turn the sensor enough cannot fix the ellipsoid.
// CheckCoverage looks at unit directions of the readings about a rough
// centre (trimmed of each axis's extreme 5%, so that one glitch does not
// move it): the eigenvalues of their scatter matrix (each 1/3 for even
// coverage; near zero when the field never came near some direction of
// the sensor, as after a turn about one axis or whole turns about two:
// refused, naming that direction) and the fraction of readings in each of the six caps around ±x,
// ±y, ±z (a sparse cap is only a warning). What decides is whether the fit
// determines every parameter: FitEllipsoid refuses a spin whose offset or
// matrix terms it knows worse than 0.2% of the field (a spin turned about
// two axes only leaves one matrix term free), and leaves out saturated
// readings (an axis repeating its extreme, lying inside the fitted
// ellipsoid) and spikes.
//
// The flip method (fluxgate observatory practice) reads the field at 0 and
// 180 degrees of rotation about one axis: the two perpendicular components
// change sign and their offsets are (r0 + r180)/2. A zero-field offset is
// the mean reading inside a magnetic shield.
//
// # Base-station (diurnal) correction
//
// Common survey practice: the departure of a fixed base station from its
// reference value (median, first value or given), linearly interpolated to
// the rover's timestamps, is subtracted from the rover in a common frame.
// At Boulder in November 2014 the daily range in H was 34-81 nT (DOMAIN.md),
// as large as the field of 10 A at 40 m, so DC surveys need it.
//
// # Tilt
//
// Attitude follows the aerospace convention. The body frame is x forward,
// y right, z down. Roll φ, pitch θ and yaw ψ (degrees; yaw is the heading,
// clockwise from north) compose intrinsically in the order Z-Y-X:
//
//	R_nb = Rz(ψ) Ry(θ) Rx(φ),   v_NED = R_nb v_body,
//
// and east-north-up is v_ENU = (v_E, v_N, -v_D).
// A quaternion (qw, qx, qy, qz) is a Hamilton quaternion, scalar first,
// describing the same body-to-NED rotation: v_NED = q v_body q*.
//
// # Despiking
//
// A Hampel filter: a reading is a spike when it departs from the median of
// its neighbours by more than k times the scaled median absolute deviation
// 1.4826 MAD (Hampel 1974, from memory; the 1.4826 makes the MAD a
// consistent estimate of a normal standard deviation). The defaults, a
// 21-sample window and k = 5, flag under 0.1% of white Gaussian noise per
// axis. Rows with a missing field value go too, and the report says how
// many of each.
//
// # Order of the stages
//
// Sensor calibration belongs to the sensor frame, so the order (that of
// the locate command) is: apply the calibration, tilt to east-north-up,
// despike (or only look for spikes and warn), base-station correction,
// then demodulation (AC) or the DC fit downstream.
//
// # AC demodulation
//
// In each window the readings of one axis are fitted by least squares with
//
//	y(t) = a cos ωτ + b sin ωτ + c  [+ harmonics] [+ d τ [+ e P2 + g P3]],   τ = t - t0,
//
// the three-parameter sine fit of IEEE Std 1057 and IEEE Std 1241 (known
// frequency, linear in a, b, c). The constant absorbs the Earth's field and
// the optional linear term slow drift; in Demodulate's windows of
// MinBackgroundCycles or more that term comes with the quadratic and cubic
// Legendre polynomials P2, P3 of the window's time, for a steady field
// walked through near its source (DemodSettings.Drift). The complex RMS
// phasor, referenced to absolute time so that windows are phase-coherent
// at a steady frequency, is
//
//	B = (a - i b)/√2 · exp(-i ω t0),   y(t) = √2 Re(B exp(i ω t)) + ...
//
// On a uniformly sampled log every window of N samples shares the same
// basis relative to its first sample, so the normal matrix XᵀX and its
// inverse are computed once; a window then costs a few multiply-adds per
// sample. A window off that grid (one spanning a single missing sample: a
// longer pause, a repeated time or a step back ends a run, and the windows
// lost are counted in DemodResult.Losses) is fitted on its own time
// stamps. When the frequency is unknown, the four-parameter fit of the same
// standards linearises in the frequency and iterates (Gauss-Newton) from a
// spectral estimate: each iteration is one pass over the window's samples
// building the small normal matrix of the well-conditioned sine basis (its
// columns are nearly orthogonal over whole cycles), solved by Cholesky, with
// the sines and cosines taken from rotation tables re-seeded every 32 samples
// so that rounding does not grow with the window's length.
//
// The three axes see one current, so they share one frequency: the fit is
// joint, each axis k with its own linear terms and its own noise variance
// σ_k², and maximises the profile likelihood of Gaussian white noise,
//
//	L(ω) = -(n/2) Σ_k log RSS_k(ω),
//
// RSS_k(ω) the residual sum of squares of axis k's linear fit at ω. Its
// stationary point is the weighted least-squares fit whose weights
// 1/σ_k² are those of its own residuals, and the iterations reach it by
// re-forming the weights from RSS_k at every step. The axes' linear
// parameters do not couple, so once each axis's are eliminated the
// frequency's normal equation is a sum over the axes of Schur complements
// q_k (and right-hand sides) weighted by 1/σ_k², and
//
//	var(ω) = 1 / Σ_k q_k/s_k²,
//
// the linearised covariance, which Window.FreqSigma reports (as Hz). For
// independent noises the Fisher informations of the axes add, so this
// follows the Cramér-Rao bound 1/Σ_k η_k Δ² N (N²-1)/12 (the one-tone
// bound of Rife and Boorstyn 1974 summed over the axes; η_k = A_k²/2σ_k²,
// Δ the sample interval): with equal noise the joint sigma is that of the
// strongest axis alone times sqrt(A_0²/Σ_k A_k²), 0.74 with comparable
// amplitudes of 100 and 90 nT RMS on two axes and 0.86 on the test field
// of the package's tests. An axis with no signal adds almost nothing (its
// q_k grows with the square of its amplitude) and its noise, however
// loud, only lowers its own weight; an axis that does not vary at all is
// left out. A window fitted with EstimateFreq keeps its phasors on the
// clock of the nominal frequency, at its own frequency about its centre
// (Window), so that windows fitted a few thousandths of a hertz apart stay
// phase-coherent.
//
// A 50.1 Hz tone fitted at exactly 50 Hz over 1 s keeps about 0.9835 of
// its amplitude (DOMAIN.md), which EstimateFreq avoids; but a fit of many
// windows needs the right frequency more: one off by δ turns the phase by
// 360 δ T degrees across a group of T seconds (264° for 0.073 Hz over a
// 10 s traverse), and the group's phasors are then not those of one steady
// field, whether the windows were fitted at their own frequencies or not.
// So mains work should demodulate at the field's frequency: given when it
// is known, else estimated from the whole log (Freq zero, with its sigma
// in DemodResult.FreqSigma), and checked by DemodResult.DriftHz, of which
// Demodulate warns when it turns a group's phase by more than
// MaxTurnDegrees.
//
// # Induction coils
//
// Faraday's law V = -N A μ dB/dt gives, for a sinusoid of frequency f,
// |B| = |V| / (N A μ 2π f) and B = i V / (N A μ ω) as phasors (DOMAIN.md:
// N = 1000, A = 1 cm², 50 Hz, 1 µT peak gives 3.14159e-5 V peak).
// CoilWindows applies it to demodulated windows. A coil whose response
// departs from the law (a resonance, a preamplifier) is given by a measured
// table of sensitivity and phase against frequency (CoilResponse,
// ReadCoilResponse), interpolated at each window's frequency and applied by
// SensitivityWindows. Neither touches the harmonics' phasors
// (DemodResult.Harmonics): HarmonicsToField converts them, harmonic h at
// h times the window's frequency.
package calibrate
