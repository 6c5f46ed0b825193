package live

import (
	"errors"
	"math"

	"gonum.org/v1/gonum/mat"

	"undercurrent/calibrate"
)

// Mains currents carry odd harmonics (the third most) and grids run a
// tenth or two of a hertz off nominal, so that a window is seldom a whole
// number of a harmonic's cycles: a fundamental-only sine fit then takes a
// share of the harmonic into the fundamental's phasor (the leak of one
// sinusoid into another over a window that is not a whole number of
// their beat's cycles), a bias of the window's currents that its sigmas
// do not hold, and a harmonic leads the frequency search astray. An AC
// window's sensors are demodulated (acPhasors), and its frequency
// searched (windowFrequency), with the harmonics the sample rate allows
// fitted beside the fundamental in one least-squares fit, as the spike
// filter (acSpikes) and the change test (windowChangeAC) fit them.

// acHarmonicCols fills row with the cosine and sine of harmonics 2 to H
// of the phase wtau (rad): row[2(h-2)] = cos(h wtau), row[2(h-2)+1] =
// sin(h wtau). It is the harmonic part of every live AC fit's basis.
func acHarmonicCols(row []float64, wtau float64, H int) {
	for h := 2; h <= H; h++ {
		sh, ch := math.Sincos(float64(h) * wtau)
		row[2*(h-2)], row[2*(h-2)+1] = ch, sh
	}
}

// acFitHarmonics is the highest harmonic fitted beside the fundamental
// (freq, Hz) to a sensor's readings at times t: acHarmonics at their
// mean rate, lowered until the readings hold acSamplesPerParam per column
// of the fit (acCols).
func acFitHarmonics(t []float64, freq float64) int {
	n := len(t)
	if n < 2 || !(t[n-1] > t[0]) {
		return 1
	}
	H := acHarmonics(float64(n-1)/(t[n-1]-t[0]), freq)
	for H > 1 && n < acSamplesPerParam*acCols(H) {
		H--
	}
	return H
}

// acSettings is the calibrate sine fit's settings for harmonics 2 to H,
// nil for none.
func acSettings(H int) *calibrate.SineSettings {
	if H <= 1 {
		return nil
	}
	set := &calibrate.SineSettings{}
	for h := 2; h <= H; h++ {
		set.Harmonics = append(set.Harmonics, h)
	}
	return set
}

var errACFit = errors.New("AC fit: too few readings for the fundamental and its harmonics, or their basis is singular")

// phaseRef is the reference of an AC window's phases: a cosine of the
// site's frequency (nominal, Hz) peaking at the Unix epoch, read at the
// time at, s (the window's middle). Every phasor of a window, of each
// sensor, of the window's parts (windowChangeAC) and of each harmonic, is
// the phase of its sinusoid at that time against that cosine, so that
// the phases of one window share one reference, and a frequency found
// off nominal (windowFrequency) is carried from the readings to the
// reference time only, within the window: an error df of it turns the
// phase by 360 df (at - tmid) degrees, tmid the middle of the readings,
// not by 360 df at (some 5e6 degrees for 1e-5 Hz at Unix times near
// 1.4e9 s, which the phasors' reference to absolute time through the
// found frequency gave).
type phaseRef struct {
	nominal, at float64
}

// turn is the phase, radians, by which a local phasor of harmonic h at
// freq (Hz) whose basis starts at t0 is turned to the reference: h times
// the phase the found frequency advances from t0 to the reference time
// less that of the nominal cosine at the reference time.
func (r phaseRef) turn(h int, freq, t0 float64) float64 {
	adv := math.Mod(freq*(r.at-t0), 1)
	ref := math.Mod(r.nominal*r.at, 1)
	return 2 * math.Pi * math.Mod(float64(h)*(adv-ref), 1)
}

