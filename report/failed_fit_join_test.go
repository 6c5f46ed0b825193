package report

import (
	"bytes"
	"encoding/json"
	"testing"
)

// TestFailedFitJoinsAcrossFiles: a failed fit's results.csv row (group,
// source 1) joins route.geojson's "failed fit" Point, which now gives its
// source (its id stays failed-fit/GROUP), and results.json's
// route.stations[] says why a station was left out in left_out, as
// results.csv and route.geojson do (found in review: the Point had no
// source, and the reason was in the CSV and GeoJSON alone).
func TestFailedFitJoinsAcrossFiles(t *testing.T) {
	d := wickhamDoc(t, 5)
	csvWhy := map[string]string{}
	csvSource := map[string]string{}
	for _, r := range readCSV(t, d) {
		if r["used"] == "false" && r["source"] != "" {
			if _, seen := csvWhy[r["group"]]; !seen {
				csvWhy[r["group"]], csvSource[r["group"]] = r["left_out"], r["source"]
			}
		}
	}
	var gj bytes.Buffer
	if err := WriteGeoJSON(&gj, d); err != nil {
		t.Fatal(err)
	}
	var fc struct {
		Features []struct {
			ID         string         `json:"id"`
			Properties map[string]any `json:"properties"`
		} `json:"features"`
	}
	if err := json.Unmarshal(gj.Bytes(), &fc); err != nil {
		t.Fatal(err)
	}
	failed := 0
	for _, f := range fc.Features {
		p := f.Properties
		if p["feature"] != "failed fit" {
			continue
		}
		failed++
		g := p["group"].(string)
		if src, ok := p["source"].(float64); !ok || csvSource[g] != "1" || src != 1 {
			t.Errorf("failed fit %s: source %v, results.csv's row source %q; want 1 in both", g, p["source"], csvSource[g])
		}
		if f.ID != "failed-fit/"+g {
			t.Errorf("failed fit %s: id %q, want failed-fit/%s as before", g, f.ID, g)
		}
	}
	if failed == 0 {
		t.Fatal("no failed fit: the case is not exercised")
	}

	var buf bytes.Buffer
	if err := WriteJSON(&buf, d); err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Route struct {
			Stations []struct {
				Key     string  `json:"key"`
				Used    bool    `json:"used"`
				LeftOut *string `json:"left_out"`
			} `json:"stations"`
		} `json:"route"`
	}
	if err := json.Unmarshal(buf.Bytes(), &doc); err != nil {
		t.Fatal(err)
	}
	left := 0
	for _, st := range doc.Route.Stations {
		switch {
		case st.Used && st.LeftOut != nil:
			t.Errorf("used station %s has left_out %q", st.Key, *st.LeftOut)
		case !st.Used:
			left++
			if st.LeftOut == nil || *st.LeftOut == "" || (csvWhy[st.Key] != "" && *st.LeftOut != csvWhy[st.Key]) {
				t.Errorf("station %s left out: left_out %v, results.csv says %q", st.Key, st.LeftOut, csvWhy[st.Key])
			}
		}
	}
	if left == 0 {
		t.Fatal("no station left out")
	}
	// Read back and written again, the reason is the same, made afresh.
	back, err := ReadJSON(bytes.NewReader(buf.Bytes()), FileJSON)
	if err != nil {
		t.Fatal(err)
	}
	for _, st := range back.Route.Stations {
		if st.LeftOut != "" {
			t.Fatalf("station %s read back with left_out %q: it is made on writing", st.Key, st.LeftOut)
		}
	}
	var again bytes.Buffer
	if err := WriteJSON(&again, back); err != nil || !bytes.Equal(again.Bytes(), buf.Bytes()) {
		t.Errorf("written again differs (%v)", err)
	}
}
