package main

import (
	"fmt"
	"math"

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

// alternatingLine looks for the strongest spectral line above altMinFreq
// in the readings of s (see above). It returns its frequency, Hz, its RMS
// field per component, nT, and the share of the readings' variation about
// their trends it holds; ok is false when the log is sampled too slowly
// (under 4 altMinFreq) or too short for a stretch of 64 evenly spaced
// readings.
func alternatingLine(s *ingest.Samples) (freq, rms, share float64, ok bool) {
	// The rate from the log's span, and runs broken only at real gaps
	// (dcClock): time stamps rounded to the millisecond or jittered left
	// no stretch evenly spaced to a per cent, and the mains went unseen
	// (found in review).
	fs, gap := dcClock(s)
	if !(fs >= 4*altMinFreq) || s.Len() < 64 {
		return 0, 0, 0, false
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
		return 0, 0, 0, false
	}
	df := fs / float64(n)
	// From altMinFreq, and past the first bins, which hold what is left of
	// the trends through the window's leakage.
	lo := max(int(math.Ceil(altMinFreq/df)), 4)
	peak := -1
	for i := lo; i < len(power)-1; i++ {
		if peak < 0 || power[i] > power[peak] {
			peak = i
		}
	}
	// A line is a peak, not the edge of the band searched.
	if peak <= lo || !(power[peak] > 0) || power[peak-1] > power[peak] {
		return 0, 0, 0, false
	}
	// The line's power: the bins of a Hann window's main lobe about the
	// peak. By Parseval, a bin k of the one-sided spectrum of a windowed
	// series holds (|X_k|² + |X_{n-k}|²)/n of sum (w y)², and a tone
	// spread over the lobe loses sum w²/n of its mean square to the window.
	var line float64
	for i := max(1, peak-2); i <= min(len(power)-2, peak+2); i++ {
		line += 2 * power[i] / float64(n)
	}
	line /= sw2 // mean square per reading, summed over segments and axes
	share = line * float64(n) / total
	rms = math.Sqrt(line / float64(3*segs))
	// Parabolic interpolation of the log power for the frequency.
	delta := 0.0
	if power[peak-1] > 0 && power[peak+1] > 0 {
		a, b, g := math.Log(power[peak-1]), math.Log(power[peak]), math.Log(power[peak+1])
		if den := a - 2*b + g; den != 0 {
			delta = 0.5 * (a - g) / den
		}
	}
	return (float64(peak) + delta) * df, rms, share, true
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
