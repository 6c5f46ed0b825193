package calibrate

import (
	"strings"
	"testing"
)

// TestCalibrationSummaryCarriesCaveats: what a calibration leaves open
// reaches its one-line summary (locate's results.json and report): a spin
// fixes the frame only up to a rotation, and without a reference not the
// scale either; a flip pair fits offsets only, leaves its turning axis
// undetermined and has standard errors of its own (the values are those
// a flip pair of the walk-through sensor gave in review: 685.2, -943.5 nT
// ± 466 nT, z not determined).
func TestCalibrationSummaryCarriesCaveats(t *testing.T) {
	spin := &Calibration{Version: Version, Method: MethodEllipsoid, Matrix: identity3(), Reference: 50284.8,
		Notes: []string{NoReferenceNote + " the matrix maps the readings to the fitted ellipsoid's own size"}}
	s := spin.Summary()
	for _, want := range []string{"left open", "only up to a rotation", "absolute scale is the sensor's own"} {
		if !strings.Contains(s, want) {
			t.Errorf("spin without a reference: summary lacks %q: %s", want, s)
		}
	}
	if spin.ScaleFixed() {
		t.Error("spin without a reference: ScaleFixed")
	}
	spin.Notes = nil
	if !spin.ScaleFixed() || strings.Contains(spin.Summary(), "absolute scale") {
		t.Errorf("spin with a reference: ScaleFixed %v, summary %s", spin.ScaleFixed(), spin.Summary())
	}
	sigma := [3]float64{466, 466, 0}
	flip := &Calibration{Version: Version, Method: MethodFlip, Matrix: identity3(), Offset: [3]float64{685.2, -943.5, 0},
		OffsetSigma: &sigma, Undetermined: []string{"z"}}
	s = flip.Summary()
	for _, want := range []string{"offsets only: no soft iron or scale fitted", "z offset not determined", "x ± 466, y ± 466 nT"} {
		if !strings.Contains(s, want) {
			t.Errorf("flip: summary lacks %q: %s", want, s)
		}
	}
	if strings.Contains(s, "z ±") {
		t.Errorf("flip: an undetermined axis's standard error means nothing: %s", s)
	}
}
