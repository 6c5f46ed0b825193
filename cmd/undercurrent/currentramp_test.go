package main

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/inverse"
)

// swingLog writes a DC walk (invented site "Ferny Sidings depot"): a
// return cable running east, 200 A at 0.9 m deep, the sensor 0.3 m up,
// ten traverses 5 m apart, each 12 m long at 0.5 m/s (a reading each
// 0.5 s), turns of 10 s, 2 nT of noise, the current
// 200 (1 + amp sin(2 pi t / 97 s)): a slow load swing while walking.
// oneWay walks every traverse north; otherwise they alternate. The field
// is the infinite line's of /work/shared/DOMAIN.md "Forward models"
// (mu0 I / 2 pi (u x rho) / |rho|^2, mu0 of CODATA 2022), written out here.
func swingLog(t *testing.T, amp float64, oneWay bool, seed uint64) string {
	t.Helper()
	const mu0 = 1.25663706127e-6
	rng := rand.New(rand.NewPCG(seed, 61))
	var b strings.Builder
	b.WriteString("# undercurrent.frame: enu\ntime,x,y,z,bx,by,bz,group\n")
	tm := 0.0
	for tr := range 10 {
		for k := 0; k <= 24; k++ {
			n := -6 + 0.5*float64(k)
			if !oneWay && tr%2 == 1 {
				n = -n
			}
			i := 200 * (1 + amp*math.Sin(2*math.Pi*tm/97))
			// u = east; rho from the line to the sensor is (0, n, 1.2),
			// and u x rho = (0, -1.2, n).
			f := mu0 * i / (2 * math.Pi) / (n*n + 1.2*1.2) * 1e9
			fmt.Fprintf(&b, "%.1f,%.1f,%.2f,0.3,%.3f,%.3f,%.3f,T%02d\n", tm, 5*float64(tr), n,
				20000+2*rng.NormFloat64(), 5000-f*1.2+2*rng.NormFloat64(), -40000+f*n+2*rng.NormFloat64(), tr+1)
			tm += 0.5
		}
		tm += 10
	}
	path := filepath.Join(t.TempDir(), "swing.csv")
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// TestCurrentSwingKeptBySurveyGuard: the current ramp in time survives the
// survey-level guard (guardTimeRamps) on a slow ±10 % swing, walked both
// ways and one way: every traverse is one line and one current-varied
// caution names them. Without the ramp (as the guard's refit does) the
// swing had been fitted with further lines on most traverses.
func TestCurrentSwingKeptBySurveyGuard(t *testing.T) {
	for _, oneWay := range []bool{false, true} {
		doc := locateDoc(t, "--group-by", "group", "--reference-z", "0", swingLog(t, 0.10, oneWay, 3))
		var varied int
		for _, f := range doc.Findings {
			if f.Kind == "current-varied" {
				varied++
				if len(f.Groups) < 8 {
					t.Errorf("one way %v: the caution names %d traverses, want 8 or more of 10: %s", oneWay, len(f.Groups), f.Message)
				}
			}
		}
		if varied != 1 {
			t.Errorf("one way %v: %d current-varied findings, want 1", oneWay, varied)
		}
		for _, g := range doc.Groups {
			if len(g.Sources) != 1 {
				t.Errorf("one way %v: %s fitted with %d lines, want 1", oneWay, g.Key, len(g.Sources))
			}
		}
	}
}

// TestTimeRampsHoldGuard checks the guard's two tests on ramps set by hand
// (fixtures): a swing in time, its ramps running on across the turns,
// holds; the same per-metre ramp on every traverse (a spatial shape, on
// alternating walks) fails the sign test; ramps of mixed signs that start
// afresh on each traverse (a tee or an end near a few traverses, the
// current the same on each) fail the joins.
func TestTimeRampsHoldGuard(t *testing.T) {
	mk := func(tr int, t0 float64, north bool, ends [4]float64, rel float64) *group {
		g := &group{key: fmt.Sprintf("T%02d", tr)}
		for k := 0; k <= 24; k++ {
			n := -6 + 0.5*float64(k)
			if !north {
				n = -n
			}
			g.points = append(g.points, [3]float64{5 * float64(tr), n, 0.3})
			g.stamps = append(g.stamps, t0+0.5*float64(k))
		}
		g.res = resultWithRamp(rel, ends)
		return g
	}
	swing := func(t float64) float64 { return 1 + 0.1*math.Sin(2*math.Pi*t/97) }
	rate := func(t float64) float64 { return 0.1 * 2 * math.Pi / 97 * math.Cos(2*math.Pi*t/97) }
	var timeRs, spaceRs, localRs []*group
	for tr := range 8 {
		t0 := 34 * float64(tr)
		t1 := t0 + 12
		// The traverse's mean of the swing, by its readings.
		var m float64
		for k := 0; k <= 24; k++ {
			m += swing(t0+0.5*float64(k)) / 25
		}
		e := [4]float64{swing(t0)/m - 1, swing(t1)/m - 1, rate(t0) / m, rate(t1) / m}
		g := mk(tr, t0, tr%2 == 0, e, e[1]-e[0])
		g.res.Sources[0].Current = 200 * m
		timeRs = append(timeRs, g)
		// +3 % per 12 m north, whichever way walked.
		r := 0.03
		if tr%2 == 1 {
			r = -r
		}
		spaceRs = append(spaceRs, mk(tr, t0, tr%2 == 0, [4]float64{-r / 2, r / 2, r / 12, r / 12}, r))
		r = []float64{0.04, -0.03, 0.05, 0.03, -0.04, 0.02, 0.03, -0.05}[tr]
		localRs = append(localRs, mk(tr, t0, true, [4]float64{-r / 2, r / 2, r / 12, r / 12}, r))
	}
	if ok, why := timeRampsHold(timeRs); !ok {
		t.Errorf("a swing in time: the guard failed (%s), want it to hold", why)
	}
	if ok, _ := timeRampsHold(spaceRs); ok {
		t.Error("one per-metre ramp on every traverse: the guard held, want it to fail")
	}
	if ok, _ := timeRampsHold(localRs); ok {
		t.Error("ramps starting afresh on each traverse: the guard held, want it to fail")
	}
}

// resultWithRamp is a one-line 200 A result with a current ramp noted: rel
// its change over the traverse, ends as inverse.Result.CurrentRampEnds.
func resultWithRamp(rel float64, ends [4]float64) *inverse.Result {
	return &inverse.Result{
		Sources:          []inverse.SourceEstimate{{Kind: "line", Current: 200}},
		CurrentRamp:      rel,
		CurrentRampSigma: 2e-4,
		CurrentRampEnds:  ends,
		Notes:            []string{inverse.CurrentRampNote + ": fixture"},
	}
}
