package ingest

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/ingest/ingesttest"
)

// TestIAGAExampleFile checks testdata/examples/harrow-fen-base.min, the
// invented base-station record the convert and inspect help examples read,
// against the IAGA-2002 layout (INTERMAGNET technical manual, as summarised
// in ../shared/data/iaga2002/SOURCE.md): 70-character records; header
// lines with the label at column 2, the value at column 25 and "|" at
// column 70; comment lines starting " #"; one column line; data lines of
// date, time, day of year and four values. It must read without a warning,
// be turned by its DECBAS to geographic north, and give the demo site's
// field (testdata/demo/fenwick-lane.toml: -150, 19200, -45100 nT east,
// north, up), which it was made from, within its invented daily variation
// (under 30 nT). With the real Boulder minute file present, the example's
// header gives every field that file's does.
func TestIAGAExampleFile(t *testing.T) {
	path := filepath.Join(ingesttest.RepoRoot(t), "testdata", "examples", "harrow-fen-base.min")
	raw, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	head := true
	for i, l := range strings.Split(strings.TrimSuffix(string(raw), "\n"), "\n") {
		if len(l) != 70 {
			t.Errorf("line %d: %d characters, IAGA-2002 records are 70", i+1, len(l))
		}
		switch {
		case !head:
		case strings.HasPrefix(l, "DATE       TIME         DOY"):
			head = false
			fallthrough
		case strings.HasPrefix(l, " #"):
			if !strings.HasSuffix(l, "|") {
				t.Errorf("line %d: %q does not end in | at column 70", i+1, l)
			}
		default:
			if l[0] != ' ' || l[1] == ' ' || l[23] != ' ' || l[24] == ' ' || !strings.HasSuffix(l, "|") {
				t.Errorf("line %d: %q: want the label at column 2, the value at 25, | at 70", i+1, l)
			}
		}
	}
	in, err := Inspect(path)
	if err != nil {
		t.Fatal(err)
	}
	if len(in.Warnings) > 0 || in.Rows != 240 || in.Meta["horizontal_frame"] != IAGAGeographic {
		t.Errorf("read with warnings %q, %d rows, frame %q", in.Warnings, in.Rows, in.Meta["horizontal_frame"])
	}
	s, err := ReadSamples(path)
	if err != nil {
		t.Fatal(err)
	}
	const daily = 30.0 // nT: the invented variation's swing is under this
	want := [3]float64{-150, 19200, -45100}
	for i := range s.Len() {
		got := [3]float64{s.Bx[i], s.By[i], s.Bz[i]}
		for a := range got {
			if math.Abs(got[a]-want[a]) > daily {
				t.Fatalf("row %d: field %v nT, the demo site's is %v", i, got, want)
			}
		}
	}
	bou := filepath.Join(filepath.Dir(ingesttest.RepoRoot(t)), "shared", "data", "iaga2002", "bou20141101vmin.min")
	if _, err := os.Stat(bou); err != nil {
		t.Logf("real IAGA-2002 file absent (%v): header fields not compared", err)
		return
	}
	ref, err := Inspect(bou)
	if err != nil {
		t.Fatal(err)
	}
	for k := range ref.Meta {
		if _, ok := in.Meta[k]; !ok {
			t.Errorf("header field %q of the real minute file is missing", k)
		}
	}
}
