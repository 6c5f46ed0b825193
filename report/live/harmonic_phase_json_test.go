package live

import (
	"encoding/json"
	"strings"
	"testing"
)

// TestHarmonicUndeterminedPhaseLeftOut: a harmonic lost in the noise has
// no phase; its JSON leaves phase_deg and phase_sigma_deg out, as the
// survey files leave an undetermined phase out, instead of a sigma of
// 180 that a dashboard reads as a measured one (found in review: /latest
// gave "phase_sigma_deg":180). A determined phase is written, and both
// read back as they were.
func TestHarmonicUndeterminedPhaseLeftOut(t *testing.T) {
	lost := HarmonicCurrent{Order: 5, Current: 0.02, CurrentSigma: 0.03, Phase: 41, PhaseSigma: 180}
	b, err := json.Marshal(lost)
	if err != nil {
		t.Fatal(err)
	}
	if strings.Contains(string(b), "phase") || !strings.Contains(string(b), `"current_sigma_a":0.03`) {
		t.Errorf("undetermined harmonic's JSON %s: want no phase_deg or phase_sigma_deg, the current kept", b)
	}
	var back HarmonicCurrent
	if err := json.Unmarshal(b, &back); err != nil || back.PhaseDetermined() || back.Order != 5 || back.Current != 0.02 {
		t.Errorf("read back as %+v (%v): want its phase still undetermined", back, err)
	}
	known := HarmonicCurrent{Order: 3, Current: 40, CurrentSigma: 0.1, Phase: -12.5, PhaseSigma: 0.4}
	b, _ = json.Marshal(known)
	if !strings.Contains(string(b), `"phase_deg":-12.5`) || !strings.Contains(string(b), `"phase_sigma_deg":0.4`) {
		t.Errorf("determined harmonic's JSON %s lacks its phase", b)
	}
	back = HarmonicCurrent{}
	if err := json.Unmarshal(b, &back); err != nil || back != known {
		t.Errorf("read back as %+v (%v), want %+v", back, err, known)
	}
}
