package main

import (
	"strings"
	"testing"
)

// convert --help said a conversion "keeps every value exactly", but times
// are float64 Unix seconds: IEEE 754 binary64 steps are 2^-22 s (0.24 µs)
// between 2^30 s (2004) and 2^31 s (2038), so nanosecond stamps round by
// up to half a step (ingest's TestNanosecondTimesRoundToHalfAStep checks
// the bound). The help says so now.
func TestConvertHelpStatesTimeResolution(t *testing.T) {
	code, out, errOut := cli(t, "convert", "--help")
	text := strings.Join(strings.Fields(out+errOut), " ")
	if code != 0 || !strings.Contains(text, "float64 steps are 2^-22 s (0.24 µs) from 2004 to 2038") || !strings.Contains(text, "round by up to 0.12 µs") {
		t.Errorf("convert --help (exit %d) does not state the time resolution:\n%s", code, text)
	}
}
