package main

import (
	"math"
	"strings"
	"testing"
)

// dcPipe is a scenario conductor carrying 30 A DC (a cathodic protection
// current on a pipe, or a DC traction return) 1.4 m down, 0.8 m north of
// the AC walk's cable, along the same route.
const dcPipe = `
[[conductor]]
name = "cp pipe"
kind = "line"
point = [0.0, 1.2, -1.4]
direction = [1.0, 0.0, 0.0]
current_a = 30.0
frequency_hz = 0.0
phase_deg = 0.0
`

// TestLocateDCLineFindsNoAC: the walk of ac-walk-2khz.toml over a 30 A DC
// line and nothing else, located with --freq 50. Walked at 1 m/s, the
// sensor sees the DC field change about linearly within each 0.2 s window;
// fitted with a constant alone, a slope s per second projects onto sin ωτ
// over whole cycles as an amplitude 2s/ω, and since the slope is the
// walking speed times the DC field's gradient, the leak is the field of a
// go-and-return pair at the DC line: before, every traverse was "sound"
// with a 50 Hz pair of I·d 0.13 A·m at the DC line's depth
// (√2 v I/ω = √2 × 1 m/s × 30 A / 314 s⁻¹ = 0.135 A·m; found in review).
// With a linear term in every window (demodPlan.settings) no group finds
// an AC current: the truth is that there is none.
func TestLocateDCLineFindsNoAC(t *testing.T) {
	_, log := acWalkEdit(t, t.TempDir(), "50.0", "", false, func(s string) string {
		return s[:strings.Index(s, "[[conductor]]")] + dcPipe
	})
	doc := locateDoc(t, "--freq", "50", "--group-by", "group", "--reference-z", "0", log)
	if len(doc.Groups) != 3 {
		t.Fatalf("%d groups, want the walk's 3", len(doc.Groups))
	}
	for _, g := range doc.Groups {
		if g.OK {
			t.Errorf("%s: sound, with no AC conductor under it: %+v", g.Key, g.Sources)
		}
		for _, s := range g.Sources {
			if math.Abs(s.Current) > kSigma*s.CurrentSigma {
				t.Errorf("%s: a %s of %.4g ± %.2g at %.3g m, with no AC conductor under it", g.Key, s.Kind, s.Current, s.CurrentSigma, s.Depth)
			}
		}
	}
}

// TestLocateACBesideDCPipe: the walk's 20 A, 50 Hz cable with the 30 A DC
// pipe 0.8 m beside it. Before, the DC gradient's leak (see
// TestLocateDCLineFindsNoAC) added a phantom pair at the pipe and moved
// the cable's current and phase by several sigmas, one way on traverses
// walked east and the other on those walked west. Now each traverse must
// find the cable alone, its current and depth within kSigma of the
// simulated truth (checkOnly) and its phase within kSigma of the 35° it
// was simulated with.
func TestLocateACBesideDCPipe(t *testing.T) {
	sc, log := acWalkAt(t, t.TempDir(), "50.0", dcPipe)
	doc := locateDoc(t, "--freq", "50", "--group-by", "group", "--reference-z", "0", log)
	checkOnly(t, doc, sc, 50, 0, 0)
	for _, g := range doc.Groups {
		if len(g.Sources) == 0 || g.Sources[0].Phase == nil || g.Sources[0].PhaseSigma == nil {
			continue // checkOnly has said so
		}
		s := g.Sources[0]
		if d := math.Abs(*s.Phase - 35); d > kSigma**s.PhaseSigma {
			t.Errorf("%s: phase %.4g ± %.2g°, true 35°", g.Key, *s.Phase, *s.PhaseSigma)
		}
	}
}
