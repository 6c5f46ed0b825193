package live

import (
	"encoding/json"
	"math"
	"testing"
)

// TestStoredPairGeometryKeepsSigmas: a commissioned go-and-return pair's
// geometry, as GET /api/v1/assets/ASSET reads it back from uc_state
// (JSON), is published with the same point, depth and azimuth sigmas as
// the geometry commissioning held in memory. The pair runs north 1.1 m
// below the sensors, its cores 0.3 m apart; the covariance (simulated
// truth, set here) gives the centre line's two shifts across it 0.01 m
// each, its tilts 1 mrad and the turn of the cores' axis 1 mrad, so that
// each core's depth sigma is that of the vertical shift with the turn's
// sqrt(0.01^2 + (0.15 * 0.001)^2) m at most (geometry: the turn moves a
// core 0.15 m from the centre by 0.15 * angle).
func TestStoredPairGeometryKeepsSigmas(t *testing.T) {
	sensors := []SensorConfig{
		{Name: "a", Position: [3]float64{-1, -1, 0}},
		{Name: "b", Position: [3]float64{1, -1, 0}},
		{Name: "c", Position: [3]float64{-1, 1, 0}},
		{Name: "d", Position: [3]float64{1, 1, 0}},
	}
	conds := []ConductorConfig{
		{Name: "go", Kind: "line", Point: [3]float64{-0.15, 0, -1.1}, Direction: [3]float64{0, 1, 0}, heldPair: 1},
		{Name: "return", Kind: "line", Point: [3]float64{0.15, 0, -1.1}, Direction: [3]float64{0, -1, 0}, heldPair: 1},
	}
	cov := make([][]float64, 5)
	for i := range cov {
		cov[i] = make([]float64, 5)
	}
	cov[0][0], cov[1][1] = 1e-4, 1e-4 // shifts, m^2
	cov[2][2], cov[3][3] = 1e-6, 1e-6 // tilts, rad^2
	cov[4][4] = 1e-6                  // turn, rad^2
	groups, err := conductorGroups(conds)
	if err != nil || len(groups) != 1 {
		t.Fatalf("groups %v, %v: want the pair as one", groups, err)
	}
	g := storedGeometry{Conductors: conds, From: 0, To: 60, Uncertainty: &geometryUncertainty{Groups: groups, Covariance: cov, Scale: 1}}
	mem := publishedGeometry(&g, sensors)
	raw, err := json.Marshal(g)
	if err != nil {
		t.Fatal(err)
	}
	var back storedGeometry
	if err := json.Unmarshal(raw, &back); err != nil {
		t.Fatal(err)
	}
	kv := publishedGeometry(&back, sensors)
	for i, c := range kv.Conductors {
		m := mem.Conductors[i]
		if m.DepthSigmaM == nil {
			t.Fatalf("%s: no sigmas even from the geometry in memory", m.Name)
		}
		if c.PointSigmaM == nil || c.DepthSigmaM == nil || c.AzimuthSigmaDeg == nil {
			t.Fatalf("%s: the stored geometry is published without sigmas: %+v", c.Name, c)
		}
		if *c.DepthSigmaM != *m.DepthSigmaM || *c.AzimuthSigmaDeg != *m.AzimuthSigmaDeg || *c.PointSigmaM != *m.PointSigmaM {
			t.Errorf("%s: stored sigmas depth %g azimuth %g point %v, in memory %g %g %v", c.Name,
				*c.DepthSigmaM, *c.AzimuthSigmaDeg, *c.PointSigmaM, *m.DepthSigmaM, *m.AzimuthSigmaDeg, *m.PointSigmaM)
		}
		if d := *c.DepthSigmaM; !(d >= 0.01*(1-1e-6) && d <= math.Hypot(0.01, 0.15*0.001)*(1+1e-6)) {
			t.Errorf("%s: depth sigma %g m, want between 0.01 and %g", c.Name, d, math.Hypot(0.01, 0.15*0.001))
		}
	}
}
