package ingest

import (
	"path/filepath"
	"reflect"
	"strings"
	"testing"
)

// TestWriteReadNoTime: WriteSamples writes a log read without time
// (WithTimeOptional) with the metadata undercurrent.time "absent" and a
// time column of NaN; ReadSamples refused its own output ("missing value
// NaN", found by fuzzing the round trip). It must read it back as a log
// without time, in CSV, Arrow IPC and Parquet, the values unchanged (an
// invented two-row calibration log), and refuse it where a time is needed,
// saying why.
func TestWriteReadNoTime(t *testing.T) {
	in := writeFile(t, "in.csv", "x,y,z,bx,by,bz\n0,0,0,1,2,3\n1,0,0,4.5,-5,6e4\n")
	s, err := ReadSamples(in, WithTimeOptional(true))
	if err != nil {
		t.Fatal(err)
	}
	if !s.NoTime {
		t.Fatal("read without NoTime")
	}
	dir := t.TempDir()
	for _, ext := range []string{".csv", ".arrow", ".arrows", ".parquet"} {
		out := filepath.Join(dir, "out"+ext)
		if err := WriteSamples(out, s); err != nil {
			t.Fatalf("%s: %v", ext, err)
		}
		back, err := ReadSamples(out, WithTimeOptional(true))
		if err != nil {
			t.Errorf("%s read back: %v", ext, err)
			continue
		}
		if !back.NoTime || back.Len() != 2 || !reflect.DeepEqual(back.X, s.X) || !reflect.DeepEqual(back.Bx, s.Bx) ||
			!reflect.DeepEqual(back.By, s.By) || !reflect.DeepEqual(back.Bz, s.Bz) {
			t.Errorf("%s read back: NoTime %v, %d rows, x %v bx %v by %v bz %v; want %v %v %v %v", ext, back.NoTime, back.Len(), back.X, back.Bx, back.By, back.Bz, s.X, s.Bx, s.By, s.Bz)
		}
		_, err = ReadSamples(out)
		if err == nil || !strings.Contains(err.Error(), "no time: its metadata (undercurrent.time: absent)") {
			t.Errorf("%s read where time is needed: %v, want the metadata named", ext, err)
		}
	}
}
