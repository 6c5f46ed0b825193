package calibrate

import (
	"strings"
	"testing"
)

// TestCheckNamesUnitSlip: a calibration made from a spin log in uT read
// as nT has its reference (and offsets) 1000 times too small; used on the
// same sensor's log in nT, the corrected |B| is about 1000 times the
// reference, and Check names the unit slip instead of another sensor or
// site. 49 850 nT is a mid-latitude total field (IGRF over Britain,
// 48 000 to 51 000 nT, from memory).
func TestCheckNamesUnitSlip(t *testing.T) {
	const f = 49850
	cal := &Calibration{Version: Version, Method: MethodEllipsoid, Reference: f,
		Offset: [3]float64{310, -240, 180},
		Matrix: [3][3]float64{{0.96, 0, 0}, {0, 1.04, 0}, {0, 0, 1.0}}}
	s := checkLog(cal, f, 1000, 0)
	inUT := *cal
	inUT.Reference /= 1000
	for k := range inUT.Offset {
		inUT.Offset[k] /= 1000
	}
	got := inUT.Check(s)
	if len(got) != 1 || !strings.Contains(got[0], "unit slip") || !strings.Contains(got[0], "--unit bx=uT,by=uT,bz=uT") || strings.Contains(got[0], "another sensor or site?") {
		t.Errorf("warnings %q, want one naming a unit slip (uT read as nT) first", got)
	}
	// The same log in gauss read as nT against the right calibration:
	// 1e-5 of the reference, less the offsets; with no offsets, the ratio
	// is 1e-5 and the log's unit is named.
	clean := *cal
	clean.Offset = [3]float64{}
	g := checkLog(&clean, f, 1000, 0)
	for i := range g.Bx {
		g.Bx[i], g.By[i], g.Bz[i] = g.Bx[i]/1e5, g.By[i]/1e5, g.Bz[i]/1e5
	}
	got = clean.Check(g)
	if len(got) == 0 || !strings.Contains(got[len(got)-1], "this log is probably in G read as nT") {
		t.Errorf("warnings %q, want one naming the log's unit (G)", got)
	}
	// A ratio of 500 is no unit's factor: not a unit slip.
	if _, _, _, ok := UnitSlip(500); ok {
		t.Error("UnitSlip(500) = true")
	}
}
