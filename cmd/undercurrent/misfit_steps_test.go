package main

import (
	"strings"
	"testing"
)

// threeCoreScenario is a healthy 400 V three-core AC cable: 100 A per core
// at 0, -120 and +120 degrees, the cores 4 cm apart 0.75-0.80 m down,
// uniform along the route (no fault); six traverses (a review scenario,
// invented site).
const threeCoreScenario = `name = "three-core"
site = "Marrowby Feeder"
seed = 5
start = "2026-03-14T11:00:00Z"
[origin]
lat_deg = 51.9
lon_deg = -1.2
height_m = 20.0
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
[sensor]
height_m = 0.3
noise_nt = 5.0
sample_rate_hz = 1000.0
[survey]
route = [[0.0, 0.0], [40.0, 0.0]]
count = 6
spacing_m = 6.0
first_at_m = 5.0
length_m = 8.0
speed_m_s = 1.0
turn_s = 5.0
[[conductor]]
name = "core L1"
kind = "line"
point = [0.0, 0.0, -0.75]
direction = [1.0, 0.0, 0.0]
current_a = 100.0
frequency_hz = 50.0
phase_deg = 0.0
[[conductor]]
name = "core L2"
kind = "line"
point = [0.0, 0.04, -0.80]
direction = [1.0, 0.0, 0.0]
current_a = 100.0
frequency_hz = 50.0
phase_deg = -120.0
[[conductor]]
name = "core L3"
kind = "line"
point = [0.0, -0.04, -0.80]
direction = [1.0, 0.0, 0.0]
current_a = 100.0
frequency_hz = 50.0
phase_deg = 120.0
`

// sideBySideScenario is two same-way DC cables 0.3 m apart side by side,
// 10 and 6 A, 1.0 m down, under six traverses read every 0.1 m with 2 nT of
// noise (a review scenario, invented site).
const sideBySideScenario = `name = "side-by-side"
site = "Brackwater Close"
seed = 2
start = "2026-02-02T14:00:00Z"
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
[sensor]
height_m = 0.3
noise_nt = 2.0
[survey]
route = [[0.0, 0.0], [20.0, 0.0]]
count = 6
spacing_m = 3.0
first_at_m = 2.0
length_m = 10.0
speed_m_s = 0.5
sample_spacing_m = 0.1
turn_s = 10.0
[[conductor]]
name = "A"
kind = "line"
point = [0.0, -0.15, -1.0]
direction = [1.0, 0.0, 0.0]
current_a = 10.0
[[conductor]]
name = "B"
kind = "line"
point = [0.0, 0.15, -1.0]
direction = [1.0, 0.0, 0.0]
current_a = 6.0
`

// TestThreeCoreNoFaultWarning: over the healthy three-core cable the
// traverses that fit the cores as one go-and-return pair miss their
// readings by hundreds of times the noise (the run's shared-misfit warning
// names them), and their net current, 3.6 A, against the 96.6 A of the
// traverses that resolve three cores, was a "warning" of a 93 A earth
// fault. The truth has no fault: no current step may be a warning, and any
// step reported must say it rests on fits that miss their readings.
func TestThreeCoreNoFaultWarning(t *testing.T) {
	log := simulateText(t, t.TempDir(), "three-core", threeCoreScenario, ".csv")
	doc := locateDoc(t, "--freq", "50", "--group-by", "group", log)
	for _, f := range doc.Findings {
		if f.Kind != "current-step" {
			continue
		}
		if f.Severity == "warning" {
			t.Errorf("a healthy cable has a warning step: %s", f.Message)
		}
		if !strings.Contains(f.Message, "it rests on fits that miss their readings") {
			t.Errorf("a step over fits the report calls misfits does not say so: %s", f.Message)
		}
	}
}

// TestSideBySideNoAnomalyCaution: over the two same-way cables of
// sideBySideScenario (simulation seed 2) one traverse resolves both lines
// (16.0 A together, the truth) and the others fit one line (16.1 A, 15
// sigma high, each with inverse.UnresolvedLinesNote). The route had called
// the resolved traverse a caution, "0.13 A below both neighbours". The
// truth is a constant 16 A: no current anomaly or step may be a caution or
// a warning, and one reported must name the fits it rests on.
func TestSideBySideNoAnomalyCaution(t *testing.T) {
	log := simulateText(t, t.TempDir(), "side-by-side", sideBySideScenario, ".csv")
	doc := locateDoc(t, "--reference-z", "0", "--group-by", "group", log)
	for _, f := range doc.Findings {
		if f.Kind != "current-step" && f.Kind != "current-anomaly" && f.Kind != "current-change" {
			continue
		}
		if f.Severity != "info" {
			t.Errorf("a constant 16 A has a %s %s: %s", f.Severity, f.Kind, f.Message)
		}
		if !strings.Contains(f.Message, "it rests on fits that") {
			t.Errorf("a %s over fits with fewer lines than the readings ask for does not say so: %s", f.Kind, f.Message)
		}
	}
}
