package report

import (
	"strings"
	"testing"

	"undercurrent/inverse"
)

// TestCurrentRampCaution: traverses whose fits found the current changing
// while they were walked (inverse.CurrentRampNote) give one caution naming
// them with the largest change; a fit without the note gives none.
func TestCurrentRampCaution(t *testing.T) {
	c0, c1 := 0.0, 5.0
	d := &Document{Groups: []Group{{Key: "T01", Chainage: &c0}, {Key: "T02", Chainage: &c1}, {Key: "T03"}}}
	fits := []Fit{
		{Key: "T01", Result: &inverse.Result{Notes: []string{inverse.CurrentRampNote + ": ..."}, CurrentRamp: -0.06, CurrentRampSigma: 0.002}},
		{Key: "T02", Result: &inverse.Result{Notes: []string{inverse.CurrentRampNote + ": ..."}, CurrentRamp: 0.11, CurrentRampSigma: 0.003}},
		{Key: "T03", Result: &inverse.Result{}},
	}
	d.addCurrentRamps(fits)
	if len(d.Findings) != 1 {
		t.Fatalf("%d findings, want 1", len(d.Findings))
	}
	f := d.Findings[0]
	if f.Kind != KindCurrentVaried || f.Severity != SeverityCaution || strings.Join(f.Groups, ",") != "T01,T02" ||
		!strings.Contains(f.Message, "about 11%") || !strings.Contains(f.Message, "reference current") || f.ChainageFrom != 0 || f.ChainageTo != 5 {
		t.Errorf("finding %+v", f)
	}
	d2 := &Document{}
	d2.addCurrentRamps(fits[2:])
	if len(d2.Findings) != 0 {
		t.Errorf("a fit with no ramp gave %d findings", len(d2.Findings))
	}
}
