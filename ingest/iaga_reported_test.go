package ingest

import (
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"undercurrent/ingest/ingesttest"
)

// The IAGA-2002 format (INTERMAGNET technical reference manual, IAGA-2002
// exchange format) states the element set twice: in the header's
// "Reported" field and on the column line. The column line was read
// alone, so a Boulder minute file (public domain USGS data, see
// ../shared/data/iaga2002/SOURCE.md) whose column line was changed to
// BOUX BOUY BOUZ BOUF, the header still saying HDZF, read D in minutes of
// arc as an east field of -10 nT. Elements of different kinds in one
// place are refused, naming both lines; elements of one kind that differ
// are warned about; the real files, which agree, read without either.
func TestIAGAReportedAgainstColumnLine(t *testing.T) {
	dir := ingesttest.IAGADir(t)
	raw, err := os.ReadFile(filepath.Join(dir, "bou20141101vmin.min"))
	if err != nil {
		t.Fatal(err)
	}
	columns := regexp.MustCompile(`BOUH      BOUD      BOUZ      BOUF`)
	reported := regexp.MustCompile(`Reported               HDZF`)
	write := func(text []byte) string {
		p := filepath.Join(t.TempDir(), "bou.min")
		if err := os.WriteFile(p, text, 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}

	p := write(columns.ReplaceAll(raw, []byte("BOUX      BOUY      BOUZ      BOUF")))
	_, err = ReadSamples(p)
	wantErr(t, err, "bou.min:25: the IAGA-2002 column line gives the elements XYZF, but the header's Reported field (line 8) gives HDZF: element 2 would be read as Y (a field component in nT) where the header says D (an angle in minutes of arc)")

	p = write(reported.ReplaceAll(raw, []byte("Reported               XYZF")))
	_, err = ReadSamples(p)
	wantErr(t, err, "element 2 would be read as D (an angle in minutes of arc) where the header says Y (a field component in nT)")

	// H E Z F reported, H D Z F columns: D against E, refused too; X Y Z
	// F reported over H E Z F columns: fields both, a warning.
	p = write(reported.ReplaceAll(raw, []byte("Reported               HEZF")))
	_, err = ReadSamples(p)
	wantErr(t, err, "element 2 would be read as D")

	hez := columns.ReplaceAll(raw, []byte("BOUH      BOUE      BOUZ      BOUF"))
	p = write(reported.ReplaceAll(hez, []byte("Reported               XYZF")))
	r, err := Open(p)
	if err != nil {
		t.Fatal(err)
	}
	w := strings.Join(Warnings(r), "\n")
	r.Release()
	if !strings.Contains(w, "bou.min:25: the IAGA-2002 column line gives the elements HEZF, but the header's Reported field (line 8) gives XYZF: the column line's are read") {
		t.Errorf("warnings %q lack the disagreement", w)
	}

	for _, f := range []string{"bou20141101vmin.min", "BOU20200101vsec.sec", "BOU202005adj.min", "LLO20200106vsec.sec"} {
		r, err := Open(filepath.Join(dir, f))
		if err != nil {
			t.Fatalf("%s: %v", f, err)
		}
		for _, w := range Warnings(r) {
			if strings.Contains(w, "Reported") {
				t.Errorf("%s: %s", f, w)
			}
		}
		r.Release()
	}
}
