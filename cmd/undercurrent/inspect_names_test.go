package main

import (
	"encoding/json"
	"sort"
	"strings"
	"testing"

	"undercurrent/report"
)

// TestInspectOriginNames: inspect --json names the WGS84 origin's members
// as results.json does (report.Origin: lat_deg, lon_deg, height_m), not by
// Go's field names.
func TestInspectOriginNames(t *testing.T) {
	p := ingestTemp(t, "kestrel.csv", "# undercurrent.frame: enu\n# undercurrent.origin: 54.3125 -2.0883 312\n"+
		"time,x,y,z,bx,by,bz\n0,0,0,0.25,460,16020,-46256\n0.1,0.1,0,0.25,460,16020,-46256\n")
	code, out, errOut := ingestRun(t, "inspect", "--json", p)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var got struct {
		Origin map[string]float64 `json:"origin"`
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatal(err)
	}
	b, err := json.Marshal(report.Origin{Lat: 54.3125, Lon: -2.0883, H: 312})
	if err != nil {
		t.Fatal(err)
	}
	var want map[string]float64
	if err := json.Unmarshal(b, &want); err != nil {
		t.Fatal(err)
	}
	keys := func(m map[string]float64) string {
		var k []string
		for s := range m {
			k = append(k, s)
		}
		sort.Strings(k)
		return strings.Join(k, ",")
	}
	if keys(got.Origin) != keys(want) {
		t.Fatalf("origin members %s, want results.json's %s", keys(got.Origin), keys(want))
	}
	for k, v := range want {
		if got.Origin[k] != v {
			t.Errorf("origin %s = %v, want %v", k, got.Origin[k], v)
		}
	}
}

// TestInspectGapDataRow: a gap is said to follow a data row counted from
// 1, in so many words, in the text and the JSON. Here the gap of 29 s
// follows the second reading (t = 1 s); ingest's 0-based row is 1.
func TestInspectGapDataRow(t *testing.T) {
	p := ingestTemp(t, "gap.csv", "time,x,y,z,bx,by,bz\n0,0,0,0,1,2,40000\n1,0,0,0,1,2,40000\n30,0,0,0,1,2,40000\n31,0,0,0,1,2,40000\n32,0,0,0,1,2,40000\n")
	code, out, errOut := ingestRun(t, "inspect", p)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	if want := "1 gap, longest 29 s after data row 2 of 5"; !strings.Contains(out, want) {
		t.Errorf("output lacks %q:\n%s", want, out)
	}
	code, out, errOut = ingestRun(t, "inspect", "--json", p)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var got struct {
		Time struct {
			Largest []map[string]float64 `json:"largest_gaps"`
		} `json:"time"`
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatal(err)
	}
	if len(got.Time.Largest) != 1 || got.Time.Largest[0]["after_data_row"] != 2 || got.Time.Largest[0]["row"] != 1 {
		t.Errorf("largest_gaps %v, want one after data row 2 (row 1 from 0)", got.Time.Largest)
	}
}
