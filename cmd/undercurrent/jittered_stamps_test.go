package main

import (
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"undercurrent/inverse/simulate"
)

// jitterScenario is a 60 Hz cable (30 A at 170°) and a gas main 2.5 m
// beside it (8 A at -150°), read at 1 kHz with 5 nT of noise over five
// traverses (Quillmere Row, invented).
const jitterScenario = `name = "jittered-stamps"
site = "Quillmere Row, cable and gas main"
seed = 11
start = "2026-05-02T09:00:00Z"

[earth]
field_nt = [-150.0, 19200.0, -45100.0]

[sensor]
height_m = 0.3
noise_nt = 5.0
sample_rate_hz = 1000.0

[survey]
pattern = "traverses"
route = [[0.0, 0.0], [40.0, 0.0]]
count = 5
spacing_m = 8.0
first_at_m = 4.0
length_m = 10.0
speed_m_s = 1.0
turn_s = 5.0
zigzag = true

[[conductor]]
name = "cable"
kind = "line"
point = [0.0, 0.5, -0.9]
direction = [1.0, 0.0, 0.0]
current_a = 30.0
frequency_hz = 60.0
phase_deg = 170.0

[[conductor]]
name = "pipe"
kind = "line"
point = [0.0, -2.0, -1.2]
direction = [1.0, 0.0, 0.0]
current_a = 8.0
frequency_hz = 60.0
phase_deg = -150.0
`

// jitterStamps rewrites the time column of CSV log path with each stamp
// moved by a uniform error within ±j s.
func jitterStamps(t *testing.T, path string, j float64, rng *rand.Rand) {
	t.Helper()
	raw, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(string(raw), "\n")
	for i, ln := range lines {
		if ln == "" || strings.HasPrefix(ln, "#") || strings.HasPrefix(ln, "time") {
			continue
		}
		f := strings.SplitN(ln, ",", 2)
		v, err := strconv.ParseFloat(f[0], 64)
		if err != nil {
			t.Fatalf("%s: row %d: time %q", path, i, f[0])
		}
		lines[i] = strconv.FormatFloat(v+j*(2*rng.Float64()-1), 'f', -1, 64) + "," + f[1]
	}
	if err := os.WriteFile(path, []byte(strings.Join(lines, "\n")), 0o644); err != nil {
		t.Fatal(err)
	}
}

// TestLocateJitteredStampsPulls (Monte Carlo, simulated truth): the
// samples taken on a steady 1 kHz clock, each written stamp moved by a
// uniform ±0.25 ms (a logger stamping rows from a host clock). Over six
// seeds the pulls (fitted less true, over the sigma) of the cable's and
// the main's current and phase must have a mean within 0.5 and a standard
// deviation under 1.5, and a warning must name the stamps' scatter.
// Before, the stamps were used as they were, with no word: the cable's
// current pulls had a mean of -1.0 (a sine fitted at the wrong instants
// loses exp(-(ω σ)²/2) of its amplitude) and its phase pulls an sd of 2.1.
func TestLocateJitteredStampsPulls(t *testing.T) {
	if testing.Short() {
		t.Skip("Monte Carlo over six simulated surveys")
	}
	dir := t.TempDir()
	scPath := filepath.Join(dir, "jit.toml")
	if err := os.WriteFile(scPath, []byte(jitterScenario), 0o644); err != nil {
		t.Fatal(err)
	}
	sc, err := simulate.Load(scPath)
	if err != nil {
		t.Fatal(err)
	}
	pulls := map[string][]float64{}
	for seed := 1; seed <= 6; seed++ {
		log := filepath.Join(dir, "jit"+strconv.Itoa(seed)+".csv")
		mustCLI(t, "simulate", "--seed", strconv.Itoa(seed), scPath, "-o", log)
		jitterStamps(t, log, 2.5e-4, rand.New(rand.NewPCG(uint64(seed), 60)))
		doc := locateDoc(t, "--freq", "60", "--group-by", "group", "--reference-z", "0", log)
		warned := false
		for _, w := range doc.Warnings {
			warned = warned || strings.Contains(w, "time stamps scatter")
		}
		if !warned {
			t.Errorf("seed %d: no warning of the stamps' scatter: %q", seed, doc.Warnings)
		}
		for _, c := range sc.Crossings() {
			name := sc.Conductors[c.Conductor].Name
			var src *docSource
			best := 0.5 // m in plan from the true crossing
			for _, g := range doc.Groups {
				if g.Key != c.Line {
					continue
				}
				for i := range g.Sources {
					s := &g.Sources[i]
					if s.Kind != "line" {
						continue
					}
					dx, dy := c.Point[0]-s.Point[0], c.Point[1]-s.Point[1]
					if d := math.Abs(dx*s.Direction[1] - dy*s.Direction[0]); d < best {
						src, best = s, d
					}
				}
			}
			if src == nil || src.Phase == nil || src.PhaseSigma == nil {
				t.Errorf("seed %d: %s at %s not found", seed, name, c.Line)
				continue
			}
			ph := *src.Phase
			if src.Direction[0]*c.Dir[0]+src.Direction[1]*c.Dir[1] < 0 {
				ph += 180
			}
			dph := math.Mod(ph-c.Phase+540, 360) - 180
			pulls[name+" current"] = append(pulls[name+" current"], (src.Current-math.Abs(c.Current))/src.CurrentSigma)
			pulls[name+" phase"] = append(pulls[name+" phase"], dph / *src.PhaseSigma)
		}
	}
	for k, v := range pulls {
		var m, s float64
		for _, x := range v {
			m += x
		}
		m /= float64(len(v))
		for _, x := range v {
			s += (x - m) * (x - m)
		}
		sd := math.Sqrt(s / float64(len(v)-1))
		t.Logf("%s: %d pulls, mean %+.2f, sd %.2f", k, len(v), m, sd)
		if len(v) < 25 || math.Abs(m) > 0.5 || sd > 1.5 {
			t.Errorf("%s: %d pulls, mean %+.2f, sd %.2f: want 30, mean within 0.5, sd under 1.5", k, len(v), m, sd)
		}
	}
}
