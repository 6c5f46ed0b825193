package report

import (
	"bytes"
	"fmt"
	"regexp"
	"strings"
	"testing"
)

// TestReadScatterV2: version 2 documents were written with two meanings
// of the route's station_scatter_current_a and station_scatter_depth_m,
// first from the differences of successive stations (given with
// station_scatter_pairs), then, after that member was gone, about the
// line through each station's neighbours (given with
// station_scatter_triples), without schema_version growing (found in
// review). This version is 3; a version 2 document still reads, keeping a
// spread given with its triples and leaving out one given with pairs,
// which would otherwise be written again as version 3's.
func TestReadScatterV2(t *testing.T) {
	if SchemaVersion != 3 {
		t.Fatalf("SchemaVersion %d, want 3", SchemaVersion)
	}
	d := fenwickLane(false)
	ci, cd := 0.012, 0.004
	d.Route.StationScatterCurrent, d.Route.StationScatterDepth, d.Route.StationScatterTriples = &ci, &cd, 7
	var buf bytes.Buffer
	if err := WriteJSON(&buf, d); err != nil {
		t.Fatal(err)
	}
	v3 := buf.String()
	if !strings.Contains(v3, `"schema_version": 3,`) || !strings.Contains(v3, `"station_scatter_triples": 7`) {
		t.Fatal("fixture: no version 3 document with a spread")
	}
	v2 := strings.Replace(v3, `"schema_version": 3,`, `"schema_version": 2,`, 1)
	pairs := regexp.MustCompile(`"station_scatter_triples": 7`).ReplaceAllString(v2, `"station_scatter_pairs": 8`)
	for _, c := range []struct {
		name, text string
		keep       bool
	}{{"version 3", v3, true}, {"version 2 with triples", v2, true}, {"version 2 with pairs", pairs, false}} {
		back, err := ReadJSON(strings.NewReader(c.text), FileJSON)
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		r := back.Route
		got := r.StationScatterCurrent != nil && r.StationScatterDepth != nil
		if got != c.keep {
			t.Errorf("%s: spread read %v, want %v", c.name, got, c.keep)
		}
		if got && (*r.StationScatterCurrent != ci || *r.StationScatterDepth != cd || r.StationScatterTriples != 7) {
			t.Errorf("%s: spread %v A, %v m from %d triples; written %v, %v, 7", c.name, *r.StationScatterCurrent, *r.StationScatterDepth, r.StationScatterTriples, ci, cd)
		}
		var again bytes.Buffer
		if err := WriteJSON(&again, back); err != nil {
			t.Fatalf("%s: writing again: %v", c.name, err)
		}
		if want := fmt.Sprintf(`"schema_version": %d,`, SchemaVersion); !strings.Contains(again.String(), want) || strings.Contains(again.String(), "station_scatter_pairs") {
			t.Errorf("%s: written again without %s, or with station_scatter_pairs", c.name, want)
		}
	}
}
