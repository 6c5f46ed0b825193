package main

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"undercurrent/ingest"
	"undercurrent/report"
)

// An empty AC run from a wrong --freq.
//
// Demodulated at a frequency where the log holds no field, every window is
// noise: the frequency check finds too few windows with a clear signal and
// cannot decide, and every group reads "no current found". The check's
// warning counted the windows, and each group's note offered a conductor
// too deep or weak, while the likeliest cause, a --freq other than the one
// the current runs at, went unnamed (a 2 A tracer at 512 Hz located with
// --freq 640: three groups, no current, no word of the frequency). So when
// a log's frequency check could not decide (freqHints.unchecked) and no
// group of the run finds a current, locate says that --freq is the likely
// cause and names the spectral lines that stand out of the log's readings
// other than the mains (--mains, all their harmonics) and --freq itself:
// the frequencies to try. A line at --freq itself that stands out says the
// frequency is right (a current too weak for each window alone), and then
// nothing is said. The lines come from the DC run's spectrum
// (alternatingSpectrum: about one-second stretches, Hann-windowed, their
// trends removed), taken strongest first, each hiding the Hann window's
// side lobes about it (wrongFreqLobeBins), down to wrongFreqLineRatio of
// the spectrum's median bin.

const (
	// wrongFreqLineRatio is the least power of a line's peak bin over the
	// spectrum's median bin for it to be named: 20 dB, where the median
	// bin, a sum of 6 or more squared normals per stretch over many
	// stretches, lets noise reach a few times it at most.
	wrongFreqLineRatio = 100
	// wrongFreqLobeBins is how many bins either side of a stronger line a
	// peak must lie to count as a line of its own: beyond the Hann
	// window's first side lobes (-31 dB at 2.5 bins, under -60 dB past 8).
	wrongFreqLobeBins = 8
	// wrongFreqLines is the most lines named.
	wrongFreqLines = 3
)

// spectralLine is a line in a log's readings: its frequency, Hz, and RMS
// field per component, nT.
type spectralLine struct {
	freq, rms float64
}

// otherLines returns up to wrongFreqLines of the strongest spectral lines
// in the readings of s other than the mains (every harmonic of each of
// mains within the band) and freq, strongest first; nil when the log is
// too slow or short for a spectrum (alternatingSpectrum) or none stands
// out. atFreq is true when a line stands out at freq itself.
func otherLines(s *ingest.Samples, freq float64, mains []float64) (lines []spectralLine, atFreq bool) {
	a, ok := alternatingSpectrum(s)
	if !ok {
		return nil, false
	}
	p := a.power
	med := append([]float64(nil), p[a.lo:]...)
	sort.Float64s(med)
	floor := med[len(med)/2]
	var peaks []int
	for k := a.lo + 1; k < a.n/2; k++ {
		if p[k] > p[k-1] && p[k] >= p[k+1] && p[k] > wrongFreqLineRatio*floor {
			peaks = append(peaks, k)
		}
	}
	sort.Slice(peaks, func(i, j int) bool { return p[peaks[i]] > p[peaks[j]] })
	bw := a.fs / float64(a.n)
	near := func(f, g float64) bool { return math.Abs(f-g) <= 1.5*bw }
	var taken []int
	for _, k := range peaks {
		lobe := false
		for _, t := range taken {
			if d := k - t; d <= wrongFreqLobeBins && d >= -wrongFreqLobeBins {
				lobe = true
				break
			}
		}
		if lobe {
			continue
		}
		taken = append(taken, k)
		f := a.interpolated(k)
		other := !near(f, freq)
		atFreq = atFreq || !other
		for _, m := range mains {
			if m > 0 && other {
				if h := math.Round(f / m); h >= 1 && near(f, h*m) {
					other = false
				}
			}
		}
		if other {
			lines = append(lines, spectralLine{freq: f, rms: math.Sqrt(a.lobe(k) / float64(3*a.segs))})
		}
	}
	if len(lines) > wrongFreqLines {
		lines = lines[:wrongFreqLines]
	}
	return lines, atFreq
}

// interpolated returns the frequency, Hz, of a line whose peak is at bin
// k: parabolic interpolation of the log power, as peak.
func (a *altSpectrum) interpolated(k int) float64 {
	p := a.power
	delta := 0.0
	if k > 0 && k < a.n/2 && p[k-1] > 0 && p[k+1] > 0 {
		x, y, z := math.Log(p[k-1]), math.Log(p[k]), math.Log(p[k+1])
		if den := x - 2*y + z; den != 0 {
			delta = 0.5 * (x - z) / den
		}
	}
	return (float64(k) + delta) * a.fs / float64(a.n)
}

// uncheckedLog is a log of an AC run whose frequency check could not
// decide, with the lines otherLines found in it.
type uncheckedLog struct {
	source string
	lines  []spectralLine
	atFreq bool
}

// anyCurrent reports whether some group of sv found a current: a line
// (not a magnetised object) whose current the data resolve
// (report.NoCurrent).
func anyCurrent(sv *survey) bool {
	for _, g := range sv.groups {
		if g.err != nil || g.res == nil {
			continue
		}
		for i := range g.res.Sources {
			s := &g.res.Sources[i]
			if s.Kind != report.KindDipole && !report.NoCurrent(s, sv.ac) {
				return true
			}
		}
	}
	return false
}

// wrongFreqWarning says that the --freq given (freq, Hz) is the likely
// cause when no group of an AC run found a current and the frequency
// check of some log could not decide (see above); "" otherwise.
func wrongFreqWarning(sv *survey, freq float64) string {
	if !sv.ac || len(sv.unchecked) == 0 || len(sv.groups) == 0 || anyCurrent(sv) {
		return ""
	}
	for _, l := range sv.unchecked {
		if l.atFreq {
			// A line at --freq stands out of the readings: the frequency
			// is there, and the current too weak for the fits.
			return ""
		}
	}
	var named []string
	best, top := "", 0.0
	for _, l := range sv.unchecked {
		for _, ln := range l.lines {
			if ln.rms > top {
				best, top = fmt.Sprintf("%.1f", ln.freq), ln.rms
			}
		}
		if len(l.lines) == 0 {
			named = append(named, fmt.Sprintf("%s holds no line other than the mains that stands out of its noise", l.source))
			continue
		}
		var fs []string
		for _, ln := range l.lines {
			fs = append(fs, fmt.Sprintf("%.1f Hz (%.3g nT RMS per axis over the log)", ln.freq, ln.rms))
		}
		named = append(named, fmt.Sprintf("%s holds lines at %s", l.source, strings.Join(fs, ", ")))
	}
	if best == "" {
		return fmt.Sprintf("no group found a current at the %g Hz given, and the frequency check could not decide: the demodulation frequency may be wrong (--freq gives the frequency the current sought runs at; at any other the windows hold only noise). Apart from the mains frequencies (--mains, with their harmonics) and %g Hz, %s; check the frequency the current was put on at, or a signal too weak for these readings",
			freq, freq, strings.Join(named, "; "))
	}
	return fmt.Sprintf("no group found a current at the %g Hz given, and the frequency check could not decide: the demodulation frequency may be wrong (--freq gives the frequency the current sought runs at; at any other the windows hold only noise). Apart from the mains frequencies (--mains, with their harmonics) and %g Hz, %s; give --freq the frequency the current sought runs at (the strongest line, if it is that current's: --freq %s)",
		freq, freq, strings.Join(named, "; "), best)
}
