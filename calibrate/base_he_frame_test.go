package calibrate

import (
	"path/filepath"
	"strings"
	"testing"

	"undercurrent/ingest"
	"undercurrent/ingest/ingesttest"
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

// TestBaseFrameWarningNamesElementsRead checks that the base correction's
// warning names the elements the base record reports. The real adjusted
// Boulder file BOU202005adj.min (INTERMAGNET data from the USGS,
// ../shared/data/iaga2002/SOURCE.md) has the columns BOUH BOUE BOUNUL
// BOUNUL: H and E, no Z. Before, the warning said "in H E Z" whatever the
// file held. (With no Z the file cannot correct a survey: BaseCorrect
// refuses its empty bz column, so the warning is asked for directly.)
func TestBaseFrameWarningNamesElementsRead(t *testing.T) {
	path := filepath.Join(ingesttest.IAGADir(t), "BOU202005adj.min")
	base, err := ingest.ReadSamples(path, ingest.WithAllowMissing(true))
	if err != nil {
		t.Fatal(err)
	}
	if base.Meta["elements"] != "HENULNUL" {
		t.Fatalf("elements %q, want HENULNUL (the file's column line)", base.Meta["elements"])
	}
	w := BaseFrameWarning(base)
	if !strings.Contains(w, "holds observatory data in H E, which are not turned to geographic north") {
		t.Errorf("BaseFrameWarning %q, want it to name H E, the elements the file reports", w)
	}
	// A base whose east and north are geographic gives no such warning:
	// the real Boulder 1-second variation file, turned by its DECBAS.
	v, err := ingest.ReadSamples(filepath.Join(ingesttest.IAGADir(t), "BOU20200101vsec.sec"))
	if err != nil {
		t.Fatal(err)
	}
	if w := BaseFrameWarning(v); w != "" {
		t.Errorf("BOU20200101vsec.sec (variation, DECBAS): BaseFrameWarning %q, want none", w)
	}
}
