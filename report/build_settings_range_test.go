package report

import (
	"math"
	"strings"
	"testing"
)

// BuildSettings out of the ranges their documentation gives are refused,
// naming the field. Before, Build took them: with a NaN or infinite StepK
// the simulated 0.6 A fall between K4 and K5 of kestrelMoor (simulated
// truth) gave no finding at all, and a NaN MinCover or GroundSigma made
// cover findings that only WriteJSON refused later. Valid settings still
// find the fall.
func TestBuildRefusesSettingsOutOfRange(t *testing.T) {
	fits := kestrelMoor(t)
	nan, inf := math.NaN(), math.Inf(1)
	for _, c := range []struct {
		set   BuildSettings
		field string
	}{
		{BuildSettings{StepK: nan}, "StepK"},
		{BuildSettings{StepK: inf}, "StepK"},
		{BuildSettings{StepK: -3}, "StepK"},
		{BuildSettings{MinStep: nan}, "MinStep"},
		{BuildSettings{SensorHeight: 0.3, MinCover: nan}, "MinCover"},
		{BuildSettings{SensorHeight: 0.3, MinCover: -0.6}, "MinCover"},
		{BuildSettings{SensorHeight: nan, MinCover: 0.6}, "SensorHeight"},
		{BuildSettings{SensorHeight: 0.3, MinCover: 0.6, GroundSigma: nan}, "GroundSigma"},
		{BuildSettings{SensorHeight: 0.3, MinCover: 0.6, GroundSigma: -0.1}, "GroundSigma"},
		{BuildSettings{Noise: nan}, "Noise"},
		{BuildSettings{Noise: -5}, "Noise"},
		{BuildSettings{Noise: inf}, "Noise"},
		{BuildSettings{MeasuredNoise: nan}, "MeasuredNoise"},
	} {
		_, err := Build(Document{}, fits, &c.set)
		if err == nil || !strings.Contains(err.Error(), "BuildSettings."+c.field) {
			t.Errorf("%+v: err %v, want one naming BuildSettings.%s", c.set, err, c.field)
		}
	}
	for _, set := range []*BuildSettings{nil, {StepK: 3, Noise: 2}, {MinStep: -1}, {SensorHeight: 0.3, MinCover: 0.6, GroundSigma: 0.05}} {
		d, err := Build(Document{}, fits, set)
		if err != nil {
			t.Errorf("%+v: %v", set, err)
			continue
		}
		found := false
		for _, f := range d.Findings {
			found = found || f.Kind == "current-step" && strings.Join(f.Groups, ",") == "K4,K5"
		}
		if !found {
			t.Errorf("%+v: the simulated fall between K4 and K5 not found", set)
		}
	}
}
