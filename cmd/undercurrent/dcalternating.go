package main

import (
	"fmt"
	"math"
	"sort"

	"gonum.org/v1/gonum/dsp/fourier"

	"undercurrent/ingest"
)

// An alternating field in a DC run.
//
// Without --freq, locate fits the readings as they are, as the field of
// direct currents. A log taken over an AC cable holds a field that
// alternates many times a second; the DC fits see it as noise hundreds of
// times the reading noise, find no current (the field averages to zero),
// and their warnings blamed conductors too close to part: over a live 20 A
// cable at 50 Hz every group read "no current found (no conductor under
// this group ...)" and nothing named --freq (found in review). So a DC run
// first looks for a spectral line in each log's readings: the power
// spectrum of the three axes, averaged over stretches of about a second
// (each with its straight-line trend removed, against the walk's slow
// anomalies and the Earth's field, and a Hann window against leakage). A
// line above altMinFreq that holds most of the readings' variation about
// those trends is named, with its RMS field and a --freq to give.

const (
	// altMinFreq is the lowest frequency searched for a line, Hz: above
	// the few hertz a walk over a conductor puts into the readings (as
	// calibrate's own search for a frequency).
	altMinFreq = 5
	// altShare is the least share of the readings' variation about their
	// trends that the line must hold to be named.
	altShare = 0.5
	// altMaxSegments bounds the stretches averaged.
	altMaxSegments = 256
)

// altSpectrum is the power spectrum of a DC log's readings (see above):
// power[k], k = 0 .. n/2, is |X_k|² of the windowed stretches of n
// readings, summed over the stretches (segs) and the three axes; total is
// the readings' variation about their trends, nT² summed over axes and
// readings.
type altSpectrum struct {
	power     []float64
	n, segs   int
	fs, sw2   float64
	total     float64
	lo        int // the lowest bin searched (altMinFreq, past the trends' leakage)
	noiseSq   float64
	noiseDone bool
}

// alternatingSpectrum returns the spectrum of the readings of s; ok is
// false when the log is sampled too slowly (under 4 altMinFreq) or too
// short for a stretch of 64 evenly spaced readings.
func alternatingSpectrum(s *ingest.Samples) (*altSpectrum, bool) {
	// The rate from the log's span, and runs broken only at real gaps
	// (dcClock): time stamps rounded to the millisecond or jittered left
	// no stretch evenly spaced to a per cent, and the mains went unseen
	// (found in review).
	fs, gap := dcClock(s)
	if !(fs >= 4*altMinFreq) || s.Len() < 64 {
		return nil, false
	}
	n := 64
	for n*2 <= min(65536, int(fs)) {
		n *= 2
	}
	fft := fourier.NewFFT(n)
	power := make([]float64, n/2+1)
	seq := make([]float64, n)
	win := make([]float64, n)
	var sw2 float64
	for i := range win {
		win[i] = 0.5 - 0.5*math.Cos(2*math.Pi*float64(i)/float64(n))
		sw2 += win[i] * win[i]
	}
	trend := newQuadTrend(n)
	var coef []complex128
	var total float64 // variation about the trends, nT² summed over axes and readings
	segs := 0
	cols := [3][]float64{s.Bx, s.By, s.Bz}
	for lo := 0; lo+n <= s.Len() && segs < altMaxSegments; {
		// No gap, in one group, finite: else start after the break.
		bad := -1
		for i := lo + 1; i < lo+n; i++ {
			st := s.Time[i] - s.Time[i-1]
			if st < 0 || st > gap || (s.Group != nil && s.Group[i] != s.Group[lo]) {
				bad = i
				break
			}
		}
		for i := lo; i < lo+n && bad < 0; i++ {
			for k := range cols {
				if v := cols[k][i]; math.IsNaN(v) || math.IsInf(v, 0) {
					bad = i + 1
					break
				}
			}
		}
		if bad >= 0 {
			lo = bad
			continue
		}
		for k := range cols {
			trend.residual(cols[k][lo:lo+n], seq)
			for i, r := range seq {
				total += r * r
				seq[i] = r * win[i]
			}
			coef = fft.Coefficients(coef, seq)
			for i, z := range coef {
				power[i] += real(z)*real(z) + imag(z)*imag(z)
			}
		}
		segs++
		lo += n
	}
	if segs == 0 || !(total > 0) {
		return nil, false
	}
	// From altMinFreq, and past the first bins, which hold what is left of
	// the trends through the window's leakage.
	lo := max(int(math.Ceil(altMinFreq/(fs/float64(n)))), 4)
	if lo >= n/2 {
		return nil, false
	}
	return &altSpectrum{power: power, n: n, segs: segs, fs: fs, sw2: sw2, total: total, lo: lo}, true
}

