package inverse

import (
	"math"
	"math/rand/v2"
	"reflect"
	"slices"
	"strings"
	"testing"
)

// rampTraverse writes the DC readings of one traverse walked north across a
// cable running east (200 A, 0.9 m deep, the sensor 0.3 m up), 12 m at
// 0.5 m/s, one reading each 0.5 s, with 2 nT of noise and the current
// 200 (1 + amp sin(2 pi t / 97 s + phase)): a slow load swing. reverse walks
// it south. The field is the infinite line's of DOMAIN.md "Forward models"
// (mu0 I / 2 pi (u x rho) / |rho|^2, mu0 of CODATA 2022), written out here.
func rampTraverse(amp, phase, t0 float64, reverse bool, rng *rand.Rand) *Problem {
	return rampLines([]rampLine{{0, -0.9, 200}}, amp, phase, t0, reverse, rng)
}

// rampLine is a line running east at north n and height up, carrying i A
// (times the swing).
type rampLine struct{ n, up, i float64 }

// rampLines is rampTraverse over the lines ls.
func rampLines(ls []rampLine, amp, phase, t0 float64, reverse bool, rng *rand.Rand) *Problem {
	const mu0 = 1.25663706127e-6
	p := &Problem{}
	for k := 0; k <= 48; k++ {
		t := 0.5 * float64(k)
		n := -6 + 0.25*float64(k)
		if reverse {
			n = -n
		}
		swing := 1 + amp*math.Sin(2*math.Pi*(t0+t)/97+phase)
		b := [3]float64{20000 + 2*rng.NormFloat64(), 5000 + 2*rng.NormFloat64(), -40000 + 2*rng.NormFloat64()}
		for _, l := range ls {
			// u = east; rho from the line to the sensor is (0, rn, ru), and
			// u x rho = (0, -ru, rn).
			rn, ru := n-l.n, 0.3-l.up
			k := mu0 * l.i * swing / (2 * math.Pi) / (rn*rn + ru*ru) * 1e9
			b[1] -= k * ru
			b[2] += k * rn
		}
		p.Points = append(p.Points, [3]float64{0, n, 0.3})
		p.Fields = append(p.Fields, b)
		p.Times = append(p.Times, t0+t)
	}
	return p
}

// TestCurrentRampOneLine: a ±10 % slow swing of the current while each
// traverse is walked (alternate directions) had been fitted as two or three
// lines on most traverses, with phantom deep lines; it is one line with the
// ramp noted, its relative change found within its sigma of the change the
// swing made, and the mean current within its widened sigma.
func TestCurrentRampOneLine(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 23))
	for tr := range 8 {
		t0 := 34 * float64(tr)
		p := rampTraverse(0.10, 0.3, t0, tr%2 == 1, rng)
		res, err := FitLines(p, nil)
		if err != nil {
			t.Fatalf("traverse %d: %v", tr, err)
		}
		var note string
		for _, n := range res.Notes {
			if strings.HasPrefix(n, CurrentRampNote) {
				note = n
			}
		}
		if len(res.Sources) != 1 || note == "" {
			t.Errorf("traverse %d: %d lines, ramp note %q; want one line with the ramp noted (notes %q)", tr, len(res.Sources), note, res.Notes)
			continue
		}
		i := func(t float64) float64 { return 200 * (1 + 0.10*math.Sin(2*math.Pi*t/97+0.3)) }
		var mean float64
		for _, tt := range p.Times {
			mean += i(tt)
		}
		mean /= float64(len(p.Times))
		// The swing is not linear over 24 s of a 97 s period: the ramp is
		// its best straight line, within about 15 % of the end-to-end change.
		want := (i(t0+24) - i(t0)) / mean
		if d := math.Abs(res.CurrentRamp - want); d > 3*res.CurrentRampSigma+0.15*math.Abs(want)+0.005 {
			t.Errorf("traverse %d: ramp %.4f ± %.4f, the swing changed the current by %.4f", tr, res.CurrentRamp, res.CurrentRampSigma, want)
		}
		s := res.Sources[0]
		if math.Abs(s.Current-mean) > 2*s.CurrentSigma {
			t.Errorf("traverse %d: current %.2f ± %.2f A, the traverse's mean %.2f A", tr, s.Current, s.CurrentSigma, mean)
		}
		if math.Abs(s.Point[2]+0.9) > 0.05 {
			t.Errorf("traverse %d: line at %.3f m up, want -0.9", tr, s.Point[2])
		}
	}
}

// TestCurrentRampSteady: the same traverses with a steady current draw no
// ramp note and stay one line.
func TestCurrentRampSteady(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 24))
	for tr := range 8 {
		p := rampTraverse(0, 0, 34*float64(tr), tr%2 == 1, rng)
		res, err := FitLines(p, nil)
		if err != nil {
			t.Fatalf("traverse %d: %v", tr, err)
		}
		for _, n := range res.Notes {
			if strings.HasPrefix(n, CurrentRampNote) {
				t.Errorf("traverse %d: steady current noted as changing: %q", tr, n)
			}
		}
		if len(res.Sources) != 1 || res.CurrentRamp != 0 {
			t.Errorf("traverse %d: %d lines, ramp %g; want one line, no ramp", tr, len(res.Sources), res.CurrentRamp)
		}
	}
}

