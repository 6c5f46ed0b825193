package route

import (
	"math"
	"strings"
	"testing"
)

// Settings out of the ranges their documentation gives are refused, naming
// the field. Before, Build took them: a NaN or infinite StepK dropped the
// simulated 2 A fall of fallStations (simulated truth) without a word, and
// a NaN GroundSigma called 1 m deep stations shallower than a 0.5 m
// minimum. The defaults and the documented negative values (MinStep,
// MaxReducedChi2, MinorMisfit) are still taken, and the fall is still
// found at a finite StepK.
func TestBuildRefusesSettingsOutOfRange(t *testing.T) {
	nan, inf := math.NaN(), math.Inf(1)
	for _, c := range []struct {
		set   Settings
		field string
	}{
		{Settings{StepK: nan}, "StepK"},
		{Settings{StepK: inf}, "StepK"},
		{Settings{StepK: -1}, "StepK"},
		{Settings{MinStep: nan}, "MinStep"},
		{Settings{MinStep: -inf}, "MinStep"},
		{Settings{MinCover: nan}, "MinCover"},
		{Settings{MinCover: -0.5}, "MinCover"},
		{Settings{SensorHeight: inf, MinCover: 0.5}, "SensorHeight"},
		{Settings{GroundSigma: nan, MinCover: 0.5}, "GroundSigma"},
		{Settings{GroundSigma: -0.1, MinCover: 0.5}, "GroundSigma"},
		{Settings{CoverK: nan, MinCover: 0.5}, "CoverK"},
		{Settings{MaxReducedChi2: nan}, "MaxReducedChi2"},
		{Settings{MinorMisfit: inf}, "MinorMisfit"},
	} {
		_, err := Build(fallStations(0.05), &c.set)
		if err == nil || !strings.Contains(err.Error(), "Settings."+c.field) {
			t.Errorf("%+v: err %v, want one naming Settings.%s", c.set, err, c.field)
		}
	}
	for _, set := range []*Settings{nil, {}, {StepK: 4}, {MinStep: -1}, {MaxReducedChi2: -1}, {MinorMisfit: -1}, {MinCover: 0.5, GroundSigma: 0.1, SensorHeight: 0.2}} {
		r, err := Build(fallStations(0.05), set)
		if err != nil {
			t.Errorf("%+v: %v", set, err)
			continue
		}
		found := false
		for _, f := range r.Findings {
			found = found || f.Kind == KindCurrentStep && strings.Join(f.Keys, ",") == "S05,S06"
		}
		if !found {
			t.Errorf("%+v: the simulated 2 A fall between S05 and S06 not found: %+v", set, r.Findings)
		}
	}
}
