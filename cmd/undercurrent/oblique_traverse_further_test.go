package main

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// tollandMarsh is an invented survey at Tolland Marsh: traverses square to
// a planned line due east, 24 m long at east 4, 7, ..., 22 m, cross two DC
// cables obliquely. Cable 1, 30 A, runs level 0.9 m down at azimuth 65
// degrees through (0, -6): the traverses cross it at 65 degrees. Cable 2,
// 20 A, diverges from it at azimuth 55 degrees through (0, -2), 1.0 m down
// there and dipping 3 per cent (1.7 degrees) to 2.2 m down 40 m along it (a
// polyline, level 200 m before and after; its vertices are
// (0, -2) + s (sin 55°, cos 55°) at s = -200, 0, 40 and 240 m). SEED is
// filled in.
const tollandMarsh = `name = "tolland-marsh"
site = "Tolland Marsh pumping station feeders (invented)"
seed = SEED
start = "2026-02-02T15:00:00Z"
[earth]
field_nt = [-150.0, 19200.0, -45100.0]
[sensor]
height_m = 0.3
noise_nt = 2.0
[survey]
route = [[0.0, 0.0], [30.0, 0.0]]
count = 7
spacing_m = 3.0
first_at_m = 4.0
length_m = 24.0
speed_m_s = 0.5
sample_spacing_m = 0.1
turn_s = 10.0
[[conductor]]
name = "cable 1"
kind = "line"
point = [0.0, -6.0, -0.9]
direction = [0.906307787, 0.422618262, 0.0]
current_a = 30.0
[[conductor]]
name = "cable 2"
kind = "polyline"
vertices = [[-163.830409, -116.715287, -1.0], [0.0, -2.0, -1.0], [32.766082, 20.943057, -2.2], [196.596491, 135.658345, -2.2]]
current_a = 20.0
`

// TestLocateObliqueTraverseFurtherStations: on traverses oblique to
// conductor 1, a further conductor's stations lie where its line crosses
// each traverse, with its depth there, as conductor 1's do. Against the
// simulated truth (undercurrent simulate, the Biot-Savart field of the two
// cables, DOMAIN.md; plane geometry for where each traverse crosses cable
// 2 and its depth there), seeds 1 and 2: every station of conductor 2
// within 5 cm of the crossing, its chainage (along cable 2 from T01) within
// 5 cm, its depth below the ground within 4 sigma plus 1 cm (the
// straight-line fit of a bent polyline), and the length followed, along
// cable 2 from T01 to T07 in plan (21.98 m), within 0.5 m. Before, the
// stations lay where cable 2 meets cable 1's cross section at cable 1's
// station, 2.1 to 3.9 m along cable 2 from the traverses (their distance
// apart along the traverse x cos 65 degrees), its depths there 0.06 to
// 0.12 m (25 to 100 sigma) shallower than at the traverses, its chainages
// 8% short, and the terminal said it was followed for 20 m.
func TestLocateObliqueTraverseFurtherStations(t *testing.T) {
	dir := t.TempDir()
	az2 := 55 * math.Pi / 180
	u2 := [2]float64{math.Sin(az2), math.Cos(az2)}
	o2 := [2]float64{0, -2}
	depth2 := func(s float64) float64 { return 1.0 + 0.03*math.Max(0, math.Min(40, s)) }
	xs := []float64{4, 7, 10, 13, 16, 19, 22}
	s0, sLast := xs[0]/u2[0], xs[len(xs)-1]/u2[0]
	for _, seed := range []int{1, 2} {
		name := "tolland-" + strconv.Itoa(seed)
		log := simulateText(t, dir, name, strings.ReplaceAll(tollandMarsh, "SEED", strconv.Itoa(seed)), ".csv")
		outDir := filepath.Join(dir, name+"-out")
		out := mustCLI(t, "locate", "--group-by", "group", "--reference-z", "0", "-o", outDir, log)
		raw, err := os.ReadFile(filepath.Join(outDir, "results.json"))
		if err != nil {
			t.Fatal(err)
		}
		var doc struct {
			Conductors []struct {
				Number int `json:"number"`
				Route  struct {
					Stations []struct {
						Key        string     `json:"key"`
						Chainage   float64    `json:"chainage_m"`
						Point      [3]float64 `json:"point_m"`
						Depth      float64    `json:"depth_m"`
						DepthSigma float64    `json:"depth_sigma_m"`
					} `json:"stations"`
				} `json:"route"`
				Crossing *struct {
					Length float64 `json:"length_m"`
				} `json:"crossing"`
			} `json:"conductors"`
		}
		if err := json.Unmarshal(raw, &doc); err != nil {
			t.Fatal(err)
		}
		if len(doc.Conductors) != 1 || doc.Conductors[0].Number != 2 || len(doc.Conductors[0].Route.Stations) != len(xs) {
			t.Fatalf("seed %d: want cable 2 followed as conductor 2 at all %d traverses; conductors %+v", seed, len(xs), doc.Conductors)
		}
		c := doc.Conductors[0]
		for i, st := range c.Route.Stations {
			key := fmt.Sprintf("T%02d", i+1)
			if st.Key != key {
				t.Errorf("seed %d: conductor 2's station %d is %s, want %s", seed, i+1, st.Key, key)
				continue
			}
			s := xs[i] / u2[0]
			pe, pn := o2[0]+s*u2[0], o2[1]+s*u2[1]
			if e := math.Hypot(st.Point[0]-pe, st.Point[1]-pn); !(e <= 0.05) {
				t.Errorf("seed %d: %s: conductor 2 at E %.3f N %.3f, %.3f m from where the traverse crosses cable 2 (E %.3f N %.3f)",
					seed, key, st.Point[0], st.Point[1], e, pe, pn)
			}
			if want := (s - s0) * math.Hypot(1, 0.03); !(math.Abs(st.Chainage-want) <= 0.05) {
				t.Errorf("seed %d: %s: conductor 2 at chainage %.3f m, truth %.3f m", seed, key, st.Chainage, want)
			}
			if want := depth2(s); !(math.Abs(st.Depth-want) <= 4*st.DepthSigma+0.01) {
				t.Errorf("seed %d: %s: conductor 2 %.4f ± %.4f m down, truth %.4f m where the traverse crosses it", seed, key, st.Depth, st.DepthSigma, want)
			}
		}
		if c.Crossing == nil {
			t.Errorf("seed %d: conductor 2, diverging 10 degrees from conductor 1, has no crossing summary", seed)
		} else if want := sLast - s0; !(math.Abs(c.Crossing.Length-want) <= 0.5) {
			t.Errorf("seed %d: conductor 2 followed for %.2f m, truth %.2f m", seed, c.Crossing.Length, want)
		}
		if !strings.Contains(out, "it was followed for 22 m in 7 groups") {
			t.Errorf("seed %d: the summary does not say conductor 2 was followed for 22 m (21.98 m along it):\n%s", seed, out)
		}
	}
}
