package report

import (
	"math"
	"math/rand/v2"
	"strconv"
	"testing"
)

// labelTol is how far a tick label may read from its tick, as a fraction
// of the spacing of the labelled ticks: a thousandth of a division is far
// below what can be read off a chart, and "1.7" on the tick at 1.65 (half
// a division off, a tenth of the spacing 0.1 times five) is far above it.
const labelTol = 1e-3

// TestTickLabelsReadAsTheirValues checks, for the axes newPlot makes, that
// every labelled tick's label parses to the tick's own value, within
// labelTol of the spacing, over ranges of every magnitude and sign. The
// first ranges are ones where gonum's default labels are rounded off their
// ticks (a depth plot of 1.63 to 1.88 m labelled "1.7" at 1.65).
func TestTickLabelsReadAsTheirValues(t *testing.T) {
	ranges := [][2]float64{
		{1.6347, 1.8768}, {0.05, 0.31}, {1.42, 1.61}, {10.2, 10.7},
		{-0.013, 0.021}, {99.2, 100.9}, {0, 1}, {-3, -2.2}, {1234567, 1234890},
		{1e-7, 3e-7}, {40.016, 40.161}, {0.6, 0.62},
	}
	rng := rand.New(rand.NewPCG(1, 2))
	for range 3000 {
		mag := math.Pow(10, float64(rng.IntN(14)-6))
		lo := (rng.Float64()*200 - 100) * mag
		ranges = append(ranges, [2]float64{lo, lo + (0.01+rng.Float64()*5)*mag*math.Pow(10, float64(rng.IntN(3)-1))})
	}
	p := newPlot("", "x", "y")
	bad := 0
	for _, r := range ranges {
		for _, axis := range []string{"x", "y"} {
			m := p.X.Tick.Marker
			if axis == "y" {
				m = p.Y.Tick.Marker
			}
			ticks := m.Ticks(r[0], r[1])
			var vals []float64
			for _, tk := range ticks {
				if tk.Label != "" {
					vals = append(vals, tk.Value)
				}
			}
			spacing := r[1] - r[0]
			for i := 1; i < len(vals); i++ {
				spacing = math.Min(spacing, math.Abs(vals[i]-vals[i-1]))
			}
			seen := map[string]bool{}
			for _, tk := range ticks {
				if tk.Label == "" {
					continue
				}
				v, err := strconv.ParseFloat(tk.Label, 64)
				if err != nil || math.Abs(v-tk.Value) > labelTol*spacing || seen[tk.Label] {
					if bad++; bad <= 10 {
						t.Errorf("%s axis over [%g, %g]: label %q on the tick at %.12g (spacing %g)", axis, r[0], r[1], tk.Label, tk.Value, spacing)
					}
				}
				seen[tk.Label] = true
			}
		}
	}
	if bad > 10 {
		t.Errorf("%d labels in all off their ticks", bad)
	}
}

// TestTickLabelsShort checks that the labels carry no more decimals than
// the spacing needs: ticks 0.1 apart read "1.65", not "1.6500000".
func TestTickLabelsShort(t *testing.T) {
	got := tickLabels([]float64{1.6500000000000001, 1.75, 1.85}, 0.24)
	want := []string{"1.65", "1.75", "1.85"}
	for i := range want {
		if got[i] != want[i] {
			t.Errorf("labels %q, want %q", got, want)
			break
		}
	}
	if got := tickLabels([]float64{-1e-17, 0.5, 1}, 1.1); got[0] != "0.0" {
		t.Errorf("tick at -1e-17 labelled %q, want \"0.0\"", got[0])
	}
}
