package main

import (
	"math/rand/v2"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"undercurrent/ingest"
	"undercurrent/inverse/simulate"
)

// TestSpikeWarningACLog: simulated truth, the three-core scenario (a
// 1 kHz log of a 50 Hz three-core feeder, 10 nT noise) with 480 spikes of
// exactly 200 nT (20 noise sigmas), either sign, on one axis each, at
// random rows (0.5% of the readings). locate --freq 50 must warn of
// spikes, and --despike must remove at least a quarter of them (the local
// quadratic alone found 176 of 480 on this log). The line-shape second
// look, a line's shape in distance along a traverse, took the raw
// waveform's turns for a line's: the warning was gone and --despike
// removed 2 of the 480.
func TestSpikeWarningACLog(t *testing.T) {
	sc, _ := scenario(t, "open/three-core.toml")
	s, err := simulate.Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	n := s.Len()
	rng := rand.New(rand.NewPCG(3, 480))
	spiked := map[int]bool{}
	for len(spiked) < 480 {
		row := 5 + rng.IntN(n-10)
		if spiked[row] {
			continue
		}
		spiked[row] = true
		size := 200.0
		if rng.IntN(2) == 0 {
			size = -size
		}
		[][]float64{s.Bx, s.By, s.Bz}[rng.IntN(3)][row] += size
	}
	path := filepath.Join(t.TempDir(), "three-core-spikes.csv")
	if err := ingest.WriteSamples(path, s); err != nil {
		t.Fatal(err)
	}
	code, out, errOut := runCmd("locate", "--freq", "50", "--group-by", "group", path, "-o", filepath.Join(t.TempDir(), "out"))
	if code != 0 {
		t.Fatalf("locate: exit %d: %s", code, errOut)
	}
	if !strings.Contains(out+errOut, "spikes in") {
		t.Errorf("no spike warning on an AC log with 0.5%% spikes of 20 noise sigmas:\n%s%s", out, errOut)
	}
	code, out, errOut = runCmd("locate", "--freq", "50", "--group-by", "group", "--despike", path, "-o", filepath.Join(t.TempDir(), "out"))
	if code != 0 {
		t.Fatalf("locate --despike: exit %d: %s", code, errOut)
	}
	m := regexp.MustCompile(`removed (\d+) spikes`).FindStringSubmatch(out + errOut)
	if m == nil {
		t.Fatalf("locate --despike removed no spikes of 480:\n%s%s", out, errOut)
	}
	if k, _ := strconv.Atoi(m[1]); 4*k < len(spiked) {
		t.Errorf("locate --despike removed %d readings, want at least a quarter of the %d spikes", k, len(spiked))
	}
}
