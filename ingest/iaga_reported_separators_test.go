package ingest

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/ingest/ingesttest"
)

// The IAGA-2002 header's "Reported" field names the element set (INTERMAGNET
// technical reference manual, IAGA-2002 exchange format: "HDZF", "XYZF");
// written with separators between the elements ("H D Z F", "H,D,Z,F",
// "H|D|Z|F") it names the same set, and a Boulder minute file (public domain
// USGS data, see ../shared/data/iaga2002/SOURCE.md) with its Reported field
// so written reads as the real file does, without a refusal naming a blank
// or a comma as an element. Separators do not hide a real disagreement.
func TestIAGAReportedWithSeparators(t *testing.T) {
	dir := ingesttest.IAGADir(t)
	raw, err := os.ReadFile(filepath.Join(dir, "bou20141101vmin.min"))
	if err != nil {
		t.Fatal(err)
	}
	// The field is padded with blanks to the header's fixed width; the
	// replacements keep the width.
	const field = "Reported               HDZF      "
	if !strings.Contains(string(raw), field) {
		t.Fatalf("bou20141101vmin.min has no %q", field)
	}
	write := func(rep string) string {
		f := "Reported               " + rep
		f += strings.Repeat(" ", len(field)-len(f))
		p := filepath.Join(t.TempDir(), "bou.min")
		if err := os.WriteFile(p, []byte(strings.Replace(string(raw), field, f, 1)), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	ref, err := ReadSamples(filepath.Join(dir, "bou20141101vmin.min"))
	if err != nil {
		t.Fatal(err)
	}
	for _, rep := range []string{"H D Z F", "H,D,Z,F", "H|D|Z|F", "H, D, Z, F"} {
		p := write(rep)
		r, err := Open(p)
		if err != nil {
			t.Errorf("Reported %q: %v", rep, err)
			continue
		}
		for _, w := range Warnings(r) {
			if strings.Contains(w, "Reported") {
				t.Errorf("Reported %q: warning %q", rep, w)
			}
		}
		r.Release()
		s, err := ReadSamples(p)
		if err != nil {
			t.Fatal(err)
		}
		if s.Len() != ref.Len() || s.Bx[0] != ref.Bx[0] || s.Bz[0] != ref.Bz[0] {
			t.Errorf("Reported %q: %d rows, first bx %v bz %v; the real file %d, %v, %v", rep, s.Len(), s.Bx[0], s.Bz[0], ref.Len(), ref.Bx[0], ref.Bz[0])
		}
	}
	// With separators, a field component reported where the column line
	// has an angle is still refused, naming the element.
	p := write("X,Y,Z,F")
	_, err = ReadSamples(p)
	wantErr(t, err, "element 2 would be read as D (an angle in minutes of arc) where the header says Y (a field component in nT)")
}
