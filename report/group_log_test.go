package report

import (
	"bytes"
	"strings"
	"testing"
)

// TestGroupLogOutputs: each group's survey log (Group.Log) is written to
// results.json (and read back), results.csv's log column, route.geojson's
// log property and, when the groups come from more than one log, a Log
// column of the crew report's table of groups. Before, a group's log could
// not be recovered from any output where its name stood bare (a second
// crew's T14 read as the first crew's; found in review).
func TestGroupLogOutputs(t *testing.T) {
	d := fenwickLane(false)
	for i := range d.Groups {
		if i >= 6 {
			d.Groups[i].Log = "day2/fenwick-lane.csv"
		}
	}
	var js bytes.Buffer
	if err := WriteJSON(&js, d); err != nil {
		t.Fatal(err)
	}
	back, err := ReadJSON(bytes.NewReader(js.Bytes()), "results.json")
	if err != nil {
		t.Fatal(err)
	}
	for i, g := range back.Groups {
		if g.Log != d.Groups[i].Log {
			t.Errorf("results.json group %s: log %q read back, want %q", g.Key, g.Log, d.Groups[i].Log)
		}
	}
	// Appended: the earlier columns keep their places.
	if csvHeader[len(csvHeader)-1] != "log" || csvHeader[len(csvHeader)-2] != "station_scatter_depth_m" {
		t.Errorf("results.csv: log is not appended after station_scatter_depth_m: %q", csvHeader)
	}
	rows := readCSV(t, d)
	for _, r := range rows {
		want := "fenwick-lane.csv"
		if r["group"] >= "T07" {
			want = "day2/fenwick-lane.csv"
		}
		if r["log"] != want {
			t.Errorf("results.csv group %s: log %q, want %q", r["group"], r["log"], want)
		}
	}
	var gj bytes.Buffer
	if err := WriteGeoJSON(&gj, d); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(gj.String(), `"group":"T07","log":"day2/fenwick-lane.csv"`) {
		t.Error(`route.geojson: T07's Point lacks "log":"day2/fenwick-lane.csv"`)
	}
	html := func(d *Document) string {
		var b bytes.Buffer
		if err := WriteHTML(&b, d); err != nil {
			t.Fatal(err)
		}
		return b.String()
	}
	two := html(d)
	if !strings.Contains(two, "<th>Log</th>") || !strings.Contains(two, "<td>day2/fenwick-lane.csv</td>") {
		t.Error("report.html: two logs, but the table of groups has no Log column naming day2/fenwick-lane.csv")
	}
	if one := html(fenwickLane(false)); strings.Contains(one, "<th>Log</th>") {
		t.Error("report.html: one log, but the table of groups has a Log column")
	}
}
