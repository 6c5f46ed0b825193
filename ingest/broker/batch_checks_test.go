package broker

import (
	"errors"
	"strings"
	"testing"
)

// RFC 8259 section 3: null is a literal of its own, not a number, so a
// null reading is a missing one and the batch is refused (as the Arrow
// decoder refuses a null), naming the row and column. Section 2: a JSON
// text is one value with optional whitespace around it, so anything after
// the batch object is refused too instead of being dropped unseen.
func TestDecodeJSONNullAndTrailing(t *testing.T) {
	cases := []struct {
		name, subj, payload string
		wantErr             string // "" accepted
	}{
		{"null in bz", "uc.data.fenwick-lane.s1", `{"time":[1,2,3],"bx":[1,2,3],"by":[0,0,0],"bz":[5,null,5]}`, "row 2: column bz: null value"},
		{"null in bx", "uc.data.fenwick-lane.s1", `{"time":[1,2],"bx":[null,2],"by":[0,0],"bz":[5,5]}`, "row 1: column bx: null value"},
		{"null time", "uc.data.fenwick-lane.s1", `{"time":[1,null],"bx":[1,2],"by":[0,0],"bz":[5,5]}`, "row 2: column time: null value"},
		{"null temperature", "uc.data.fenwick-lane.s1", `{"time":[1,2],"bx":[1,2],"by":[0,0],"bz":[5,5],"temp":[20,null]}`, "row 2: column temp: null value"},
		{"null with t0 and rate", "uc.data.fenwick-lane.s1", `{"t0":1,"rate":10,"bx":[1,2],"by":[0,null],"bz":[5,5]}`, "row 2: column by: null value"},
		{"a sensor named with null", "uc.data.fenwick-lane.nullah", `{"sensor":"nullah","time":[1,2],"bx":[1,2],"by":[0,0],"bz":[5,5]}`, ""},
		{"two objects back to back", "uc.data.fenwick-lane.s1", `{"time":[1],"bx":[1],"by":[0],"bz":[5]}{"time":[2],"bx":[1],"by":[0],"bz":[5]}`, "line 1 column 40: content after the batch object"},
		{"trailing word", "uc.data.fenwick-lane.s1", "{\"time\":[1],\"bx\":[1],\"by\":[0],\"bz\":[5]}\n trailing", "line 2 column 2: content after the batch object"},
		{"trailing whitespace", "uc.data.fenwick-lane.s1", "{\"time\":[1],\"bx\":[1],\"by\":[0],\"bz\":[5]}\r\n\t ", ""},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			b, err := Decode(tc.subj, "", []byte(tc.payload))
			switch {
			case tc.wantErr == "" && err != nil:
				t.Fatalf("refused: %v", err)
			case tc.wantErr == "":
				if b.Len() == 0 {
					t.Fatal("no samples")
				}
			case err == nil:
				t.Fatalf("accepted (bx %v by %v bz %v), want an error with %q", b.Bx, b.By, b.Bz, tc.wantErr)
			case !errors.Is(err, ErrMalformed) || !strings.Contains(err.Error(), tc.wantErr) || !strings.Contains(err.Error(), tc.subj):
				t.Fatalf("error %q, want ErrMalformed naming %s with %q", err, tc.subj, tc.wantErr)
			}
		})
	}
}
