package calibrate

import (
	"strings"
	"testing"
)

// A base record of observatory H E Z data that are not variation data
// (here adjusted, as the real BOU202005adj.min) is not turned to
// geographic north, so the correction warns that its east and north are
// E and H, as it does for variation data without DECBAS
// (TestBaseCorrectWarnsBaselineFrame). Before, such a base was used
// without a word.
func TestBaseCorrectWarnsHEAxes(t *testing.T) {
	warnings := hfnBaseSelfWarnings(t, "adjusted", "hfn20240301amin.min")
	if len(warnings) != 1 || !strings.Contains(warnings[0], "holds observatory data in H E Z, which are not turned to geographic north") {
		t.Errorf("warnings %q, want one about the H E axes", warnings)
	}
}
