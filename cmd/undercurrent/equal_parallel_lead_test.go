package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// brackwaterClose is an invented survey at Brackwater Close: two DC cables
// of one feed, 10 A each the same way, 0.8 m down at north -0.75 and +0.75 m,
// run east under ten 10 m traverses every 3 m from east 2 m. SEED is filled
// in.
const brackwaterClose = `name = "brackwater-close"
site = "Brackwater Close (invented)"
seed = SEED
start = "2026-02-02T14:00:00Z"
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
[sensor]
height_m = 0.3
noise_nt = 2.0
[survey]
route = [[0.0, 0.0], [40.0, 0.0]]
count = 10
spacing_m = 3.0
first_at_m = 2.0
length_m = 10.0
speed_m_s = 0.5
sample_spacing_m = 0.1
turn_s = 10.0
[[conductor]]
name = "south"
kind = "line"
point = [0.0, -0.75, -0.8]
direction = [1.0, 0.0, 0.0]
current_a = 10.0
[[conductor]]
name = "north"
kind = "line"
point = [0.0, 0.75, -0.8]
direction = [1.0, 0.0, 0.0]
current_a = 10.0
`

// TestLocateEqualParallelCablesKeepConductor1: two cables of equal current
// side by side, whose currents no traverse tells apart. Against the
// simulated truth (the Biot-Savart field of two straight lines, DOMAIN.md),
// conductor 1 must follow one cable at every traverse (every station within
// 0.2 m of the same cable's north offset, the fits placing each cable to
// millimetres), its chainage must span the 27 m between the first and last
// traverses (within 0.1 m), its route must set off east along the cables,
// and the other cable must be the one further conductor, followed at all ten
// traverses. Before, the route took whichever cable the noise made
// stronger: on seed 3 its stations alternated between north +0.75 and
// -0.75 m, its chainage ran to 28.8 m, and a non-existent "conductor 3" was
// reported; seeds 1, 2 and 4 zigzagged too.
func TestLocateEqualParallelCablesKeepConductor1(t *testing.T) {
	dir := t.TempDir()
	for _, seed := range []int{1, 3} {
		name := "brackwater-" + strconv.Itoa(seed)
		log := simulateText(t, dir, name, strings.ReplaceAll(brackwaterClose, "SEED", strconv.Itoa(seed)), ".csv")
		outDir := filepath.Join(dir, name+"-out")
		mustCLI(t, "locate", "--group-by", "group", "--reference-z", "0", "-o", outDir, log)
		raw, err := os.ReadFile(filepath.Join(outDir, "results.json"))
		if err != nil {
			t.Fatal(err)
		}
		type station struct {
			Key      string     `json:"key"`
			Chainage float64    `json:"chainage_m"`
			Point    [3]float64 `json:"point_m"`
		}
		var doc struct {
			Route struct {
				Stations []station `json:"stations"`
			} `json:"route"`
			Conductors []struct {
				Number int `json:"number"`
				Route  struct {
					Stations []station `json:"stations"`
				} `json:"route"`
			} `json:"conductors"`
		}
		if err := json.Unmarshal(raw, &doc); err != nil {
			t.Fatal(err)
		}
		st := doc.Route.Stations
		if len(st) != 10 {
			t.Fatalf("seed %d: %d route stations, want 10", seed, len(st))
		}
		cable := 0.75
		if st[0].Point[1] < 0 {
			cable = -0.75
		}
		for _, s := range st {
			if !(math.Abs(s.Point[1]-cable) <= 0.2) {
				t.Errorf("seed %d: conductor 1 at %s lies at north %.3f m, want the cable at %.2f m it starts on", seed, s.Key, s.Point[1], cable)
			}
		}
		last := st[len(st)-1]
		if !(math.Abs(last.Chainage-27) <= 0.1) {
			t.Errorf("seed %d: conductor 1's chainage runs to %.2f m at %s, want 27 m (traverses 3 m apart)", seed, last.Chainage, last.Key)
		}
		if len(doc.Conductors) != 1 || doc.Conductors[0].Number != 2 {
			t.Errorf("seed %d: %d further conductors reported, want 1 (conductor 2) for the two cables", seed, len(doc.Conductors))
			continue
		}
		c2 := doc.Conductors[0].Route.Stations
		if len(c2) != 10 {
			t.Errorf("seed %d: conductor 2 followed at %d traverses, want 10", seed, len(c2))
		}
		for _, s := range c2 {
			if !(math.Abs(s.Point[1]+cable) <= 0.2) {
				t.Errorf("seed %d: conductor 2 at %s lies at north %.3f m, want the other cable at %.2f m", seed, s.Key, s.Point[1], -cable)
			}
		}
	}
}
