package broker

import (
	"errors"
	"strings"
	"testing"
)

// TestDecodeRefusesTimeBeyondBound: a live time beyond +-1e11 s (the year
// 5000 as a Unix time) is refused naming the row. Before, "rate": 1e-300
// gave times near 1e300 that were accepted, "time": [-1e300, 1] was
// accepted, and "t0": 1e300 was refused for the wrong cause ("1e+300 does
// not follow 1e+300"). Invented values.
func TestDecodeRefusesTimeBeyondBound(t *testing.T) {
	subj := "uc.data.fenwick-lane.s1"
	for _, tc := range []struct{ payload, wantErr string }{
		{`{"t0":1.77e9,"rate":10,"bx":[1,2],"by":[1,2],"bz":[1,2]}`, ""},
		{`{"time":[0,1],"bx":[1,2],"by":[1,2],"bz":[1,2]}`, ""},
		{`{"t0":1.77e9,"rate":1e-300,"bx":[1,2],"by":[1,2],"bz":[1,2]}`, "row 2: column time: 1e+300 s is beyond"},
		{`{"time":[-1e300,1],"bx":[1,2],"by":[1,2],"bz":[1,2]}`, "row 1: column time: -1e+300 s is beyond"},
		{`{"t0":1e300,"rate":10,"bx":[1,2],"by":[1,2],"bz":[1,2]}`, "is beyond +-1e+11 s"},
	} {
		_, err := Decode(subj, ContentJSON, []byte(tc.payload))
		switch {
		case tc.wantErr == "" && err != nil:
			t.Errorf("%s: refused: %v", tc.payload, err)
		case tc.wantErr == "":
		case err == nil || !errors.Is(err, ErrMalformed) || !strings.Contains(err.Error(), tc.wantErr):
			t.Errorf("%s: %v, want ErrMalformed with %q", tc.payload, err, tc.wantErr)
		}
	}
}
