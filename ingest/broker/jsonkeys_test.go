package broker

import (
	"errors"
	"strings"
	"testing"
)

// TestDecodeJSONKeysOnce: a JSON batch giving a key twice, or a key in
// another case ("BX"), is refused naming the key, line and column.
// Before, encoding/json kept the last "bx" in silence and read "BX" as
// bx. Invented values.
func TestDecodeJSONKeysOnce(t *testing.T) {
	subj := "uc.data.fenwick-lane.s1"
	for _, tc := range []struct{ payload, wantErr string }{
		{`{"time":[1,2],"bx":[1,2],"by":[1,2],"bz":[1,2]}`, ""},
		{`{"time":[1,2],"bx":[1,2],"by":[1,2],"bz":[1,2],"bx":[5,5]}`, `line 1 column 48: key "bx" given twice`},
		{"{\"time\":[1,2],\n \"BX\":[1,2],\"by\":[1,2],\"bz\":[1,2]}", `line 2 column 2: key "BX": keys are lower case (bx)`},
	} {
		b, err := Decode(subj, ContentJSON, []byte(tc.payload))
		switch {
		case tc.wantErr == "" && err != nil:
			t.Errorf("%s: refused: %v", tc.payload, err)
		case tc.wantErr == "":
		case err == nil:
			t.Errorf("%s: accepted (bx %v), want %q", tc.payload, b.Bx, tc.wantErr)
		case !errors.Is(err, ErrMalformed) || !strings.Contains(err.Error(), tc.wantErr):
			t.Errorf("%s: %v, want ErrMalformed with %q", tc.payload, err, tc.wantErr)
		}
	}
}
