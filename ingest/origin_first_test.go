package ingest

import (
	"os"
	"path/filepath"
	"testing"
)

// WithOriginFirst, given after WithOrigin, puts the origin back at the
// log's first reading (the default), as the command line's look at a log's
// first reading needs with the rest of the user's options kept; the
// metadata then carries that reading as written in the file (values
// invented).
func TestWithOriginFirstUndoesWithOrigin(t *testing.T) {
	p := filepath.Join(t.TempDir(), "ll.csv")
	if err := os.WriteFile(p, []byte("time,lat,lon,height,bx,by,bz\n1,54.3125538,-2.0883046,312.25,1,2,3\n2,54.3125540,-2.0883040,312.25,1,2,3\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		opts []Option
		want string
	}{
		{[]Option{WithOrigin(Geodetic{Lat: 10, Lon: 20, H: 30})}, "10 20 30"},
		{[]Option{WithOrigin(Geodetic{Lat: 10, Lon: 20, H: 30}), WithOriginFirst()}, "54.3125538 -2.0883046 312.25"},
		{[]Option{WithOriginMean(), WithOriginFirst()}, "54.3125538 -2.0883046 312.25"},
	} {
		r, err := Open(p, tc.opts...)
		if err != nil {
			t.Fatal(err)
		}
		got, _ := r.Schema().Metadata().GetValue(MetaOrigin)
		r.Release()
		if got != tc.want {
			t.Errorf("origin %q, want %q", got, tc.want)
		}
	}
}