// TestCurrentRampTwoLinesStayTwo: two steady lines 0.6 m apart (200 A and
// 120 A, 0.9 m deep), walked with times, stay two lines with no ramp note:
// a ramp on one line does not explain a second conductor.
func TestCurrentRampTwoLinesStayTwo(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 25))
	for tr := range 6 {
		p := rampLines([]rampLine{{-0.3, -0.9, 200}, {0.3, -0.9, 120}}, 0, 0, 34*float64(tr), tr%2 == 1, rng)
		res, err := FitLines(p, nil)
		if err != nil {
			t.Fatalf("traverse %d: %v", tr, err)
		}
		for _, n := range res.Notes {
			if strings.HasPrefix(n, CurrentRampNote) {
				t.Errorf("traverse %d: two steady lines noted as a changing current: %q", tr, n)
			}
		}
		if len(res.Sources) != 2 {
			t.Errorf("traverse %d: %d lines, want 2", tr, len(res.Sources))
		}
	}
}

// swingLines writes the DC readings of one traverse walked north across the
// lines ls running east, 12 m in 49 readings 0.4 s apart, with noise nT of
// noise on each axis and each line's current times swing(t): the field is
// the infinite line's of DOMAIN.md "Forward models", as in rampLines.
func swingLines(ls []rampLine, swing func(t float64) float64, noise float64, reverse bool, rng *rand.Rand) *Problem {
	const mu0 = 1.25663706127e-6
	p := &Problem{}
	for k := 0; k <= 48; k++ {
		t := 0.4 * float64(k)
		n := -6 + 0.25*float64(k)
		if reverse {
			n = -n
		}
		b := [3]float64{20000 + noise*rng.NormFloat64(), 5000 + noise*rng.NormFloat64(), -40000 + noise*rng.NormFloat64()}
		for _, l := range ls {
			rn, ru := n-l.n, 0.3-l.up
			k := mu0 * l.i * swing(t) / (2 * math.Pi) / (rn*rn + ru*ru) * 1e9
			b[1] -= k * ru
			b[2] += k * rn
		}
		p.Points = append(p.Points, [3]float64{0, n, 0.3})
		p.Fields = append(p.Fields, b)
		p.Times = append(p.Times, t)
	}
	return p
}

// TestCurrentRampNotPastTheNoise: two lines (100 A 0.9 m below ground
// level and 40 A 1.5 m down, 2.5 m aside) whose currents swing 30 % over
// 15 s, faster than a ramp and its curvature follow. Before, the automatic
// count let one line with a ramp displace the two-line fit although the fit
// with the ramp still missed the readings by hundreds of times their noise
// floor: one line of 137 ± 121 A "changing about 180 %" (the reported fit
// missing by 698 times), and an answer that the screen in front of the
// ramp fits (rampMayPass) did not share (8 of 1200 probe traverses; found
// in review). A ramp now displaces several lines only where the fit with it
// meets the noise by linesMiss's test (rampAtNoise): no ramp is reported
// here, screen or no screen. The fit stays wrong (the swing is in no
// model): an unresolved go-and-return pair whose currents, hundreds of
// amperes, carry no sigma (Identifiable.Current false, Result.Pairs), and
// a note that the lines miss the readings.
func TestCurrentRampNotPastTheNoise(t *testing.T) {
	defer func() { rampScreenOn = true }()
	sw := func(t float64) float64 { return 1 + 0.3*math.Sin(2*math.Pi*t/15+0.7) }
	for _, noise := range []float64{2, 20} {
		for seed := range 3 {
			mk := func() *Problem {
				rng := rand.New(rand.NewPCG(uint64(seed+1), 335))
				return swingLines([]rampLine{{0, -0.9, 100}, {2.5, -1.5, 40}}, sw, noise, seed%2 == 1, rng)
			}
			var res [2]*Result
			for k, on := range []bool{false, true} {
				rampScreenOn = on
				r, err := FitLines(mk(), nil)
				if err != nil {
					t.Fatalf("noise %g seed %d: %v", noise, seed, err)
				}
				res[k] = r
			}
			r := res[0]
			if r.CurrentRamp != 0 || slices.ContainsFunc(r.Notes, func(n string) bool { return strings.HasPrefix(n, CurrentRampNote) }) {
				t.Errorf("noise %g seed %d: a ramp of %.3g ± %.3g displaces the lines, %d line(s) reported, first %.4g ± %.3g A",
					noise, seed, r.CurrentRamp, r.CurrentRampSigma, len(r.Sources), r.Sources[0].Current, r.Sources[0].CurrentSigma)
			}
			if !reflect.DeepEqual(res[0], res[1]) {
				t.Errorf("noise %g seed %d: the screen changes the answer", noise, seed)
			}
			for i, s := range r.Sources {
				if s.Kind != "line" || s.Identifiable.Current && s.CurrentSigma > 0 && math.Abs(s.Current) < 1e4 {
					continue
				}
				if s.Identifiable.Current || len(r.Pairs) == 0 {
					t.Errorf("noise %g seed %d: line %d carries %.4g ± %.3g A, identifiable %v, in no unresolved pair", noise, seed, i+1, s.Current, s.CurrentSigma, s.Identifiable.Current)
				}
			}
		}
	}
}
