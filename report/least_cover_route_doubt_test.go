package report

import (
	"math"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// TestLeastCoverDoubtsPoorRouteStation: a small steel object lying right over
// a 20 A DC cable 1.0 m down (testdata/scenarios/open/object-over-cable.toml,
// the invented Tollard Heath) makes its traverse's line fit poor, with a
// current off both neighbours' and a depth that is not the cable's. Before,
// the least-cover headline took that station like any other and read
// "Least cover: 0.883 ± 0.010 m, conductor 1 at T10" (seeds 1-2; 0.710 m on
// seed 3) for a cable under 1.0 m of cover everywhere, 12-23 sigma off, with
// no caveat (found in review). The simulated truth is the reference: the
// cable's cover is its depth below the ground at up = 0, 1.0 m (DOMAIN.md,
// minimum cover). On seeds 1-3 the headline's cover either agrees with the
// truth within 4 sigma, or the sentence says the station's fit may not
// describe the conductor and gives conductor 1's least cover at its sound
// stations, which must agree with the truth within 4 sigma.
func TestLeastCoverDoubtsPoorRouteStation(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 18 traverses per seed with the object search")
	}
	const cover = 1.0 // the scenario's cable depth below up = 0
	name := filepath.Join("open", "object-over-cable.toml")
	num := `(-?[0-9.]+) ± ([0-9.]+) m`
	head := regexp.MustCompile(`^Least cover: ` + num)
	sound := regexp.MustCompile(`conductor 1's least cover is ` + num)
	within := func(m []string) (float64, float64, bool) {
		v, err1 := strconv.ParseFloat(m[1], 64)
		s, err2 := strconv.ParseFloat(m[2], 64)
		// 1 mm beside 4 sigma: the shallowest of 17 sound stations lies
		// a couple of sigma shallower than the truth by chance alone.
		return v, s, err1 == nil && err2 == nil && math.Abs(v-cover) <= 4*s+1e-3
	}
	for _, seed := range []int64{1, 2, 3} {
		lc := LeastCover(scenarioDoc(t, name, seed))
		t.Logf("seed %d: %s", seed, lc)
		m := head.FindStringSubmatch(lc)
		if m == nil {
			t.Errorf("seed %d: no least cover of conductor 1: %q", seed, lc)
			continue
		}
		if _, _, ok := within(m); ok {
			continue
		}
		if !strings.Contains(lc, "from a fit that may not describe the conductor there") {
			t.Errorf("seed %d: headline cover %s ± %s m, true %.1f m, given without a caveat", seed, m[1], m[2], cover)
		}
		s := sound.FindStringSubmatch(lc)
		if s == nil {
			t.Errorf("seed %d: no least cover at the sound stations beside the doubtful one", seed)
			continue
		}
		if v, sg, ok := within(s); !ok {
			t.Errorf("seed %d: least cover at the sound stations %.4f ± %.2g m, true %.1f m", seed, v, sg, cover)
		}
	}
}
