package route

import (
	"math"
	"strings"
	"testing"
)

// TestLoneCover: the verdicts on a lone further line at a station 0.3 m
// above ground (cover = depth - 0.3), against a 0.6 m minimum at two sigma:
// clearly under (warning), within two sigma of it (caution), clear (none);
// a weak, steep line is left to weakSources; no minimum, no check.
func TestLoneCover(t *testing.T) {
	p := &Placed{Station: Station{Key: "T06", OK: true, Current: 30, CurrentSigma: 0.01, Depth: 1.3, DepthSigma: 0.01}}
	set := &Settings{MinCover: 0.6, SensorHeight: 0.3}
	level := [3]float64{0.5, 0.8660254037844386, 0}
	for _, tc := range []struct {
		name         string
		depth, sigma float64
		cur          float64
		dir          [3]float64
		want         Severity // "" for no finding
	}{
		{"shallow", 0.65, 0.005, 10, level, SeverityWarning},
		{"near the minimum", 0.88, 0.01, 10, level, SeverityCaution},
		{"clear", 1.0, 0.01, 10, level, ""},
		{"weak and steep", 0.65, 0.005, 1, [3]float64{0.1, 0, 0.99}, ""},
		{"weak but level", 0.65, 0.005, 1, level, SeverityWarning},
	} {
		l := Line{Point: [3]float64{30, 0, -tc.depth}, Dir: tc.dir, Current: tc.cur, CurrentSigma: 0.02, Depth: tc.depth, DepthSigma: tc.sigma}
		f, ok := LoneCover(p, l, set, false)
		if got := map[bool]Severity{true: f.Severity}[ok]; got != tc.want {
			t.Errorf("%s: finding %q (%s), want %q", tc.name, got, f.Message, tc.want)
		}
		if ok && (f.Kind != KindShallowCover || !strings.Contains(f.Message, "azimuth 30 degrees") || f.Keys[0] != "T06") {
			t.Errorf("%s: %s %v %s", tc.name, f.Kind, f.Keys, f.Message)
		}
	}
	l := Line{Dir: level, Current: 10, CurrentSigma: 0.02, Depth: 0.65, DepthSigma: 0.005}
	if _, ok := LoneCover(p, l, &Settings{SensorHeight: 0.3}, false); ok {
		t.Error("a finding with no minimum cover")
	}
}

// TestLoneCoverAzimuth: a lone line's azimuth is given with the sigma the fit
// found for it, in the message and the finding's values; without one it is
// rounded to whole degrees in [0, 180), so a line at 179.7 degrees (the same
// line as at 359.7 or -0.3) reads 0, not 180.
func TestLoneCoverAzimuth(t *testing.T) {
	p := &Placed{Station: Station{Key: "T06", OK: true, Current: 30, CurrentSigma: 0.01, Depth: 1.3, DepthSigma: 0.01}}
	set := &Settings{MinCover: 0.6, SensorHeight: 0.3}
	a := (180 - 0.3) * math.Pi / 180
	dir := [3]float64{math.Sin(a), math.Cos(a), 0}
	l := Line{Point: [3]float64{30, 0, -0.65}, Dir: dir, Current: 10, CurrentSigma: 0.02, Depth: 0.65, DepthSigma: 0.005}
	f, ok := LoneCover(p, l, set, false)
	if !ok || !strings.Contains(f.Message, "azimuth 0 degrees") {
		t.Errorf("no sigma: %s", f.Message)
	}
	l.AzimuthSigma = 0.04
	f, ok = LoneCover(p, l, set, false)
	if !ok || !strings.Contains(f.Message, "azimuth "+pm(179.7, 0.04)+" degrees") {
		t.Errorf("with its sigma: %s", f.Message)
	}
	for _, v := range f.Values {
		if v.Name == "azimuth" && v.Sigma != 0.04 {
			t.Errorf("azimuth value %+v, want its sigma 0.04", v)
		}
	}
}
