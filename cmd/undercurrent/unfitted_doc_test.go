package main

import (
	"os"
	"strings"
	"testing"
)

// TestLocateSaysWhatIsNotFitted: locate's help and the README said depths
// are below the sensors but never that a conductor above the sensors or a
// vertical one cannot be fitted, nor what the failure then looks like
// (found in review: an overhead line's failure was taken for an axis
// mistake). This checks the project's own documented behaviour: both name
// a conductor above the sensors and a vertical one as not fitted, and say
// not to turn an axis to make such readings fit.
func TestLocateSaysWhatIsNotFitted(t *testing.T) {
	code, out, errOut := cli(t, "locate", "--help")
	if code != 0 {
		t.Fatalf("locate --help: exit %d", code)
	}
	readme, err := os.ReadFile("../../README.md")
	if err != nil {
		t.Fatal(err)
	}
	for name, doc := range map[string]string{"locate --help": out + errOut, "README.md": string(readme)} {
		text := strings.Join(strings.Fields(doc), " ")
		for _, want := range []string{"conductor above the sensors", "vertical one", "do not turn an axis", "80 degree"} {
			if !strings.Contains(strings.ToLower(text), strings.ToLower(want)) {
				t.Errorf("%s does not say %q", name, want)
			}
		}
	}
}
