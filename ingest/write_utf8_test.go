package ingest

import (
	"slices"
	"testing"
)

// TestConvertValidUTF8: the Arrow and Parquet string columns (UTF-8 by
// their type, Apache Arrow Columnar Format, "Variable-size Binary
// Layout": utf8 is UTF-8 text) and a CSV written hold valid UTF-8 whatever
// the reader gave, text that is not having U+FFFD for each bad byte run.
// Before, convert wrote an input's raw Latin-1 bytes into the Arrow and
// Parquet group column, which other readers refuse.
func TestConvertValidUTF8(t *testing.T) {
	s := &Samples{
		Time: []float64{0, 1, 2}, X: []float64{0, 1, 2}, Y: []float64{0, 0, 0}, Z: []float64{0, 0, 0},
		Bx: []float64{1, 2, 3}, By: []float64{4, 5, 6}, Bz: []float64{7, 8, 9},
		Group: []string{"\xd6l", "Höhenweg", "T03"},
	}
	dir := t.TempDir()
	for _, ext := range []string{".arrow", ".arrows", ".parquet", ".csv"} {
		p := dir + "/log" + ext
		if err := WriteSamples(p, s); err != nil {
			t.Fatal(err)
		}
		back, err := ReadSamples(p, WithColumns("group=group"))
		if err != nil {
			t.Fatal(err)
		}
		if want := []string{"\uFFFDl", "Höhenweg", "T03"}; !slices.Equal(back.Group, want) {
			t.Errorf("%s: groups %q, want %q", ext, back.Group, want)
		}
	}
}
