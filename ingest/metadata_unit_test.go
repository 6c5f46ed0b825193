package ingest

import (
	"os"
	"path/filepath"
	"testing"
)

// TestMetadataUnitOnlyForCanonicalColumns: the canonical form's
// undercurrent.frame metadata states nT for the field columns this
// package writes (bx, by, bz), not for a logger's own columns in a file
// that carries the comment. testdata/examples/kestrel-moor-spin-uT.csv
// is such a file: µT under magX, magY, magZ below "# undercurrent.frame:
// sensor". Read with a column mapping, its unit was reported as stated by
// the metadata (UnitFromMetadata), so calibrate --zero took a µT shield
// log written this way as nT: offsets 1000 times too small (1 µT =
// 1000 nT, SI).
func TestMetadataUnitOnlyForCanonicalColumns(t *testing.T) {
	dir := t.TempDir()
	write := func(name, header string) string {
		p := filepath.Join(dir, name)
		body := "# undercurrent.frame: sensor\n" + header + "\n0,0.3086,-0.2381,0.1780\n1,0.3087,-0.2380,0.1779\n"
		if err := os.WriteFile(p, []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	unitFrom := func(path string, opts ...Option) map[string]string {
		t.Helper()
		r, err := Open(path, opts...)
		if err != nil {
			t.Fatal(err)
		}
		defer r.Release()
		m := map[string]string{}
		for _, c := range Mappings(r) {
			m[c.Column] = c.UnitFrom
		}
		return m
	}
	for _, c := range []struct {
		what, header string
		opts         []Option
		want         string
	}{
		{"canonical names", "time,bx,by,bz", nil, UnitFromMetadata},
		{"a logger's names mapped", "time,magX,magY,magZ", []Option{WithColumns("bx=magX", "by=magY", "bz=magZ")}, UnitDefault},
		{"aliases found by name", "time,Bx,By,Bz", nil, UnitDefault},
		{"a logger's names with a unit given", "time,magX,magY,magZ", []Option{WithColumns("bx=magX", "by=magY", "bz=magZ"), WithUnits("bx=uT", "by=uT", "bz=uT")}, UnitGiven},
	} {
		got := unitFrom(write(c.what+".csv", c.header), c.opts...)
		for _, col := range []string{ColBx, ColBy, ColBz} {
			if got[col] != c.want {
				t.Errorf("%s: %s unit from %q, want %q", c.what, col, got[col], c.want)
			}
		}
	}
	// The repository's example of this shape.
	got := unitFrom(filepath.Join("..", "testdata", "examples", "kestrel-moor-spin-uT.csv"), WithColumns("bx=magX", "by=magY", "bz=magZ"))
	if got[ColBx] != UnitDefault {
		t.Errorf("kestrel-moor-spin-uT.csv mapped with --column: bx unit from %q, want %q", got[ColBx], UnitDefault)
	}
}
