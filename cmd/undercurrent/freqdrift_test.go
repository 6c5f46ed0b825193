package main

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// driftWalk writes a CSV log of a tracer whose frequency drifts at rate
// Hz/s from 640 Hz: a cable 0.8 m down carrying 2 A RMS at 0° and its
// return 2 m beside it, 1.2 m down, 1.2 A at 165°, both along east; five
// traverses of 6 m walked north and south at 1 m/s, 4 s apart, sampled at
// 2 kHz with 5 nT of noise, sensors 0.3 m up. The field of each line is
// the Biot-Savart law for a long straight conductor, B = μ0 I / (2π r)
// (any electromagnetism text), perpendicular to the line and to r.
// Invented fixture: the site and the currents are made up.
func driftWalk(t *testing.T, dir string, rate float64) string {
	t.Helper()
	const fs, f0, speed, span, gap = 2000.0, 640.0, 1.0, 6.0, 4.0
	type line struct{ y, z, i, deg float64 }
	lines := []line{{0, -0.8, 2, 0}, {2, -1.2, 1.2, 165}}
	rng := rand.New(rand.NewPCG(7, 11))
	var b strings.Builder
	b.WriteString("time,x,y,z,bx,by,bz,group\n")
	t0 := 1777716000.0
	tm := 0.0
	for k := range 5 {
		n := int(span / speed * fs)
		for j := range n {
			tt := tm + float64(j)/fs
			s := float64(j) / fs * speed
			y := span/2 - s
			if k%2 == 1 {
				y = -span/2 + s
			}
			var by, bz float64
			for _, l := range lines {
				arg := 2*math.Pi*(f0*tt+rate*tt*tt/2) + l.deg*math.Pi/180
				cur := math.Sqrt2 * l.i * math.Cos(arg)
				dy, dz := y-l.y, 0.3-l.z
				c := 4e-7 * math.Pi * cur / (2 * math.Pi * (dy*dy + dz*dz)) * 1e9 // nT per m
				by += -c * dz
				bz += c * dy
			}
			fmt.Fprintf(&b, "%.6f,%g,%.6f,0.3,%.4f,%.4f,%.4f,T%02d\n", t0+tt, 4+8*float64(k), y,
				-150+5*rng.NormFloat64(), 19200+by+5*rng.NormFloat64(), -45100+bz+5*rng.NormFloat64(), k+1)
		}
		tm += span/speed + gap
	}
	path := filepath.Join(dir, "drift.csv")
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// TestLocateFollowsFrequencyDrift: a tracer drifting steadily at +2 mHz/s
// during the walk (640.00 to 640.09 Hz). Each group's ramp takes out the
// frequency at its middle but not the drift within it (3° at the ends of
// a 6 s traverse); before the drift was followed every group was called
// sound while reading the cable and its return many sigmas off, with
// phantom conductors and false current steps. Now each group is fitted
// along a frequency that follows the drift: two conductors per group, their
// currents within four sigmas of the truth, no finding about the current,
// and a warning naming the drift, within four sigmas of the truth. At no
// drift nothing is followed.
func TestLocateFollowsFrequencyDrift(t *testing.T) {
	for _, rate := range []float64{0.002, 0} {
		log := driftWalk(t, t.TempDir(), rate)
		doc := locateDoc(t, "--freq", "640", "--group-by", "group", log)
		var drift string
		for _, w := range doc.Warnings {
			if strings.Contains(w, "drifted steadily") {
				drift = w
			}
		}
		if rate == 0 {
			if drift != "" {
				t.Errorf("no drift: warning %q", drift)
			}
			continue
		}
		if drift == "" {
			t.Errorf("drift %g Hz/s: no warning names it: %q", rate, doc.Warnings)
		} else {
			var v, s float64
			i := strings.Index(drift, "by ")
			if _, err := fmt.Sscanf(drift[i:], "by %g ± %g mHz/s", &v, &s); err != nil {
				t.Errorf("warning %q: %v", drift, err)
			} else if !(math.Abs(v-rate*1000) <= 4*s) {
				t.Errorf("drift read as %g ± %g mHz/s, true %g", v, s, rate*1000)
			}
		}
		for _, g := range doc.Groups {
			if len(g.Sources) != 2 {
				t.Errorf("%s: %d sources, want the cable and its return", g.Key, len(g.Sources))
				continue
			}
			for k, want := range []float64{2, 1.2} {
				s := g.Sources[k]
				if !(math.Abs(s.Current-want) <= 4*s.CurrentSigma) {
					t.Errorf("%s: source %d reads %.4f ± %.4f A, true %g A", g.Key, k+1, s.Current, s.CurrentSigma, want)
				}
			}
		}
		for _, f := range doc.Findings {
			if strings.Contains(f.Message, "current rises") || strings.Contains(f.Message, "current falls") || strings.Contains(f.Message, "ends") {
				t.Errorf("false finding: %.200s", f.Message)
			}
		}
	}
}
