package main

import (
	"math"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"undercurrent/ingest"
)

// TestDCRunNamesAlternatingField: an AC walk (a 20 A RMS, 50 Hz cable
// 0.8 m deep, logged at 2 kHz) located without --freq. Before, every
// group read "no current found (no conductor under this group ...)" and
// the warning blamed conductors too close to part; nothing named --freq
// (found in review). Now a warning names the field alternating at 50 Hz,
// with its RMS, and --freq 50. Truth over two seeds: the simulator's
// 50 Hz, and the RMS per component of the cable's field at the log's
// positions by Biot-Savart for a long straight line (|B| = μ0 I / (2π r),
// μ0 I / 2π = 2e-7 T·m/A × I; SI definition), within 25% (the spectral
// estimate sees the stretches of a second within the traverses).
func TestDCRunNamesAlternatingField(t *testing.T) {
	if testing.Short() {
		t.Skip("simulates and locates two logs")
	}
	re := regexp.MustCompile(`alternates at about ([0-9.]+) Hz \(([0-9.e+]+) nT RMS per component`)
	for _, seed := range []int{1, 2} {
		sc, log := acWalkSeed(t, t.TempDir(), "50.0", "", seed)
		errOut := strings.Join(locateDoc(t, "--group-by", "group", log).Warnings, "\n")
		m := re.FindStringSubmatch(errOut)
		if m == nil || !strings.Contains(errOut, "give --freq 50") {
			t.Errorf("seed %d: no warning of a 50 Hz field naming --freq 50:\n%s", seed, errOut)
			continue
		}
		f, _ := strconv.ParseFloat(m[1], 64)
		rms, _ := strconv.ParseFloat(m[2], 64)
		if math.Abs(f-50) > 0.5 {
			t.Errorf("seed %d: field alternates at %g Hz, true 50 Hz", seed, f)
		}
		s, err := ingest.ReadSamples(log)
		if err != nil {
			t.Fatal(err)
		}
		c := sc.Conductors[0]
		var sum float64
		var n int
		for i := range s.Len() {
			if s.Group != nil && s.Group[i] == "" {
				continue
			}
			r := math.Hypot(s.Y[i]-(*c.Point)[1], s.Z[i]-(*c.Point)[2])
			b := 2e-7 * c.Current / r * 1e9 // nT RMS
			sum += b * b / 3
			n++
		}
		want := math.Sqrt(sum / float64(n))
		if !(math.Abs(rms-want) <= 0.25*want) {
			t.Errorf("seed %d: %g nT RMS per component, Biot-Savart gives %.4g nT", seed, rms, want)
		}
	}
}

// TestDCRunNoAlternatingFieldOverDC: a DC pipe (30 A at 1.4 m) walked at
// 1 m/s and logged at 2 kHz, over two seeds, draws no such warning: the
// walk's own anomaly, whose curvature a straight line left over a second's
// stretch, put half the remaining variation near 9 Hz through the window's
// leakage in a first version of the check.
func TestDCRunNoAlternatingFieldOverDC(t *testing.T) {
	if testing.Short() {
		t.Skip("simulates and locates two logs")
	}
	for _, seed := range []int{1, 2} {
		dir := t.TempDir()
		text := corrowMarshWalk("corrow-marsh-pipe", "Corrow Marsh, protected main", seed, 1) + `
[[conductor]]
name = "main"
kind = "line"
point = [0.0, 1.2, -1.4]
direction = [1.0, 0.0, 0.0]
current_a = 30
`
		log := simulateText(t, dir, "pipe", text, ".arrows")
		errOut := strings.Join(locateDoc(t, "--group-by", "group", log).Warnings, "\n")
		if strings.Contains(errOut, "alternates") {
			t.Errorf("seed %d: a DC log drew %q", seed, errOut)
		}
	}
}
