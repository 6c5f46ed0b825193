package main

import (
	"path/filepath"
	"strings"
	"testing"
)

// clippedACScenario: an invented 600 A, 50 Hz cable 0.9 m down at
// Wrenfold Marsh, sensors 0.3 m up sampling at 500 Hz over five 16 m
// traverses; its field peaks near 100000 nT RMS over the cable.
const clippedACScenario = `name = "wrenfold-ac"
site = "Wrenfold Marsh, feeder cable"
seed = 3
start = "2026-02-02T14:00:00Z"
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
drift_nt_per_hour = [3.0, 10.0, -5.0]
[sensor]
height_m = 0.3
noise_nt = 4.0
sample_rate_hz = 500.0
[survey]
count = 5
spacing_m = 4.0
first_at_m = 2.0
length_m = 16.0
speed_m_s = 1.0
turn_s = 5.0
[[conductor]]
name = "feeder cable"
kind = "line"
point = [0.0, 0.0, -0.9]
direction = [0.8660254037844386, 0.5, 0.0]
current_a = 600.0
frequency_hz = 50.0
phase_deg = -20.0
`

// TestClippedACGapsNotBlamedOnTimeStamps: the cable of clippedACScenario
// (simulated truth) read by a ±100000 nT magnetometer: its readings at the
// waveform's peaks over the cable sit at the rail and are left out, and
// the windows those gaps break are lost. The time column itself has no
// pause. In review the warning of windows lost said the time column
// paused 1175 times and advised fixing the logger's time stamps; it must
// name the clipped readings as the cause and not blame the time stamps,
// and the fits must still find the simulated 600 A.
func TestClippedACGapsNotBlamedOnTimeStamps(t *testing.T) {
	dir := t.TempDir()
	clean := simulateText(t, dir, "wrenfold", clippedACScenario, ".csv")
	clippedLog := filepath.Join(dir, "clipped.csv")
	if _, rows := clipLog(t, clean, clippedLog, 100000, 0); rows < 100 {
		t.Fatalf("only %d rows clipped: the scenario does not reach the rail", rows)
	}
	doc := locateDoc(t, "--freq", "50", "--group-by", "group", clippedLog)
	var lost string
	for _, w := range doc.Warnings {
		if strings.Contains(w, "AC windows lost") {
			lost = w
		}
	}
	if lost == "" {
		t.Fatalf("no warning of windows lost: %q", doc.Warnings)
	}
	if strings.Contains(lost, "time stamps (") || strings.Contains(lost, "the time column pauses") || !strings.Contains(lost, "clipped at the magnetometer's range") {
		t.Errorf("windows lost to clipped readings blamed on the time stamps: %q", lost)
	}
	// Simulated truth 600 A RMS; each fit's sigma is a few mA.
	for _, g := range doc.Groups {
		if !g.OK || len(g.Sources) == 0 {
			t.Errorf("%s: not sound", g.Key)
			continue
		}
		if c := g.Sources[0].Current; c < 599.9 || c > 600.1 {
			t.Errorf("%s: %g A, truth 600 A", g.Key, c)
		}
	}
}
