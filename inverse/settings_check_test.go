package inverse

import (
	"math"
	"strings"
	"testing"
)

// TestSettingsOutOfRangeRefused: settings outside their documented ranges
// are refused with an error naming the setting, before any fit. Before, a
// NaN ReferenceZ gave NaN depths marked identifiable, a NaN azimuth an
// error blaming the readings ("a trial conductor passes through a
// sensor"), a dip of 95 degrees a four-line fit, and unknown criteria,
// backgrounds and negative bounds were taken as the defaults without a
// word. The readings: one traverse over a 35 A line 0.9 m below the
// sensors (simulated by the forward model, Biot-Savart).
func TestSettingsOutOfRangeRefused(t *testing.T) {
	p := settingsTraverse(t)
	nan, inf, steep, neg := math.NaN(), math.Inf(1), 95.0, -1.0
	for _, c := range []struct {
		set  Settings
		want string
	}{
		{Settings{ReferenceZ: &nan}, "Settings.ReferenceZ is NaN"},
		{Settings{ReferenceZ: &inf}, "Settings.ReferenceZ is +Inf"},
		{Settings{Azimuth: &nan}, "Settings.Azimuth is NaN"},
		{Settings{Dip: &steep}, "Settings.Dip = 95, want -90 to 90"},
		{Settings{Dip: &nan}, "Settings.Dip = NaN"},
		{Settings{Criterion: 7}, "unknown Settings.Criterion 7"},
		{Settings{Background: 9}, "unknown Settings.Background 9"},
		{Settings{MaxCount: -2}, "Settings.MaxCount = -2"},
		{Settings{MaxIter: -5}, "Settings.MaxIter = -5"},
		{Settings{FTol: -1}, "Settings.FTol = -1"},
		{Settings{MinDepth: neg}, "Settings.MinDepth = -1"},
		{Settings{HuberC: nan}, "Settings.HuberC = NaN"},
	} {
		if _, err := FitLines(p, &c.set); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("FitLines with %+v: error %v, want one containing %q", c.set, err, c.want)
		}
	}
	// FitStrengths reads the settings too.
	src := []Source{Line{Point: [3]float64{0, 0, -0.9}, Dir: [3]float64{0, 1, 0}}}
	if _, err := FitStrengths(p, src, &Settings{ReferenceZ: &nan}); err == nil || !strings.Contains(err.Error(), "Settings.ReferenceZ is NaN") {
		t.Errorf("FitStrengths with a NaN ReferenceZ: error %v", err)
	}
	// The documented values still fit: the zero value, a dip of -90 to 90,
	// and the AIC criterion with the gradient background.
	vertical, level, ground := 90.0, 0.0, -0.3
	for _, set := range []*Settings{nil, {}, {Dip: &level, ReferenceZ: &ground}, {Dip: &vertical, Count: 1}, {Criterion: AIC}} {
		if _, err := FitLines(p, set); err != nil {
			t.Errorf("FitLines with %+v: %v", set, err)
		}
	}
}

// settingsTraverse is one 41-reading traverse along east at height 0 over
// a 35 A line running north 0.9 m below it, with a uniform background and
// no noise.
func settingsTraverse(t *testing.T) *Problem {
	t.Helper()
	line := Line{Point: [3]float64{0.1, 0, -0.9}, Dir: [3]float64{0, 1, 0}}
	p := &Problem{Sigma: 5}
	for i := range 41 {
		r := [3]float64{-4 + 0.2*float64(i), 0, 0}
		b := line.Field(r, 35)
		p.Points = append(p.Points, r)
		p.Fields = append(p.Fields, [3]float64{b[0] + 100, b[1] - 20000, b[2] + 45000})
	}
	return p
}
