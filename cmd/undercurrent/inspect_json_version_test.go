package main

import (
	"encoding/json"
	"fmt"
	"strings"
	"testing"
)

// TestInspectJSONVersionToolUnits: inspect --json carries schema_version
// and the tool block results.json has (name, version, build), and gives
// its durations with their unit in the name as the result document does
// (time.duration_s, interval_s, rate_hz, largest_gaps[].length_s) beside
// the deprecated names, with the same values (found in review: none of
// these were there). frame stays the field's frame as --frame names it.
func TestInspectJSONVersionToolUnits(t *testing.T) {
	var b strings.Builder
	b.WriteString("# undercurrent.frame: enu\ntime,x,y,z,bx,by,bz\n")
	for i := 0; i < 20; i++ {
		tm := 0.1 * float64(i)
		if i >= 10 {
			tm += 3 // a 3.1 s gap after data row 10
		}
		fmt.Fprintf(&b, "%.1f,%.1f,0,0.25,460,16020,-46256\n", tm, tm)
	}
	p := ingestTemp(t, "gap.csv", b.String())
	code, out, errOut := ingestRun(t, "inspect", "--json", p)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var got struct {
		SchemaVersion *int              `json:"schema_version"`
		Tool          map[string]string `json:"tool"`
		Frame         string            `json:"frame"`
		Time          struct {
			Duration  float64 `json:"duration"`
			DurationS float64 `json:"duration_s"`
			Interval  float64 `json:"interval"`
			IntervalS float64 `json:"interval_s"`
			Rate      float64 `json:"rate"`
			RateHz    float64 `json:"rate_hz"`
			Largest   []struct {
				Length  float64 `json:"length"`
				LengthS float64 `json:"length_s"`
				DataRow int     `json:"after_data_row"`
			} `json:"largest_gaps"`
		} `json:"time"`
	}
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatal(err)
	}
	if got.SchemaVersion == nil || *got.SchemaVersion != inspectSchemaVersion {
		t.Errorf("schema_version %v, want %d", got.SchemaVersion, inspectSchemaVersion)
	}
	if got.Tool["name"] != "undercurrent" || got.Tool["version"] != toolVersion() || got.Tool["build"] != buildText() {
		t.Errorf("tool %v, want undercurrent %s (%s)", got.Tool, toolVersion(), buildText())
	}
	if got.Frame != "enu" {
		t.Errorf("frame %q, want enu (the field's frame, as --frame names it)", got.Frame)
	}
	tm := got.Time
	if tm.DurationS != tm.Duration || tm.IntervalS != tm.Interval || tm.RateHz != tm.Rate {
		t.Errorf("time %+v: the _s and _hz fields differ from the deprecated ones", tm)
	}
	if d := tm.DurationS - 4.9; d > 1e-9 || d < -1e-9 {
		t.Errorf("duration_s %g, want 4.9", tm.DurationS)
	}
	if d := tm.IntervalS - 0.1; d > 1e-9 || d < -1e-9 {
		t.Errorf("interval_s %g, want 0.1", tm.IntervalS)
	}
	if len(tm.Largest) != 1 || tm.Largest[0].LengthS != tm.Largest[0].Length || tm.Largest[0].DataRow != 10 {
		t.Fatalf("largest_gaps %+v: want one after data row 10 with length_s = length", tm.Largest)
	}
	if d := tm.Largest[0].LengthS - 3.1; d > 1e-9 || d < -1e-9 {
		t.Errorf("gap length_s %g, want 3.1", tm.Largest[0].LengthS)
	}
}
