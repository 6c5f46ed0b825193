package report

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"
)

// polyphaseDrawDoc is a three-phase set over n stations: cores of
// currents cur (complex, at the first station's time), each station's
// phases all turned by turn·k degrees (a grid frequency off the one
// demodulated turns them along the route), with independent errors of
// s A per real part drawn from rng (none when rng is nil), and the
// stations' sigmas to match.
func polyphaseDrawDoc(cur [3]complex128, n int, turn, s float64, rng *rand.Rand) *Document {
	routes := make([]Route, 3)
	for k := range n {
		u := cmplx.Rect(1, turn*float64(k)*math.Pi/180)
		for j := range 3 {
			c := cur[j] * u
			if rng != nil {
				c += complex(s*rng.NormFloat64(), s*rng.NormFloat64())
			}
			p, sp := cmplx.Phase(c)*180/math.Pi, s/cmplx.Abs(c)*180/math.Pi
			routes[j].Stations = append(routes[j].Stations, Station{Key: string(rune('A'+k/26)) + string(rune('a'+k%26)),
				Direction: [3]float64{1, 0, 0}, Current: cmplx.Abs(c), CurrentSigma: s, Phase: &p, PhaseSigma: &sp, Used: true})
		}
	}
	d := &Document{Route: &routes[0]}
	for j := 1; j < 3; j++ {
		d.Conductors = append(d.Conductors, Track{Number: j + 1, Route: routes[j]})
	}
	d.addTrackPhasesWith(nil)
	return d
}

// TestPolyphaseResidualMeanOfPhasors: a three-phase set's residual is the
// magnitude of the mean of the stations' residual phasors (each referred
// to conductor 1's phase at its station), not the mean of their
// magnitudes. A balanced set, 100 A on each core at 0°, -120° and +120°
// (residual 0 A by phasor arithmetic), over 16 stations whose phases turn
// 23° a station, with errors of 0.5 A per real part on every core, drawn
// 300 times: the residual over its sigma is then the magnitude of a 2-D
// normal mean over its sigma, a Rayleigh variable, whose mean is
// sqrt(pi/2) = 1.2533 and which passes 3 one time in exp(4.5) = 90
// (Rayleigh distribution, handbook values; the Birge widening, where the
// draws scatter beyond their sigmas, lowers both a little: 1.16 and 1 in
// 300 here). Before, each station's
// magnitude was biased up (about 1.25 of its sigma) and the mean kept
// it while the sigma fell by sqrt(16): the residual read about 5 sigmas
// from 0 every time. An unbalanced set, 200, 150 and 120 A (70.0 A at
// -21.79° from conductor 1 by phasor arithmetic), with the same turns,
// reads that exactly without errors and within 3 sigma with them.
func TestPolyphaseResidualMeanOfPhasors(t *testing.T) {
	const n, turn, s = 16, 23.0, 0.5
	rng := rand.New(rand.NewPCG(29, 1))
	bal := [3]complex128{100, cmplx.Rect(100, -120*math.Pi/180), cmplx.Rect(100, 120*math.Pi/180)}
	const draws = 300
	var sum float64
	past3 := 0
	for range draws {
		c := polyphaseDrawDoc(bal, n, turn, s, rng).Conductors[1]
		if c.PolyphaseResidualA == nil || c.PolyphaseResidualSigmaA == nil {
			t.Fatal("no residual for a balanced set")
		}
		z := *c.PolyphaseResidualA / *c.PolyphaseResidualSigmaA
		sum += z
		if z > 3 {
			past3++
		}
	}
	mean := sum / draws
	t.Logf("balanced: residual over its sigma %.3f on average (Rayleigh 1.2533), past 3 in %d of %d", mean, past3, draws)
	if !(mean > 1 && mean < 1.4) {
		t.Errorf("a balanced set's residual averages %.3f sigmas from 0 A, want about 1.25", mean)
	}
	if past3 > draws/20 {
		t.Errorf("a balanced set's residual lies past 3 sigma in %d of %d draws, want about 1 in 90", past3, draws)
	}

	unb := [3]complex128{200, cmplx.Rect(150, -120*math.Pi/180), cmplx.Rect(120, 120*math.Pi/180)}
	sum0 := unb[0] + unb[1] + unb[2]
	want, wantPhase := cmplx.Abs(sum0), cmplx.Phase(sum0)*180/math.Pi
	c := polyphaseDrawDoc(unb, n, turn, s, nil).Conductors[1]
	if c.PolyphaseResidualA == nil || c.PolyphaseResidualPhaseDeg == nil {
		t.Fatalf("no residual or no phase for an unbalanced set: %+v", c)
	}
	if math.Abs(*c.PolyphaseResidualA-want) > 1e-9 || math.Abs(*c.PolyphaseResidualPhaseDeg-wantPhase) > 1e-9 {
		t.Errorf("residual %.9f A at %.9f°, phasor arithmetic %.9f A at %.9f°", *c.PolyphaseResidualA, *c.PolyphaseResidualPhaseDeg, want, wantPhase)
	}
	c = polyphaseDrawDoc(unb, n, turn, s, rng).Conductors[1]
	if c.PolyphaseResidualA == nil || c.PolyphaseResidualPhaseDeg == nil {
		t.Fatalf("no residual or no phase for an unbalanced set with errors: %+v", c)
	}
	t.Logf("unbalanced: %.4f ± %.4f A at %.3f ± %.3f° (true %.4f A at %.3f°)", *c.PolyphaseResidualA, *c.PolyphaseResidualSigmaA, *c.PolyphaseResidualPhaseDeg, *c.PolyphaseResidualPhaseSigmaDeg, want, wantPhase)
	if math.Abs(*c.PolyphaseResidualA-want) > 3**c.PolyphaseResidualSigmaA || math.Abs(*c.PolyphaseResidualPhaseDeg-wantPhase) > 3**c.PolyphaseResidualPhaseSigmaDeg {
		t.Errorf("residual %.4f ± %.4f A at %.3f ± %.3f°, true %.4f A at %.3f°", *c.PolyphaseResidualA, *c.PolyphaseResidualSigmaA, *c.PolyphaseResidualPhaseDeg, *c.PolyphaseResidualPhaseSigmaDeg, want, wantPhase)
	}
}
