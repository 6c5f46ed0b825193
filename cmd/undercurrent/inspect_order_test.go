package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// inspectTime runs inspect --json with args and returns its time section
// and warnings.
func inspectTime(t *testing.T, args ...string) (backwards, repeated, gaps int, interval float64, warnings []string) {
	t.Helper()
	out := mustCLI(t, append([]string{"inspect", "--json"}, args...)...)
	var doc struct {
		Time struct {
			Backwards int     `json:"backwards"`
			Repeated  int     `json:"repeated"`
			Gaps      int     `json:"gaps"`
			Interval  float64 `json:"interval"`
		} `json:"time"`
		Warnings []string `json:"warnings"`
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatalf("inspect --json: %v\n%s", err, out)
	}
	return doc.Time.Backwards, doc.Time.Repeated, doc.Time.Gaps, doc.Time.Interval, doc.Warnings
}

// TestInspectTimeOrder: inspect counts time order as --time-order says,
// and an unsorted log's gaps in time order. Before, the flag was ignored
// (a log of two sensors logged one after another, declared per-group,
// still read "an error unless allowed"), and two swapped rows of a log
// sampled every second with nothing missing were reported as two 2 s gaps.
// Invented fixtures at 1 s sampling.
func TestInspectTimeOrder(t *testing.T) {
	swapped := ingestTemp(t, "swapped.csv", "time,x,y,z,bx,by,bz\n"+
		"1776760800,0,0,0.25,450,16000,-46250\n1776760801,0,0.5,0.25,451,16001,-46251\n"+
		"1776760802,0,1,0.25,452,16002,-46252\n1776760803,0,1.5,0.25,453,16003,-46253\n"+
		"1776760805,0,2.5,0.25,455,16005,-46255\n1776760804,0,2,0.25,454,16004,-46254\n"+
		"1776760806,0,3,0.25,456,16006,-46256\n1776760807,0,3.5,0.25,457,16007,-46257\n")
	back, _, gaps, dt, warns := inspectTime(t, swapped)
	if back != 1 || gaps != 0 || dt != 1 || !anyHas(warns, "goes backwards once: convert, locate and calibrate refuse") {
		t.Errorf("two swapped rows: %d backwards, %d gaps, step %g s, warnings %q; want 1, no gap, 1 s and a warning that the others refuse it", back, gaps, dt, warns)
	}
	if _, out, _ := cli(t, "inspect", swapped); !strings.Contains(out, "median step 1 s (1 Hz); 0 gaps") {
		t.Errorf("two swapped rows: summary\n%s\nwant \"0 gaps\"", out)
	}
	// A real gap in a log out of order is still one: 3 s missing after
	// the swapped pair.
	gappy := strings.Replace(readText(t, swapped), "1776760806,", "1776760809,", 1)
	gappy = strings.Replace(gappy, "1776760807,", "1776760810,", 1)
	if _, _, gaps, _, _ := inspectTime(t, ingestTemp(t, "gappy.csv", gappy)); gaps != 1 {
		t.Errorf("a 4 s step in a log out of order: %d gaps, want 1", gaps)
	}

	// Two sensors logged one after another.
	var b strings.Builder
	b.WriteString("time,x,y,z,bx,by,bz,group\n")
	for _, g := range []string{"S1", "S2"} {
		for i := 0; i < 5; i++ {
			b.WriteString("177676080" + string(rune('0'+i)) + ",0,0,0,450,16000,-46250," + g + "\n")
		}
	}
	pergroup := ingestTemp(t, "pergroup.csv", b.String())
	for _, tc := range []struct {
		order string
		back  int
		want  string
	}{
		{"ordered", 1, "within each group it runs forward, so --time-order per-group reads it"},
		{"per-group", 0, "goes backwards once from one group to the next, as --time-order per-group allows"},
		{"any", 1, "goes backwards once, as --time-order any allows"},
	} {
		back, _, gaps, _, warns := inspectTime(t, "--time-order", tc.order, pergroup)
		if back != tc.back || gaps != 0 || !anyHas(warns, tc.want) || anyHas(warns, "an error unless allowed") {
			t.Errorf("--time-order %s: %d backwards, %d gaps, warnings %q; want %d, no gap, and %q", tc.order, back, gaps, warns, tc.back, tc.want)
		}
	}
	// A step back within a group stays one with per-group.
	within := strings.Replace(b.String(), "1776760803,0,0,0,450,16000,-46250,S2", "1776760800,0,0,0,450,16000,-46250,S2", 1)
	if back, _, _, _, warns := inspectTime(t, "--time-order", "per-group", ingestTemp(t, "within.csv", within)); back != 1 || !anyHas(warns, "goes backwards once within a group") {
		t.Errorf("a step back within a group: %d backwards, warnings %q; want 1 within a group", back, warns)
	}
}

func readText(t *testing.T, path string) string {
	t.Helper()
	raw, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return string(raw)
}

// TestInspectAllowUnterminated: inspect reads an Arrow IPC stream cut
// short either way, and its warning says whether the other commands do,
// as --allow-unterminated says (before, the flag did nothing in inspect).
func TestInspectAllowUnterminated(t *testing.T) {
	dir := t.TempDir()
	src := ingestTemp(t, "walk.csv", "time,x,y,z,bx,by,bz\n1776760800,0,0,0.25,450,16000,-46250\n1776760801,0,0.5,0.25,451,16001,-46251\n")
	stream := filepath.Join(dir, "walk.arrows")
	mustCLI(t, "convert", src, stream)
	raw, err := os.ReadFile(stream)
	if err != nil {
		t.Fatal(err)
	}
	// The end-of-stream marker is the last 8 bytes, 0xFFFFFFFF 0x00000000
	// (Arrow columnar format, IPC streaming format).
	if n := len(raw); n < 8 || string(raw[n-8:]) != "\xff\xff\xff\xff\x00\x00\x00\x00" {
		t.Fatalf("%s does not end with the end-of-stream marker", stream)
	}
	cut := filepath.Join(dir, "cut.arrows")
	if err := os.WriteFile(cut, raw[:len(raw)-8], 0o644); err != nil {
		t.Fatal(err)
	}
	_, _, _, _, warns := inspectTime(t, cut)
	if !anyHas(warns, "the other commands refuse it unless --allow-unterminated") {
		t.Errorf("warnings %q, want one saying the other commands refuse the stream", warns)
	}
	if code, _, _ := cli(t, "convert", cut, filepath.Join(dir, "out.csv")); code == 0 {
		t.Error("convert read the cut stream without --allow-unterminated")
	}
	_, _, _, _, warns = inspectTime(t, "--allow-unterminated", cut)
	if !anyHas(warns, "(--allow-unterminated: the other commands read it too)") {
		t.Errorf("warnings %q, want one saying the other commands read the stream with the flag", warns)
	}
	mustCLI(t, "convert", "--allow-unterminated", cut, filepath.Join(dir, "out.csv"))
}
