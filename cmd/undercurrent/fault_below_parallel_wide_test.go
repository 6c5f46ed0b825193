package main

import (
	"fmt"
	"math"
	"strings"
	"testing"
)

// wideDoc is the part of the result document the test reads: conductor
// 1's stations besides resultDoc's conductors and findings.
type wideDoc struct {
	Route *struct {
		Stations []struct {
			Key     string     `json:"key"`
			Used    bool       `json:"used"`
			Point   [3]float64 `json:"point_m"`
			Current float64    `json:"current_a"`
		} `json:"stations"`
	} `json:"route"`
	Findings   []docFinding `json:"findings"`
	Conductors []struct {
		Number int     `json:"number"`
		Offset float64 `json:"offset_m"`
		Route  struct {
			Stations []struct {
				Key string `json:"key"`
			} `json:"stations"`
		} `json:"route"`
	} `json:"conductors"`
}

// TestLocateFaultBelowParallelCableWideTraverses: sallowHoltFeeder walked
// once (traverses 60 m apart; the fault under T03, chainage 120 m, leaves
// the cable the stronger at nine of the twelve traverses). Simulated
// truth: conductor 1 is the cable at every station (E 3 m); the feeder is
// the one further conductor, followed at all 12 traverses 3 m aside, and
// its fall of 13 A is the only warning of a change of current, within 3
// sigma and bracketing chainage 120 m; nothing is said to end. Before, at
// seed 611 (of seeds 600-629 the one draw that failed), the feeder's line
// carried 540 m on passed within reach of the cable's, the two were taken
// as one track and conductor 1 stayed on the feeder to T03 and moved onto
// the cable past it: a fall of 6.98 A for 13 A, the cable before T03 and
// the feeder past it two separate further conductors.
func TestLocateFaultBelowParallelCableWideTraverses(t *testing.T) {
	dir := t.TempDir()
	for _, seed := range []int{611, 612, 5} {
		log := sallowHoltLog(t, dir, fmt.Sprintf("wide-%d", seed), seed, "2026-06-08T09:00:00Z", 1, 0, 0)
		doc := locateInto[wideDoc](t, "--group-by", "group", "--reference-z", "0", log)
		if doc.Route == nil || len(doc.Route.Stations) != 12 {
			t.Fatalf("seed %d: want a route over 12 stations", seed)
		}
		for _, s := range doc.Route.Stations {
			if math.Abs(s.Point[0]-3) > 1 {
				t.Errorf("seed %d: conductor 1 at %s lies at E %.2f m carrying %.4g A, want the cable (E 3 m) throughout", seed, s.Key, s.Point[0], s.Current)
			}
		}
		if len(doc.Conductors) != 1 || len(doc.Conductors[0].Route.Stations) != 12 || math.Abs(math.Abs(doc.Conductors[0].Offset)-3) > 0.5 {
			var got []string
			for _, tr := range doc.Conductors {
				got = append(got, fmt.Sprintf("conductor %d %.2f m aside at %d traverses", tr.Number, tr.Offset, len(tr.Route.Stations)))
			}
			t.Errorf("seed %d: further conductors %v, want the feeder alone, 3 m aside at all 12 traverses", seed, got)
			continue
		}
		feeder := doc.Conductors[0].Number
		falls := 0
		for _, f := range doc.Findings {
			if strings.Contains(f.Message, "appears to end") {
				t.Errorf("seed %d: conductor %d said to end (neither the feeder nor the cable ends): %s", seed, max(f.Conductor, 1), f.Message)
			}
			if f.Kind != "current-step" && f.Kind != "current-change" || f.Severity == "info" {
				continue
			}
			if f.Conductor != feeder || f.From > 120 || f.To < 120 || len(f.Values) == 0 {
				t.Errorf("seed %d: a change of current other than the feeder's (conductor %d) at chainage 120 m: %s", seed, feeder, f.Message)
				continue
			}
			falls++
			if v := f.Values[0]; math.Abs(v.Value+13) > 3*v.Sigma {
				t.Errorf("seed %d: change %.4g ± %.2g A, beyond 3 sigma of the truth -13 A: %s", seed, v.Value, v.Sigma, f.Message)
			}
		}
		if falls != 1 {
			t.Errorf("seed %d: %d falls of the feeder's current at the fault, want 1", seed, falls)
		}
	}
}
