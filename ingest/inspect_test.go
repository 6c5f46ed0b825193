package ingest

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// A Harrow Fen traverse at 500 Hz with Unix times: the last sample lies at
// 59.998 s, computed as start + i*0.002 in float64 (so a hair below .998).
// Its end time must read 06:00:59.998Z like the 59.998 s duration, rounded
// to the milliseconds shown (RFC 3339 §5.6 time-secfrac), not truncated to
// .997; and lists with nothing in them are JSON arrays, not null (RFC 8259
// §5: an array is "[]", null is another value).
func TestInspectEmptyListsAndRoundedEnd(t *testing.T) {
	const start = 1796104800 // 2026-12-01T06:00:00Z, by `date -u -d 2026-12-01T06:00:00Z +%s`
	var b strings.Builder
	b.WriteString("time,bx,by,bz\n")
	for i := 0; i < 30000; i++ {
		fmt.Fprintf(&b, "%.17g,1000,2000,-45000\n", float64(start)+float64(i)*0.002)
	}
	p := filepath.Join(t.TempDir(), "harrow-fen.csv")
	if err := os.WriteFile(p, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	in, err := Inspect(p)
	if err != nil {
		t.Fatal(err)
	}
	if in.Time.EndUTC != "2026-12-01T06:00:59.998Z" || in.Time.StartUTC != "2026-12-01T06:00:00Z" {
		t.Errorf("start %q end %q, want 06:00:00Z and 06:00:59.998Z", in.Time.StartUTC, in.Time.EndUTC)
	}
	js, err := json.Marshal(in)
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{`"unused_columns":[]`, `"largest_gaps":[]`, `"warnings":[]`} {
		if !strings.Contains(string(js), want) {
			t.Errorf("JSON lacks %s:\n%s", want, js)
		}
	}
}

// utcString rounds to the millisecond: 0.9995 s and more reads as the next
// second (RFC 3339 time-secfrac shown to three digits).
func TestUTCStringRounds(t *testing.T) {
	for _, c := range []struct {
		t    float64
		want string
	}{
		{1796104800 + 59.9979999, "2026-12-01T06:00:59.998Z"},
		{1796104800 + 59.9996, "2026-12-01T06:01:00Z"},
		{1796104800 + 0.0004, "2026-12-01T06:00:00Z"},
	} {
		if got := utcString(c.t); got != c.want {
			t.Errorf("utcString(%.7f) = %q, want %q", c.t, got, c.want)
		}
	}
}
