package calibrate

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/ingest"
)

// A base record of observatory H E Z data that are not variation data
// (here adjusted, as the real BOU202005adj.min) is not turned to
// geographic north, so the correction warns that its east and north are
// E and H, as it does for variation data without DECBAS
// (TestBaseCorrectWarnsBaselineFrame). Before, such a base was used
// without a word.
func TestBaseCorrectWarnsHEAxes(t *testing.T) {
	text := " Format                 IAGA-2002                                    |\n" +
		" IAGA CODE              HFN                                          |\n" +
		" Data Type              adjusted                                     |\n" +
		"DATE       TIME         DOY     HFNH      HFNE      HFNZ      HFNF   |\n"
	for i := range 5 {
		text += fmt.Sprintf("2024-03-01 00:0%d:00.000 061     %.2f    100.00  46000.00  50000.00\n", i, 20000+float64(i))
	}
	path := filepath.Join(t.TempDir(), "hfn20240301amin.min")
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	base, err := ingest.ReadSamples(path)
	if err != nil {
		t.Fatal(err)
	}
	rover, err := ingest.ReadSamples(path)
	if err != nil {
		t.Fatal(err)
	}
	rep, err := BaseCorrect(rover, base, nil)
	if err != nil {
		t.Fatal(err)
	}
	if len(rep.Warnings) != 1 || !strings.Contains(rep.Warnings[0], "holds observatory data in H E Z, which are not turned to geographic north") {
		t.Errorf("warnings %q, want one about the H E axes", rep.Warnings)
	}
}
