package report

import (
	"encoding/json"
	"strings"
	"testing"
)

// TestCSVFailedFitHasNoNumbers: a failed fit's rows in results.csv (fit
// "failed", ok false) leave every number the fit estimated empty, as
// route.geojson's "failed fit" Point leaves them out
// (TestGeoJSONFailedFitIsNoConductor) and the crew report and terminal
// tables write "fit failed, no value": current, phase, depth, cover,
// moment, azimuth, dip, offset and their sigmas, and the pair_ and sum_
// columns. The row is placed at the centre of the group's readings, where
// route.geojson puts its Point. The group's own cells (points, rms_nt,
// dof, ok, problem, fit, used, left_out) stay. Before, the rows past the
// Wickham Staithe cable's end (wickhamStaithe: an 8 A cable, fields by
// Biot-Savart, ending before W6) gave a current, a depth and a cover
// (found in review: a cover of 0.636 m 14 m past a cable's end). Fails
// before the change. The sound stations keep theirs.
func TestCSVFailedFitHasNoNumbers(t *testing.T) {
	d := wickhamDoc(t, 5)
	var fitNumbers []string
	for _, h := range csvHeader {
		for _, p := range []string{"current", "phase", "depth_m", "depth_sigma", "cover", "moment", "azimuth", "dip", "offset", "pair_", "sum_", "station_scatter"} {
			if strings.Contains(h, p) {
				fitNumbers = append(fitNumbers, h)
				break
			}
		}
	}
	// Where route.geojson puts each failed fit's Point.
	points := map[string][2]float64{}
	_, feats := geoCollection(t, d)
	for _, f := range feats {
		p := f.Properties
		if p["feature"] != "failed fit" {
			continue
		}
		var pos [2]float64
		if err := json.Unmarshal(f.Geometry.Coordinates, &pos); err != nil {
			t.Fatal(err)
		}
		points[p["group"].(string)] = pos
	}
	failed := 0
	for _, r := range readCSV(t, d) {
		if r["fit"] != FitFailed {
			for _, k := range []string{"current_a", "depth_m", "cover_m", "azimuth_deg"} {
				if r[k] == "" {
					t.Errorf("%s (sound): %s empty", r["group"], k)
				}
			}
			continue
		}
		failed++
		for _, k := range fitNumbers {
			if r[k] != "" {
				t.Errorf("%s (failed): %s = %q, want empty", r["group"], k, r[k])
			}
		}
		for _, k := range []string{"points", "rms_nt", "dof", "problem", "left_out", "chainage_m"} {
			if r[k] == "" {
				t.Errorf("%s (failed): %s empty", r["group"], k)
			}
		}
		if r["ok"] != "false" || r["used"] != "false" || r["kind"] != KindLine {
			t.Errorf("%s (failed): ok %q, used %q, kind %q", r["group"], r["ok"], r["used"], r["kind"])
		}
		pos, ok := points[r["group"]]
		if !ok {
			t.Errorf("%s: no failed fit Point in route.geojson", r["group"])
			continue
		}
		// Both are written to the millimetre.
		if got := r["east_m"] + "," + r["north_m"]; got != fix(pos[0], 3)+","+fix(pos[1], 3) {
			t.Errorf("%s: results.csv at %s, route.geojson's failed fit Point at %v", r["group"], got, pos)
		}
	}
	if failed != 3 {
		t.Errorf("%d failed rows, want W6, W7 and W8", failed)
	}
}

// TestJSONGroupFitAgreesWithCSV: results.json's groups[].fit gives each
// group's worth in the words results.csv's fit column and route.geojson's
// "fit" property use, set from ok and problem when written whatever the
// document held, so a reader of results.json need not combine ok and
// problem itself. On the Wickham Staithe cable (wickhamDoc) the rows past
// its end are failed and the others sound or used with care. Fails before
// the change (no fit member).
func TestJSONGroupFitAgreesWithCSV(t *testing.T) {
	d := wickhamDoc(t, 5)
	var buf strings.Builder
	if err := WriteJSON(&buf, d); err != nil {
		t.Fatal(err)
	}
	var raw struct {
		Groups []struct {
			Key     string `json:"key"`
			OK      bool   `json:"ok"`
			Problem string `json:"problem"`
			Fit     string `json:"fit"`
		} `json:"groups"`
	}
	if err := json.Unmarshal([]byte(buf.String()), &raw); err != nil {
		t.Fatal(err)
	}
	csvFit := map[string]string{}
	for _, r := range readCSV(t, d) {
		csvFit[r["group"]] = r["fit"]
	}
	seen := map[string]int{}
	for _, g := range raw.Groups {
		want := FitSound
		switch {
		case !g.OK:
			want = FitFailed
		case g.Problem != "":
			want = FitWithCare
		}
		if g.Fit != want || g.Fit != csvFit[g.Key] {
			t.Errorf("%s: results.json fit %q, results.csv %q, want %q (ok %v, problem %q)", g.Key, g.Fit, csvFit[g.Key], want, g.OK, g.Problem)
		}
		seen[g.Fit]++
	}
	if seen[FitFailed] == 0 || seen[FitSound] == 0 {
		t.Errorf("fits written: %v, want failed and sound ones", seen)
	}
}
