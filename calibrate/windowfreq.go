package calibrate

import (
	"math"
	"math/cmplx"
	"sort"
)

// Windows' frequencies are combined (CombineWindowFreqs) from windows
// whose strongest axis reads at least WindowFreqSNR times its noise
// (|B|/Sigma), and only when at least WindowFreqMinWindows such windows
// are left after the cut about the median.
const (
	WindowFreqSNR        = 20
	WindowFreqMinWindows = 3
)

// stillHalfTravel is the horizontal half-travel, m, below which a window
// counts as standing still.
const stillHalfTravel = 1e-3

// FreqCut says where CombineWindowFreqs centres its cut of windows beyond
// 10 of their own sigmas.
type FreqCut int

const (
	// CutAtCommonMedian centres the cut of every way on the median of all
	// the windows with a clear signal, so that the two walking ways keep
	// windows from the same band and the walk's share cancels between
	// them (what Demodulate's own estimate uses).
	CutAtCommonMedian FreqCut = iota
	// CutAtOwnMedian centres each way's cut on that way's own (upper)
	// median, which keeps the windows a way agrees on even where the walk
	// moves a way's windows far from the other's.
	CutAtOwnMedian
)

// WindowFreq is CombineWindowFreqs' estimate of the field's frequency from
// the windows' own fits (EstimateFreq).
type WindowFreq struct {
	// Freq and Sigma, Hz. Sigma is the windows' noise, widened by their
	// scatter about the mean beyond it.
	Freq, Sigma float64
	// Windows is how many windows the estimate used.
	Windows int
	// Spread is the windows' scatter about the mean beyond their noise,
	// Hz: on a log walked one way, the walk's share changing along the
	// traverses, of the order of what is left of it in Freq. Zero when
	// BothWays (the two ways' means cancel that share).
	Spread float64
	// BothWays: windows walked both ways were combined, the mean of the
	// two ways' means. Still: every window used stood still (or the log
	// has no positions). With neither, every window moved the same way and
	// Freq may carry the walk's share beyond Sigma.
	BothWays, Still bool
}

// CombineWindowFreqs combines the frequencies of windows fitted with
// EstimateFreq, from those with a clear signal (WindowFreqSNR). Where
// conductors of different phase overlap, a window's phase also turns as
// the sensor walks, the same way on every traverse walked the same way and
// the other way on those walked back. So the windows are sorted by the
// sign of their travel along the main walking direction (the principal
// axis of their horizontal travels): with windows walked both ways the
// estimate is the mean of the two ways' means, which cancels the walk's
// share; with every window still, their mean; otherwise the mean of all.
// Within each, a window beyond 10 of its own sigmas from the median (cut
// says which) is left out as a fit drawn to another tone or far off by the
// walk's turn of the phase. ok is false with too few windows
// (WindowFreqMinWindows).
func CombineWindowFreqs(ws []Window, cut FreqCut) (est WindowFreq, ok bool) {
	var sxx, sxy, syy float64
	for _, w := range ws {
		x, y := w.Travel[0], w.Travel[1]
		sxx += x * x
		sxy += x * y
		syy += y * y
	}
	th := 0.5 * math.Atan2(2*sxy, sxx-syy)
	dx, dy := math.Cos(th), math.Sin(th)
	var fs, wt [3][]float64 // still, one way, the other
	var sg [3][]int         // the stretch walked one way each window is in
	var all, allW []float64
	var allS []int
	stretch, prevC, prevG := 0, -1, ""
	for _, w := range ws {
		if !(w.FreqSigma > 0) || math.IsNaN(w.Freq) {
			continue
		}
		snr := 0.0
		for k := 0; k < 3; k++ {
			if w.Sigma[k] > 0 {
				snr = math.Max(snr, cmplx.Abs(w.B[k])/w.Sigma[k])
			}
		}
		if snr < WindowFreqSNR {
			continue
		}
		c := 0
		if math.Hypot(w.Travel[0], w.Travel[1]) >= stillHalfTravel {
			c = 1
			if w.Travel[0]*dx+w.Travel[1]*dy < 0 {
				c = 2
			}
		}
		if c != prevC || w.Group != prevG {
			stretch++
			prevC, prevG = c, w.Group
		}
		wgt := 1 / (w.FreqSigma * w.FreqSigma)
		fs[c] = append(fs[c], w.Freq)
		wt[c] = append(wt[c], wgt)
		sg[c] = append(sg[c], stretch)
		all = append(all, w.Freq)
		allW = append(allW, wgt)
		allS = append(allS, stretch)
	}
	centre := func(fs []float64) float64 {
		if cut == CutAtOwnMedian {
			if len(fs) == 0 {
				return math.NaN()
			}
			s := append([]float64(nil), fs...)
			sort.Float64s(s)
			return s[len(s)/2]
		}
		return median(all, nil)
	}
	one := func(c int) (windowMean, bool) { return freqMean(fs[c], wt[c], sg[c], centre(fs[c])) }
	m1, ok1 := one(1)
	m2, ok2 := one(2)
	if ok1 && ok2 {
		return WindowFreq{Freq: (m1.mean + m2.mean) / 2, Sigma: math.Hypot(m1.sigma, m2.sigma) / 2, Windows: m1.n + m2.n, BothWays: true}, true
	}
	if len(fs[1])+len(fs[2]) == 0 {
		m, ok := one(0)
		return WindowFreq{Freq: m.mean, Sigma: m.sigma, Windows: m.n, Spread: m.spread, Still: true}, ok
	}
	m, ok := freqMean(all, allW, allS, centre(all))
	return WindowFreq{Freq: m.mean, Sigma: m.sigma, Windows: m.n, Spread: m.spread}, ok
}

