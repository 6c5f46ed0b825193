package ingest

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/ingest/ingesttest"
)

// heWarning is part of the warning for H E Z data that are not turned.
const heWarning = ": east and north are read as E and H"

// TestIAGAHENotGeographicReal checks the real adjusted Boulder file
// BOU202005adj.min (Reported HENULNUL, Data Type adjusted, no DECBAS;
// INTERMAGNET data distributed by the USGS, SOURCE.md there): H and E are
// not the X and Y that IAGA-2002 gives for geographic north and east
// (SOURCE.md: "X, Y, Z are north, east and down"), so reading E as east and
// H as north is warned about and marked in the metadata, as variation data
// in H D Z without DECBAS are. Before, the file was read as geographic
// without a word. Keeping the observatory's frame on request reads it the
// same way without the warning. The values are the file's first row.
func TestIAGAHENotGeographicReal(t *testing.T) {
	path := filepath.Join(ingesttest.IAGADir(t), "BOU202005adj.min")
	in, err := Inspect(path)
	if err != nil {
		t.Fatal(err)
	}
	// The file reports H and E alone (BOUH BOUE BOUNUL BOUNUL): the
	// warning names those, not H E Z.
	if !hasWarning(in.Warnings, "adjusted data in H E"+heWarning) {
		t.Errorf("warnings %q, want one saying adjusted data in H E are not geographic", in.Warnings)
	}
	// inspect prints this warning: it names the flag, not the Go package
	// (found in review: "(--iaga-baseline-frame; ingest.WithIAGABaselineFrame)").
	if w := strings.Join(in.Warnings, "\n"); !strings.Contains(w, "on the command line --iaga-baseline-frame") || strings.Contains(w, "ingest.With") {
		t.Errorf("warnings %q: want the flag named, not the Go package", w)
	}
	if in.Meta["horizontal_frame"] != IAGAHENotTurned {
		t.Errorf("horizontal_frame %q, want %q", in.Meta["horizontal_frame"], IAGAHENotTurned)
	}
	s, err := ReadSamples(path, WithAllowMissing(true))
	if err != nil {
		t.Fatal(err)
	}
	// First row: BOUH -20799.04, BOUE 80.92 (the file's own text).
	if math.Abs(s.Bx[0]-80.92) > 1e-9 || math.Abs(s.By[0]+20799.04) > 1e-9 {
		t.Errorf("first row east %v north %v, want E 80.92 and H -20799.04, not turned", s.Bx[0], s.By[0])
	}
	in, err = Inspect(path, WithIAGABaselineFrame(true))
	if err != nil {
		t.Fatal(err)
	}
	if hasWarning(in.Warnings, heWarning) || in.Meta["horizontal_frame"] != IAGABaselineKept {
		t.Errorf("frame kept: warnings %q, horizontal_frame %q", in.Warnings, in.Meta["horizontal_frame"])
	}
	// The variation file in H E Z gives DECBAS and is turned: no warning.
	in, err = Inspect(filepath.Join(ingesttest.IAGADir(t), "BOU20200101vsec.sec"))
	if err != nil {
		t.Fatal(err)
	}
	if hasWarning(in.Warnings, heWarning) || in.Meta["horizontal_frame"] != IAGAGeographic {
		t.Errorf("BOU20200101vsec.sec: warnings %q, horizontal_frame %q", in.Warnings, in.Meta["horizontal_frame"])
	}
}

// TestIAGAHENotGeographicTypes covers the element sets and data types: H E
// Z of any type but variation is warned about (a DECBAS line does not turn
// it: only variation data are turned), while X Y Z and definitive H D Z,
// geographic as read, are not.
func TestIAGAHENotGeographicTypes(t *testing.T) {
	head := func(typ, decbas string) string {
		h := " Format                 IAGA-2002                                    |\n" +
			" IAGA CODE              HFN                                          |\n"
		if typ != "" {
			h += " Data Type              " + typ + "\n"
		}
		if decbas != "" {
			h += " # DECBAS               " + decbas + "    (Baseline declination value in       |\n"
		}
		return h
	}
	cols := func(e string) string {
		return "DATE       TIME         DOY     HFN" + e[:1] + "      HFN" + e[1:2] + "      HFN" + e[2:] + "      HFNF   |\n"
	}
	row := "2024-03-01 00:00:00.000 061     20000.00    100.00  46000.00  50000.00\n"
	for _, c := range []struct {
		name, typ, decbas, elements string
		warn                        bool
	}{
		{"definitive HEZ", "definitive", "", "HEZ", true},
		{"definitive HEZ with DECBAS", "definitive", "5400", "HEZ", true},
		{"HEZ of no stated type", "", "", "HEZ", true},
		{"provisional HEZ", "provisional", "", "HEZ", true},
		{"variation HEZ with DECBAS", "variation", "5400", "HEZ", false},
		{"definitive XYZ", "definitive", "", "XYZ", false},
		{"definitive HDZ", "definitive", "", "HDZ", false},
	} {
		in, err := Inspect(writeFile(t, "hfn.min", head(c.typ, c.decbas)+cols(c.elements)+row))
		if err != nil {
			t.Errorf("%s: %v", c.name, err)
			continue
		}
		if got := hasWarning(in.Warnings, "in H E Z"+heWarning); got != c.warn {
			t.Errorf("%s: warned %v, want %v (warnings %q)", c.name, got, c.warn, in.Warnings)
		}
		if got := in.Meta["horizontal_frame"] == IAGAHENotTurned; got != c.warn {
			t.Errorf("%s: horizontal_frame %q", c.name, in.Meta["horizontal_frame"])
		}
	}
}