// acPhasors fits the fundamental at freq (Hz), a constant and harmonics
// 2 to H (acHarmonicCols) to the three axes of readings at times t by one
// least-squares fit (QR), and returns each axis's RMS phasor of the
// fundamental (y(t) = sqrt 2 Re(P exp(i phase(t))), P's phase referred
// to ref), the RMS phasors of harmonics 2 to H likewise (harm[h-2],
// harmonic h's phase referred to h times ref's), and the fit's noise
// gain: the factor g by which the sigma
// of each quadrature of the phasors exceeds sigma/sqrt(n), for readings
// of white noise sigma, from the fit's covariance (X^T X)^-1 (its mean
// over the fundamental's two coefficients). g is 1 over whole cycles of
// evenly spaced readings, and grows when the harmonics' columns are not
// orthogonal to the fundamental's over the readings. scatter is the
// readings' own noise about the fit, nT per reading: the RMS over the
// three axes of each axis's residual standard deviation,
// sqrt(RSS / (n - p)) for p fitted columns (the unbiased estimate of the
// variance of least-squares residuals); 0 when fewer than
// scatterSamples degrees of freedom are left to estimate it.
func acPhasors(t []float64, axes [3][]float64, freq float64, H int, ref phaseRef) (ph [3]complex128, harm [][3]complex128, g, scatter float64, err error) {
	n := len(t)
	p := acCols(H)
	if n <= p || !(freq > 0) {
		return ph, nil, 0, 0, errACFit
	}
	t0 := t[0]
	w := 2 * math.Pi * freq
	X := mat.NewDense(n, p, nil)
	Y := mat.NewDense(n, 3, nil)
	for i, ti := range t {
		row := X.RawRowView(i)
		wtau := w * (ti - t0)
		row[1], row[0] = math.Sincos(wtau)
		row[2] = 1
		acHarmonicCols(row[3:], wtau, H)
		Y.Set(i, 0, axes[0][i])
		Y.Set(i, 1, axes[1][i])
		Y.Set(i, 2, axes[2][i])
	}
	var qr mat.QR
	qr.Factorize(X)
	var beta mat.Dense
	if err := qr.SolveTo(&beta, false, Y); err != nil {
		return ph, nil, 0, 0, errACFit
	}
	// The local RMS phasor of a cos/sin pair (a, b) is (a - ib)/sqrt 2,
	// turned to the reference.
	local := func(row, a, h int) complex128 {
		s, c := math.Sincos(ref.turn(h, freq, t0))
		return complex(beta.At(row, a), -beta.At(row+1, a)) / math.Sqrt2 * complex(c, s)
	}
	for a := range 3 {
		ph[a] = local(0, a, 1)
		if math.IsNaN(real(ph[a])) || math.IsNaN(imag(ph[a])) {
			return ph, nil, 0, 0, errACFit
		}
	}
	for h := 2; h <= H; h++ {
		var e [3]complex128
		for a := range 3 {
			e[a] = local(3+2*(h-2), a, h)
		}
		harm = append(harm, e)
	}
	// (X^T X)^-1 = R^-1 R^-T: its diagonal is the rows' sums of squares
	// of R^-1.
	var Rd mat.Dense
	qr.RTo(&Rd)
	R := mat.NewTriDense(p, mat.Upper, nil)
	for i := range p {
		for j := i; j < p; j++ {
			R.SetTri(i, j, Rd.At(i, j))
		}
	}
	var Ri mat.TriDense
	if err := Ri.InverseTri(R); err != nil {
		return ph, nil, 0, 0, errACFit
	}
	var c float64
	for i := range 2 {
		for j := i; j < p; j++ {
			c += Ri.At(i, j) * Ri.At(i, j)
		}
	}
	// Each of A and B has variance 2 sigma^2/n over whole cycles, and
	// each quadrature of the RMS phasor (A - iB)/sqrt 2 half their mean.
	g = math.Sqrt(c / 2 * float64(n) / 2)
	if !(g > 0) || math.IsInf(g, 0) {
		return ph, nil, 0, 0, errACFit
	}
	if n-p >= scatterSamples {
		var fit mat.Dense
		fit.Mul(X, &beta)
		var rss float64
		for i := range n {
			for a := range 3 {
				d := Y.At(i, a) - fit.At(i, a)
				rss += d * d
			}
		}
		scatter = math.Sqrt(rss / float64(3*(n-p)))
	}
	return ph, harm, g, scatter, nil
}
