package report

import (
	"bytes"
	"encoding/json"
	"testing"
)

// TestFailedStationJSONLeavesEstimatesOut: a route station whose fit
// failed has no current or depth; results.json must leave them out, as
// results.csv leaves its cells empty, rather than write 0 ± 0, which reads
// as an exact measurement of no current at no depth. A used station keeps
// them, even a zero current, and ReadJSON reads the missing ones as zero.
func TestFailedStationJSONLeavesEstimatesOut(t *testing.T) {
	d := fenwickLane(false)
	s := &d.Route.Stations[4]
	s.Current, s.CurrentSigma, s.Depth, s.DepthSigma, s.Cover, s.CoverSigma = 0, 0, 0, 0, nil, nil
	s.Used = false
	var buf bytes.Buffer
	if err := WriteJSON(&buf, d); err != nil {
		t.Fatal(err)
	}
	var raw struct {
		Route struct {
			Stations []map[string]any `json:"stations"`
		} `json:"route"`
	}
	if err := json.Unmarshal(buf.Bytes(), &raw); err != nil {
		t.Fatal(err)
	}
	names := []string{"current_a", "current_sigma_a", "depth_m", "depth_sigma_m"}
	for i, st := range raw.Route.Stations {
		for _, n := range names {
			_, has := st[n]
			if want := i != 4; has != want {
				t.Errorf("station %v: %s present %v, want %v", st["key"], n, has, want)
			}
		}
	}
	back, err := ReadJSON(bytes.NewReader(buf.Bytes()), "results.json")
	if err != nil {
		t.Fatal(err)
	}
	if got := back.Route.Stations[4]; got.Current != 0 || got.Depth != 0 || got.Used {
		t.Errorf("read back %+v", got)
	}
}
