package report

import (
	"bytes"
	"encoding/json"
	"math"
	"strconv"
	"testing"
)

// A station set aside as a magnetised object keeps its values (README,
// the route row of results.json), cover among them: results.json gives
// its cover_m and cover_sigma_m as results.csv gives them on the
// station's line source, depth less the sensor height (0.25 m in the
// Fenwick Lane fixture). Before, results.json had the object station's
// depth but no cover while results.csv and route.geojson gave one.
func TestObjectStationCoverInEveryFormat(t *testing.T) {
	d := fenwickLane(false)
	var buf bytes.Buffer
	if err := WriteJSON(&buf, d); err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Route struct {
			Stations []struct {
				Key        string
				Used       bool
				Depth      *float64 `json:"depth_m"`
				Cover      *float64 `json:"cover_m"`
				CoverSigma *float64 `json:"cover_sigma_m"`
			}
		}
	}
	if err := json.Unmarshal(buf.Bytes(), &doc); err != nil {
		t.Fatal(err)
	}
	var csvCover, csvSigma float64
	found := false
	for _, r := range readCSV(t, d) {
		if r["group"] == "T11" && r["source"] == "1" {
			c, err1 := strconv.ParseFloat(r["cover_m"], 64)
			s, err2 := strconv.ParseFloat(r["cover_sigma_m"], 64)
			if err1 != nil || err2 != nil {
				t.Fatalf("results.csv T11 source 1: cover %q ± %q", r["cover_m"], r["cover_sigma_m"])
			}
			csvCover, csvSigma, found = c, s, true
		}
	}
	if !found {
		t.Fatal("no T11 source 1 row in results.csv")
	}
	for _, s := range doc.Route.Stations {
		if s.Key != "T11" {
			continue
		}
		if s.Used || s.Depth == nil {
			t.Fatalf("T11: used %v, depth %v: want the object station left out with its depth", s.Used, s.Depth)
		}
		if s.Cover == nil || s.CoverSigma == nil {
			t.Fatalf("results.json T11: depth %g m but no cover (results.csv %g ± %g m)", *s.Depth, csvCover, csvSigma)
		}
		if math.Abs(*s.Cover-(*s.Depth-0.25)) > 1e-9 || math.Abs(*s.Cover-csvCover) > 1e-3 || math.Abs(*s.CoverSigma-csvSigma) > 1e-3 {
			t.Errorf("results.json T11 cover %g ± %g m, depth %g m; results.csv %g ± %g m", *s.Cover, *s.CoverSigma, *s.Depth, csvCover, csvSigma)
		}
		return
	}
	t.Fatal("no station T11 in results.json")
}
