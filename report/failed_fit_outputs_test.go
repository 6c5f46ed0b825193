package report

import (
	"bytes"
	"encoding/json"
	"strings"
	"testing"

	"undercurrent/inverse"
)

// TestFailedFitLeavesStatisticsOut: a group whose fit failed before
// fitting anything (a traverse cut to one reading, which inverse.FitLines
// refuses) has no residual RMS, background or chi-square. results.json
// leaves rms_nt, background_nt, background_sigma_nt, chi2 and dof out of
// it, results.csv leaves rms_nt empty and the crew report's table shows a
// dash, as README asks of every value a failed fit did not estimate
// ("left empty or out, not written as 0, which would read as exact").
// Before, each gave 0: a perfect fit. The sound groups keep theirs.
func TestFailedFitLeavesStatisticsOut(t *testing.T) {
	fits := kestrelMoor(t)
	one := &inverse.Problem{Points: fits[4].Problem.Points[:1], Fields: fits[4].Problem.Fields[:1], Sigma: 2}
	res, err := inverse.FitLines(one, &inverse.Settings{Count: 1})
	if err == nil {
		t.Fatal("inverse.FitLines fitted a line to one reading")
	}
	fits[4] = Fit{Key: fits[4].Key, Problem: one, Result: res, Err: err}
	d, err := Build(Document{Title: "Kestrel Moor gas spur"}, fits, &BuildSettings{Noise: 2, SensorHeight: 0.3})
	if err != nil {
		t.Fatal(err)
	}

	var buf bytes.Buffer
	if err := WriteJSON(&buf, d); err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Groups []map[string]any `json:"groups"`
	}
	if err := json.Unmarshal(buf.Bytes(), &doc); err != nil {
		t.Fatal(err)
	}
	stats := []string{"rms_nt", "background_nt", "background_sigma_nt", "chi2", "dof"}
	seen := 0
	for _, g := range doc.Groups {
		failed := g["key"] == "K5"
		if failed {
			seen++
			if g["ok"] != false || !strings.Contains(g["problem"].(string), "too few") {
				t.Errorf("K5: ok %v, problem %v; want a failed fit", g["ok"], g["problem"])
			}
		}
		for _, k := range stats {
			if _, has := g[k]; has == failed {
				t.Errorf("results.json group %v: has %s %v, want it only for a fitted group", g["key"], k, has)
			}
		}
		if rms, _ := g["rms_nt"].(float64); !failed && !(rms > 0) {
			t.Errorf("results.json group %v: rms_nt %v", g["key"], g["rms_nt"])
		}
	}
	if seen != 1 {
		t.Fatalf("K5 appears %d times in results.json", seen)
	}
	back, err := ReadJSON(bytes.NewReader(buf.Bytes()), FileJSON)
	if err != nil {
		t.Fatal(err)
	}
	for i, g := range back.Groups {
		if g.Key == "K5" && (g.RMS != 0 || g.DOF != 0 || g.OK) {
			t.Errorf("K5 read back as rms %g, dof %d, ok %v", g.RMS, g.DOF, g.OK)
		}
		if g.Key != "K5" && g.RMS != d.Groups[i].RMS {
			t.Errorf("%s: rms %g read back as %g", g.Key, d.Groups[i].RMS, g.RMS)
		}
	}

	for _, row := range csvRows(t, d, func(b *bytes.Buffer, d *Document) error { return WriteCSV(b, d) }) {
		if (row["rms_nt"] == "") != (row["group"] == "K5") {
			t.Errorf("results.csv %s: rms_nt %q, want it empty only for the failed fit", row["group"], row["rms_nt"])
		}
	}

	buf.Reset()
	if err := WriteHTML(&buf, d); err != nil {
		t.Fatal(err)
	}
	page := buf.String()
	i := strings.Index(page, `<th scope="row" class="stick">K5</th>`)
	if i < 0 {
		t.Fatal("no K5 row in the report")
	}
	row, _, _ := strings.Cut(page[i:], "</tr>")
	if !strings.Contains(row, `<td class="num">–</td>`) || strings.Contains(row, `<td class="num">0</td>`) {
		t.Errorf("the report's K5 row gives an rms: %s", row)
	}
}