// lobe returns the mean square per reading, summed over the stretches
// and axes, of a line whose peak is at bin k: the bins of a Hann window's
// main lobe about it. By Parseval, a bin j of the one-sided spectrum of a
// windowed series holds (|X_j|² + |X_{n-j}|²)/n of sum (w y)², and a tone
// spread over the lobe loses sum w²/n of its mean square to the window.
// The Nyquist bin, n/2, is its own mirror and counts once: a tone there,
// a (-1)^i, puts n²a²/4 in it and n²a²/16 in each neighbour, whose
// mirrors the doubling of the neighbours counts.
func (a *altSpectrum) lobe(k int) float64 {
	var line float64
	for i := max(1, k-2); i <= min(a.n/2, k+2); i++ {
		w := 2.0
		if i == a.n/2 {
			w = 1
		}
		line += w * a.power[i] / float64(a.n)
	}
	return line / a.sw2
}

// bin returns the bin nearest frequency f, Hz; -1 when f lies outside
// the band searched.
func (a *altSpectrum) bin(f float64) int {
	k := int(math.Round(f * float64(a.n) / a.fs))
	if k < a.lo || k > a.n/2 {
		return -1
	}
	return k
}

// rmsAt returns the RMS field per component, nT, of a line at f, Hz (the
// lobe about its nearest bin); 0 when f is outside the band searched.
func (a *altSpectrum) rmsAt(f float64) float64 {
	k := a.bin(f)
	if k < 0 {
		return 0
	}
	return math.Sqrt(a.lobe(k) / float64(3*a.segs))
}

// noise returns the readings' noise per component, nT: from the median
// bin over the band searched, which lines and the trends' leakage leave
// alone (white noise of variance s² puts s² sum w² in every bin of every
// stretch and axis; the median of a sum of 6 segs squared normals is
// within a few per cent of its mean).
func (a *altSpectrum) noise() float64 {
	if !a.noiseDone {
		b := append([]float64(nil), a.power[a.lo:]...)
		sort.Float64s(b)
		a.noiseSq = b[len(b)/2] / (float64(3*a.segs) * a.sw2)
		a.noiseDone = true
	}
	return math.Sqrt(a.noiseSq)
}

// peak looks for the strongest spectral line in the band searched. It
// returns its frequency, Hz, its RMS field per component, nT, and the
// share of the readings' variation about their trends it holds; ok is
// false when there is none. The band reaches the Nyquist frequency, half
// the rate: there a line alternates in sign from reading to reading (the
// 50 Hz mains in a 100 Hz log), and was missed before, the search
// stopping a bin short and the lobe's power losing its peak bin (found
// in review: a 100 Hz DC survey beside a 50 Hz cable lost every
// traverse). At exactly the Nyquist frequency the readings hold
// a cos(phi) (-1)^i of a line a cos(2 pi f t + phi): the phase at the
// readings decides how much of it they see, none of one read at its
// zeros, which is then no harm to the fits.
func (a *altSpectrum) peak() (freq, rms, share float64, ok bool) {
	p := a.power
	peak := -1
	for i := a.lo; i <= a.n/2; i++ {
		if peak < 0 || p[i] > p[peak] {
			peak = i
		}
	}
	// A line is a peak, not the edge of the band searched.
	if peak <= a.lo || !(p[peak] > 0) || p[peak-1] > p[peak] {
		return 0, 0, 0, false
	}
	line := a.lobe(peak) // mean square per reading, summed over segments and axes
	share = line * float64(a.n) / a.total
	rms = math.Sqrt(line / float64(3*a.segs))
	// Parabolic interpolation of the log power for the frequency; at the
	// Nyquist bin the spectrum is symmetric about it.
	right := p[min(peak+1, a.n/2)]
	if peak == a.n/2 {
		right = p[peak-1]
	}
	delta := 0.0
	if p[peak-1] > 0 && right > 0 {
		x, y, z := math.Log(p[peak-1]), math.Log(p[peak]), math.Log(right)
		if den := x - 2*y + z; den != 0 {
			delta = 0.5 * (x - z) / den
		}
	}
	return (float64(peak) + delta) * a.fs / float64(a.n), rms, share, true
}

