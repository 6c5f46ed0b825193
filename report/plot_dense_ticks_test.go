package report

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// labelled returns the labels of the labelled ticks newPlot's axes put on
// [lo, hi].
func labelled(lo, hi float64) []string {
	var out []string
	for _, t := range newPlot("", "x", "y").Y.Tick.Marker.Ticks(lo, hi) {
		if t.Label != "" {
			out = append(out, t.Label)
		}
	}
	return out
}

// TestTicksEnoughLabels: an axis carries at least minLabelled labelled
// ticks, so that a value can be read off it between them (no published
// rule; the aim is a depth read to about 0.1 m on a plot 8.5 cm tall). A depth axis of
// 0 to 3.7 m (a 3.5 m deep conductor under a 3.6 m minimum cover line)
// was labelled only "0" and "3", leaving the stations and the minimum
// cover line below the last label.
func TestTicksEnoughLabels(t *testing.T) {
	got := labelled(0, 3.7)
	want := []string{"0.0", "0.5", "1.0", "1.5", "2.0", "2.5", "3.0", "3.5"}
	if !slices.Equal(got, want) {
		t.Errorf("0 to 3.7 labelled %q, want %q", got, want)
	}
	// Axes plot.DefaultTicks labels often enough keep its labels.
	if got := labelled(-0.5, 10.5); !slices.Equal(got, []string{"0", "2", "4", "6", "8", "10"}) {
		t.Errorf("-0.5 to 10.5 labelled %q", got)
	}
	rng := rand.New(rand.NewPCG(3, 2026))
	for range 2000 {
		mag := math.Pow(10, float64(rng.IntN(10)-4))
		lo := (rng.Float64()*20 - 10) * mag
		hi := lo + (0.05+rng.Float64()*10)*mag
		if n := len(labelled(lo, hi)); n < minLabelled {
			t.Errorf("[%g, %g]: %d labelled ticks, want at least %d", lo, hi, n, minLabelled)
		}
	}
}
