package calibrate

import (
	"math"
	"testing"
)

// walkWindows returns windows of one traverse walked along +x (way > 0),
// back along -x (way < 0) or standing still (way 0), each reading freq plus
// a walk's share of the given sign: the phase of a field from conductors
// of different phase turns as the sensor walks, the same way on every
// traverse walked the same way (invented fixture).
func walkWindows(group string, n int, way float64, freq, share, sigma float64) []Window {
	ws := make([]Window, n)
	for i := range ws {
		ws[i] = Window{Group: group, Freq: freq + way*share, FreqSigma: sigma}
		ws[i].Travel = [3]float64{0.3 * way, 0, 0}
		ws[i].B[2] = complex(100, 0)
		ws[i].Sigma[2] = 1
	}
	return ws
}

// TestCombineWindowFreqsWalkShareCancels: windows walked both ways average
// the two ways' means, so a walk's share of equal size and opposite sign
// cancels; walked one way it stays in the estimate and the estimate says
// so; standing still it is trusted. Inverse-variance means are checked
// against the sums worked by hand.
func TestCombineWindowFreqsWalkShareCancels(t *testing.T) {
	const f0, share, sigma = 50.0, 0.004, 0.001
	var both []Window
	both = append(both, walkWindows("T01", 6, +1, f0, share, sigma)...)
	both = append(both, walkWindows("T02", 4, -1, f0, share, sigma)...)
	for _, cut := range []FreqCut{CutAtCommonMedian, CutAtOwnMedian} {
		e, ok := CombineWindowFreqs(both, cut)
		if !ok || !e.BothWays || e.Still {
			t.Fatalf("cut %d: both ways: ok %v, %+v", cut, ok, e)
		}
		if math.Abs(e.Freq-f0) > 1e-12 || e.Windows != 10 {
			t.Errorf("cut %d: both ways: %.6f Hz from %d windows, want %.6f from 10", cut, e.Freq, e.Windows, f0)
		}
		// Each way's windows agree exactly: sigma = sigma/sqrt(n) per way,
		// halved and added in quadrature.
		want := math.Hypot(sigma/math.Sqrt(6), sigma/math.Sqrt(4)) / 2
		if math.Abs(e.Sigma-want) > 1e-12 {
			t.Errorf("cut %d: sigma %.3g, want %.3g", cut, e.Sigma, want)
		}
	}
	one := walkWindows("T01", 5, +1, f0, share, sigma)
	e, ok := CombineWindowFreqs(one, CutAtCommonMedian)
	if !ok || e.BothWays || e.Still || math.Abs(e.Freq-(f0+share)) > 1e-12 {
		t.Errorf("one way: ok %v, %+v; want %.4f, neither both ways nor still", ok, e, f0+share)
	}
	still := walkWindows("T01", 5, 0, f0, share, sigma)
	if e, ok := CombineWindowFreqs(still, CutAtCommonMedian); !ok || !e.Still || math.Abs(e.Freq-f0) > 1e-12 {
		t.Errorf("still: ok %v, %+v", ok, e)
	}
	// Too few clear windows: a window under WindowFreqSNR does not count.
	few := walkWindows("T01", 3, 0, f0, 0, sigma)
	few[0].B[2] = complex(WindowFreqSNR/2, 0)
	if _, ok := CombineWindowFreqs(few, CutAtCommonMedian); ok {
		t.Error("two clear windows gave an estimate")
	}
}

// TestCombineWindowFreqsCutCentre: a far window (a fit drawn to another
// tone) is left out; the two cuts differ only in where they are centred.
// Here one way's windows sit 15 of their sigmas from the common median, so
// the common cut leaves that way out (and the rest is one way), while each
// way's own cut keeps both ways.
func TestCombineWindowFreqsCutCentre(t *testing.T) {
	const f0, sigma = 50.0, 0.001
	ws := walkWindows("T01", 7, +1, f0, 0.0005, sigma)
	ws = append(ws, walkWindows("T02", 3, -1, f0, 0.015, sigma)...)
	far := walkWindows("T03", 1, +1, 50.5, 0, sigma)
	ws = append(ws, far...)
	common, ok1 := CombineWindowFreqs(ws, CutAtCommonMedian)
	own, ok2 := CombineWindowFreqs(ws, CutAtOwnMedian)
	if !ok1 || !ok2 {
		t.Fatalf("ok %v %v", ok1, ok2)
	}
	if common.BothWays || common.Windows != 7 || math.Abs(common.Freq-(f0+0.0005)) > 1e-12 {
		t.Errorf("common median: %+v; want one way's 7 windows at %.4f", common, f0+0.0005)
	}
	if !own.BothWays || own.Windows != 10 || math.Abs(own.Freq-(f0+(0.0005-0.015)/2)) > 1e-12 {
		t.Errorf("own medians: %+v; want both ways' 10 windows at %.5f", own, f0+(0.0005-0.015)/2)
	}
}
