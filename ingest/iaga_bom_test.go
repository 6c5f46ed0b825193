package ingest

import (
	"os"
	"path/filepath"
	"reflect"
	"testing"

	"undercurrent/ingest/ingesttest"
)

// TestIAGAByteOrderMark: a real IAGA-2002 file (USGS Boulder, 2014-11-01,
// one-minute variation data; ../shared/data/iaga2002/SOURCE.md) saved with
// a UTF-8 byte order mark in front, as Windows Notepad saves one, was
// taken for a CSV and refused with "no column for time, bx, by, bz". It
// must be detected as IAGA-2002 and read exactly as the file without the
// mark; so must two such files joined end to end (the second mark in the
// middle of the text).
func TestIAGAByteOrderMark(t *testing.T) {
	src := filepath.Join(ingesttest.IAGADir(t), "bou20141101vmin.min")
	text, err := os.ReadFile(src)
	if err != nil {
		t.Fatal(err)
	}
	next, err := os.ReadFile(filepath.Join(ingesttest.IAGADir(t), "bou20141102vmin.min"))
	if err != nil {
		t.Fatal(err)
	}
	bom := []byte{0xef, 0xbb, 0xbf}
	if got := DetectFormat(append(append([]byte(nil), bom...), text[:512]...)); got != FormatIAGA {
		t.Errorf("DetectFormat with a byte order mark: %s, want %s", got, FormatIAGA)
	}
	dir := t.TempDir()
	for _, tc := range []struct {
		name      string
		plain, in []byte
	}{
		{"bom.min", text, append(append([]byte(nil), bom...), text...)},
		{"bom-joined.min", append(append([]byte(nil), text...), next...),
			append(append(append(append([]byte(nil), bom...), text...), bom...), next...)},
	} {
		plain, marked := filepath.Join(dir, "plain-"+tc.name), filepath.Join(dir, tc.name)
		if err := os.WriteFile(plain, tc.plain, 0o644); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(marked, tc.in, 0o644); err != nil {
			t.Fatal(err)
		}
		want, err := ReadSamples(plain)
		if err != nil {
			t.Fatal(err)
		}
		got, err := ReadSamples(marked)
		if err != nil {
			t.Errorf("%s: %v", tc.name, err)
			continue
		}
		if got.Len() != want.Len() || !reflect.DeepEqual(got.Time, want.Time) || !reflect.DeepEqual(got.Bx, want.Bx) ||
			!reflect.DeepEqual(got.Bz, want.Bz) || !reflect.DeepEqual(got.Meta, want.Meta) {
			t.Errorf("%s: %d rows read, meta %v; without the mark %d rows, meta %v", tc.name, got.Len(), got.Meta, want.Len(), want.Meta)
		}
	}
}
