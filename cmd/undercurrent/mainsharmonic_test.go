package main

import (
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"
)

// A four-wire LV feeder carrying mains harmonics, located at them.
//
// Truth: the simulator's scenario testdata/scenarios/open/lv-harmonics.toml
// (inverse/simulate, harmonics tables): single cores 0.4 m apart at 0.8 m,
// phases of 200, 150 and 120 A at 50 Hz, a 3rd harmonic of 30 A in phase
// on each (90 A back in the neutral), a 5th of 30, 22.5 and 18 A in the
// reverse phase sequence (10.5 A of imbalance in the neutral), all
// traverses walked one way. Before, --freq 250 took the walk's turn of the
// cores' summed phase (250.0104 Hz from the windows, spread 0.008 Hz) for
// the grid's, demodulated there, and read 3 of 6 groups poor, phantom
// lines (39.3 A, 23.6 A) and a core "not found past T05"; and both runs
// were worded as for a tracer ("choose another frequency for the tracer").

// lvHarmonicsLog simulates the bundled scenario into dir: the log.
func lvHarmonicsLog(t *testing.T, dir string) string {
	t.Helper()
	b, err := os.ReadFile(filepath.Join("..", "..", "testdata", "scenarios", "open", "lv-harmonics.toml"))
	if err != nil {
		t.Fatal(err)
	}
	_, log := simulateScenario(t, dir, "lv-harmonics", string(b))
	return log
}

// TestLocateFifthHarmonicCores: at --freq 250 every group is sound, holds
// four lines and reads the cores' 5th-harmonic currents (within 4 sigma
// and 2%), the run stays at 250 Hz, no current step or end is found, and
// the words name the 5th harmonic of the supply in reverse sequence, not
// a tracer. At --freq 150 the words say the triplens add in the neutral.
func TestLocateFifthHarmonicCores(t *testing.T) {
	if testing.Short() {
		t.Skip("simulates and locates a 4-conductor log")
	}
	log := lvHarmonicsLog(t, t.TempDir())
	doc := locateDoc(t, "--freq", "250", "--group-by", "group", "--reference-z", "0", log)
	truth := []float64{30, 22.5, 18, 10.5}
	for _, g := range doc.Groups {
		if !g.OK || len(g.Sources) != len(truth) {
			t.Errorf("%s: ok %v, %d lines (%s), want 4 sound lines", g.Key, g.OK, len(g.Sources), g.Problem)
			continue
		}
		src := append([]docSource(nil), g.Sources...)
		sort.Slice(src, func(i, j int) bool { return src[i].Current > src[j].Current })
		for i, s := range src {
			if d := math.Abs(s.Current - truth[i]); !(d <= 4*s.CurrentSigma+0.02*truth[i]) {
				t.Errorf("%s: line %d reads %.3f ± %.2f A, true %.1f A", g.Key, i+1, s.Current, s.CurrentSigma, truth[i])
			}
		}
	}
	var words bool
	for _, w := range doc.Warnings {
		if strings.Contains(w, "AC frequency estimated") {
			t.Errorf("the run left 250 Hz: %q", w)
		}
		if strings.Contains(w, "tracer if") {
			t.Errorf("worded as for a tracer: %q", w)
		}
		words = words || strings.Contains(w, "is the 5th harmonic of the 50 Hz mains: the currents read are the supply's 5th harmonic currents") && strings.Contains(w, "reverse phase sequence")
	}
	if !words {
		t.Errorf("no warning names the supply's 5th harmonic currents: %q", doc.Warnings)
	}
	for _, f := range doc.Findings {
		if strings.Contains(f.Message, "current rises") || strings.Contains(f.Message, "current falls") || strings.Contains(f.Message, "not found past") {
			t.Errorf("false finding: %.200s", f.Message)
		}
	}
	doc = locateDoc(t, "--freq", "150", "--group-by", "group", "--reference-z", "0", log)
	words = false
	for _, w := range doc.Warnings {
		words = words || strings.Contains(w, "is the 3rd harmonic of the 50 Hz mains") && strings.Contains(w, "add in the neutral") && !strings.Contains(w, "tracer if")
	}
	if !words {
		t.Errorf("--freq 150: no warning says the triplens add in the neutral: %q", doc.Warnings)
	}
}

// TestMainsHarmonicOf: which frequencies are worded as the mains'
// harmonics: whole multiples 2-50 of a --mains frequency, an odd one
// preferred where 50 and 60 Hz share it.
func TestMainsHarmonicOf(t *testing.T) {
	pl := demodPlan{mains: []float64{50, 60}}
	for _, tc := range []struct {
		f  float64
		k  int
		m  float64
		ok bool
	}{
		{150, 3, 50, true}, {250, 5, 50, true}, {100, 2, 50, true}, {180, 3, 60, true},
		{300, 5, 60, true}, {2500, 50, 50, true}, {8000, 0, 0, false}, {512, 0, 0, false},
		{645, 0, 0, false}, {50, 0, 0, false}, {250.5, 0, 0, false},
	} {
		k, m, ok := pl.mainsHarmonic(tc.f)
		if ok != tc.ok || ok && (k != tc.k || m != tc.m) {
			t.Errorf("%g Hz: %d of %g Hz (%v), want %d of %g Hz (%v)", tc.f, k, m, ok, tc.k, tc.m, tc.ok)
		}
	}
	if _, _, ok := (demodPlan{}).mainsHarmonic(150); ok {
		t.Error("--mains none: 150 Hz taken as a mains harmonic")
	}
}