func hasWarning(warnings []string, part string) bool {
	for _, w := range warnings {
		if strings.Contains(w, part) {
			return true
		}
	}
	return false
}

// TestIAGAElementsNamedAsReported checks that the frame warnings name the
// elements the file reports, from the column line: the real adjusted
// Boulder file BOU202005adj.min (INTERMAGNET data from the USGS,
// SOURCE.md) has columns BOUH BOUE BOUNUL BOUNUL, so it holds H and E and
// no Z; the real 1-second Boulder file BOU20200101vsec.sec has BOUH BOUE
// BOUZ BOUF. Before, both were said to be "in H E Z". The same holds for
// the warning on variation data without DECBAS, shown here on the real
// 1-second file with its DECBAS line removed and its Z and F columns
// marked NUL (IAGA-2002: "NUL" names an element not reported).
func TestIAGAElementsNamedAsReported(t *testing.T) {
	for _, c := range []struct{ elements, want string }{
		{"HEZF", "H E Z"}, {"HENULNUL", "H E"}, {"HDZF", "H D Z"}, {"XYZG", "X Y Z"}, {"HENULF", "H E"}, {"", ""},
	} {
		if got := IAGAVectorElements(c.elements); got != c.want {
			t.Errorf("IAGAVectorElements(%q) = %q, want %q", c.elements, got, c.want)
		}
	}
	in, err := Inspect(filepath.Join(ingesttest.IAGADir(t), "BOU202005adj.min"))
	if err != nil {
		t.Fatal(err)
	}
	if in.Meta["elements"] != "HENULNUL" {
		t.Fatalf("BOU202005adj.min: elements %q, want HENULNUL from its column line", in.Meta["elements"])
	}
	if hasWarning(in.Warnings, "in H E Z") {
		t.Errorf("BOU202005adj.min holds no Z, yet the warnings say H E Z: %q", in.Warnings)
	}
	data, err := os.ReadFile(filepath.Join(ingesttest.IAGADir(t), "BOU20200101vsec.sec"))
	if err != nil {
		t.Fatal(err)
	}
	var kept []string
	for _, ln := range strings.SplitAfter(string(data), "\n") {
		if strings.Contains(ln, "DECBAS") {
			continue
		}
		if strings.HasPrefix(ln, "DATE") {
			ln = strings.Replace(strings.Replace(ln, "BOUZ", "BOUNUL", 1), "BOUF   ", "BOUNUL ", 1)
		}
		kept = append(kept, ln)
	}
	p := writeFile(t, "he-variation.sec", strings.Join(kept, ""))
	in, err = Inspect(p)
	if err != nil {
		t.Fatal(err)
	}
	if in.Meta["elements"] != "HENULNUL" {
		t.Fatalf("edited file: elements %q, want HENULNUL", in.Meta["elements"])
	}
	if !hasWarning(in.Warnings, "variation data in H E without a DECBAS comment") {
		t.Errorf("variation H E without DECBAS: warnings %q, want one naming H E", in.Warnings)
	}
}

// TestIAGAFrameWarningLeftOut checks WithIAGAFrameWarning(false): a caller
// that states the frame itself (a base-station correction) reads an
// IAGA-2002 file whose east and north are not geographic without the
// reader's warning, while Meta["horizontal_frame"] still says so. Files:
// the real adjusted Boulder file BOU202005adj.min (H E, not turned) and
// the real 1-second Boulder file BOU20200101vsec.sec without its DECBAS
// line (variation data left in the baseline frame); USGS, SOURCE.md.
func TestIAGAFrameWarningLeftOut(t *testing.T) {
	dir := ingesttest.IAGADir(t)
	data, err := os.ReadFile(filepath.Join(dir, "BOU20200101vsec.sec"))
	if err != nil {
		t.Fatal(err)
	}
	var kept []string
	for _, ln := range strings.SplitAfter(string(data), "\n") {
		if !strings.Contains(ln, "DECBAS") {
			kept = append(kept, ln)
		}
	}
	noDECBAS := writeFile(t, "hez.sec", strings.Join(kept, ""))
	for _, c := range []struct{ path, frame, part string }{
		{filepath.Join(dir, "BOU202005adj.min"), IAGAHENotTurned, heWarning},
		{noDECBAS, IAGABaselineNoDECBAS, "without a DECBAS comment"},
	} {
		name := filepath.Base(c.path)
		s, err := ReadSamples(c.path, WithAllowMissing(true))
		if err != nil {
			t.Fatal(err)
		}
		if !hasWarning(s.Warnings, c.part) {
			t.Errorf("%s by default: warnings %q, want one with %q", name, s.Warnings, c.part)
		}
		s, err = ReadSamples(c.path, WithAllowMissing(true), WithIAGAFrameWarning(false))
		if err != nil {
			t.Fatal(err)
		}
		if hasWarning(s.Warnings, c.part) {
			t.Errorf("%s with WithIAGAFrameWarning(false): warnings %q", name, s.Warnings)
		}
		if s.Meta["horizontal_frame"] != c.frame {
			t.Errorf("%s with WithIAGAFrameWarning(false): horizontal_frame %q, want %q", name, s.Meta["horizontal_frame"], c.frame)
		}
	}
}