// windowMean is freqMean's result.
type windowMean struct {
	mean, sigma, spread float64
	n                   int
}

// freqMean is the inverse-variance mean of the frequencies fs with weights
// ws (1/sigma²), seg naming the stretch walked one way (a traverse) each
// belongs to. A window beyond 10 of its own sigmas from med is left out.
// Keeping also those within a quarter of 1/window of it (so that the
// walk's turn of the phase over conductors of different phase, which moves
// windows by tenths of a hertz one way and the other, averaged out) let
// the walk's share that the two ways do not cancel through: a false
// "frequency off" by 0.0018 Hz, six of its sigmas, on a ten-minute walk
// over two cables 115 degrees apart at exactly 50 Hz (found in review).
//
// The sigma is the noise's, sum(ws)^(-1/2), widened by the square root of
// the larger reduced chi-square of the windows about the mean and, with
// two stretches or more, of the stretches' means (traverses walked the
// same way share the walk's share, so what they disagree by beyond their
// noise is the frequency wandering or the traverses differing). The
// stretches' alone, where the cut keeps a biased few windows in few
// stretches, put a three-phase estimate at 50.0531 ± 0.0002 Hz for 50.05.
// The spread is the windows' weighted variance about the mean less their
// noise's (n/sum(ws), the weighted mean of their variances), as a
// standard deviation.
func freqMean(fs, ws []float64, seg []int, med float64) (m windowMean, ok bool) {
	if len(fs) < WindowFreqMinWindows {
		return windowMean{}, false
	}
	keep := func(i int) bool { return math.Abs(fs[i]-med)*math.Sqrt(ws[i]) <= 10 }
	var sw, swf float64
	segW, segWF := map[int]float64{}, map[int]float64{}
	n := 0
	for i, f := range fs {
		if keep(i) {
			sw += ws[i]
			swf += ws[i] * f
			segW[seg[i]] += ws[i]
			segWF[seg[i]] += ws[i] * f
			n++
		}
	}
	if n < WindowFreqMinWindows {
		return windowMean{}, false
	}
	mean := swf / sw
	var c2 float64
	for i, f := range fs {
		if keep(i) {
			c2 += (f - mean) * (f - mean) * ws[i]
		}
	}
	red := c2 / float64(n-1)
	spread := math.Sqrt(math.Max(0, (c2-float64(n))/sw))
	if len(segW) >= 2 {
		var cs float64
		for k, w := range segW {
			mk := segWF[k] / w
			cs += (mk - mean) * (mk - mean) * w
		}
		red = math.Max(red, cs/float64(len(segW)-1))
	}
	return windowMean{mean: mean, sigma: math.Sqrt(math.Max(1, red) / sw), spread: spread, n: n}, true
}