// alternatingLine looks for the strongest spectral line above altMinFreq
// in the readings of s (see above and altSpectrum.peak). It returns its
// frequency, Hz, its RMS field per component, nT, and the share of the
// readings' variation about their trends it holds; ok is false when the
// log is sampled too slowly (under 4 altMinFreq) or too short for a
// stretch of 64 evenly spaced readings, or holds no line.
func alternatingLine(s *ingest.Samples) (freq, rms, share float64, ok bool) {
	a, ok := alternatingSpectrum(s)
	if !ok {
		return 0, 0, 0, false
	}
	return a.peak()
}

// alternatingWarning names an alternating field in the DC log s at path
// (alternatingLine) when its line holds at least altShare of the
// readings' variation; "" when none does. mains is the mains frequency
// the run was told of (--dc-mains), 0 when none: a line at it, or at
// 50 or 60 Hz, or where either lands in a log too slow to hold it (an
// alias), is worded as the mains, with how to keep the DC survey; --freq
// locates the AC conductor, not the direct current.
func alternatingWarning(path string, s *ingest.Samples, mains float64) string {
	f, rms, share, ok := alternatingLine(s)
	if !ok || share < altShare {
		return ""
	}
	fs, _ := dcClock(s)
	cands := []float64{50, 60}
	if mains > 0 {
		cands = []float64{mains}
	}
	head := fmt.Sprintf("%s: the field alternates at about %.3g Hz (%.3g nT RMS per component, %.0f%% of the readings' variation about their trends): the readings were fitted as the field of direct currents, in which an alternating one averages away, so fits that find no current or miss the readings may sit over a live AC conductor",
		path, f, rms, 100*math.Min(1, share))
	for _, m := range cands {
		if math.Abs(f-m) < 0.02*m {
			return fmt.Sprintf("%s; it is the %g Hz mains: %s", head, m, slowMainsAdvice(m))
		}
		// A harmonic of the mains: on a DC survey most often a
		// rectifier's ripple on the direct current itself, which whole
		// mains cycles cancel as they cancel the mains (before, it was
		// named only as a live AC conductor, to be located with --freq
		// 100; found in review).
		if h := mainsHarmonic(f, m); h > 1 {
			return fmt.Sprintf("%s; it is %s the %g Hz mains' frequency: %s, which averaging over whole mains cycles cancels too: %s", head, harmonicWord(h), m, rippleWhat, slowMainsAdvice(m))
		}
		// The mains in a log at a rate under twice theirs lands at
		// |m - k fs| for the nearest k.
		if fs > 0 && fs < 2*m {
			alias := math.Abs(m - math.Round(m/fs)*fs)
			if math.Abs(f-alias) < 0.02*m {
				return fmt.Sprintf("%s; at %.3g readings a second the %g Hz mains land there (an alias: the log is too slow to hold their cycles): %s", head, fs, m, slowMainsAdvice(m))
			}
		}
	}
	give := fmt.Sprintf("%.3g", f)
	if math.Abs(f-16.7) < 0.02*16.7 {
		give = "16.7"
	}
	return fmt.Sprintf("%s; to locate it, give --freq %s", head, give)
}

// quadTrend removes the least-squares quadratic in the index from n
// readings: the walk's slow anomaly over a stretch, which a straight line
// leaves curving (a DC pipe walked over at 1 m/s put half the variation
// left by a straight line near 6 Hz through the window's leakage).
type quadTrend struct {
	p [3][]float64 // orthonormal polynomials of degree 0, 1, 2 over the index
}

func newQuadTrend(n int) *quadTrend {
	q := &quadTrend{}
	for d := range 3 {
		v := make([]float64, n)
		for i := range v {
			x := 2*float64(i)/float64(n-1) - 1
			v[i] = math.Pow(x, float64(d))
		}
		// Gram-Schmidt against the lower degrees.
		for e := 0; e < d; e++ {
			var dot float64
			for i := range v {
				dot += v[i] * q.p[e][i]
			}
			for i := range v {
				v[i] -= dot * q.p[e][i]
			}
		}
		var nn float64
		for _, x := range v {
			nn += x * x
		}
		nn = math.Sqrt(nn)
		for i := range v {
			v[i] /= nn
		}
		q.p[d] = v
	}
	return q
}

// residual writes y less its quadratic trend to out (of y's length).
func (q *quadTrend) residual(y, out []float64) {
	copy(out, y)
	for _, p := range q.p {
		var dot float64
		for j, v := range y {
			dot += v * p[j]
		}
		for j := range out {
			out[j] -= dot * p[j]
		}
	}
}
