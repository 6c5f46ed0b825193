package route

import (
	"math"
	"math/rand/v2"
	"reflect"
	"strings"
	"testing"
)

// Cathodic-protection transmission-line model (DOMAIN.md, "Cathodic
// protection", from memory): current along a coated pipe decays as
// I(x) = I0 exp(-a x), a = sqrt(R'G'). The values below are invented for the
// fictional Kestrel Moor gas spur: 10 A drained at chainage 0, a = 2e-3 /m,
// a traverse every 20 m.
const (
	cpI0      = 10.0  // A
	cpAlpha   = 2e-3  // 1/m
	cpSpacing = 20.0  // m between traverses
	cpCount   = 31    // traverses
	cpSigma   = 0.05  // A, one-sigma current from each fit
	cpAzimuth = 30.0  // degrees from north, clockwise
	cpDepth   = 1.2   // m below the sensors
	chainTol  = 1e-12 // relative: chainage is a sum of exactly computed distances
)

// spur builds stations along a straight route at cpAzimuth with current
// cpI0 exp(-a x) plus noise, minus step (A) beyond station stepAfter.
func spur(seed uint64, step float64, stepAfter int) []Station {
	return spurSigma(seed, step, stepAfter, cpSigma)
}

// spurSigma is spur with each fit's current sigma (and noise) sigma, A.
func spurSigma(seed uint64, step float64, stepAfter int, sigma float64) []Station {
	rng := rand.New(rand.NewPCG(seed, 1))
	az := cpAzimuth * math.Pi / 180
	u := [3]float64{math.Sin(az), math.Cos(az), 0}
	st := make([]Station, cpCount)
	for i := range st {
		x := float64(i) * cpSpacing
		cur := cpI0 * math.Exp(-cpAlpha*x)
		if i > stepAfter {
			cur -= step
		}
		st[i] = Station{
			Key:          key(i),
			Point:        [3]float64{100 + x*u[0], 200 + x*u[1], -cpDepth},
			Dir:          u,
			Current:      cur + sigma*rng.NormFloat64(),
			CurrentSigma: sigma,
			Depth:        cpDepth + 0.01*rng.NormFloat64(),
			DepthSigma:   0.01,
			OK:           true,
		}
	}
	return st
}

// kStep is the number of reported sigmas within which a step's size must
// match the truth: 3 (a normal deviate exceeds it with probability 0.27%).
const kStep = 3

// checkStep checks that finding f sizes the step as want within kStep of
// its reported sigma, and that the sigma is no smaller than the fit sigmas
// of ten stations allow (five either side) nor more than three times the
// sigma of the difference of two single stations (beyond that the levels
// would say little).
func checkStep(t *testing.T, f Finding, want float64) {
	t.Helper()
	v := f.Values[0]
	if v.Name != "step" || math.Abs(v.Value-want) > kStep*v.Sigma {
		t.Errorf("step %v, want %.4g within %d sigma", v, want, kStep)
	}
	if lo, hi := cpSigma*math.Sqrt(2.0/plateauStations), 3*math.Sqrt2*cpSigma; v.Sigma < lo || v.Sigma > hi {
		t.Errorf("step sigma %.3g, want between %.3g and %.3g", v.Sigma, lo, hi)
	}
}

// near compares chainages, which are sums of rounded distances.
func near(a, b float64) bool { return math.Abs(a-b) <= chainTol*(1+math.Abs(b)) }

func key(i int) string { return "T" + string(rune('0'+i/10)) + string(rune('0'+i%10)) }

func count(r *Route, k Kind) int { return len(findings(r, k)) }

// findings returns r's findings of kind k, in order.
func findings(r *Route, k Kind) []Finding {
	var out []Finding
	for _, f := range r.Findings {
		if f.Kind == k {
			out = append(out, f)
		}
	}
	return out
}

func TestStepFoundAndBracketed(t *testing.T) {
	const step, after = 1.0, 17 // 1 A leaves between T17 and T18
	st := spur(7, step, after)
	// Fits give each traverse an arbitrary sign of direction: flip some.
	for _, i := range []int{3, 8, 18, 25} {
		st[i].Dir = [3]float64{-st[i].Dir[0], -st[i].Dir[1], 0}
		st[i].Current = -st[i].Current
	}
	r, err := Build(st, nil)
	if err != nil {
		t.Fatal(err)
	}
	if n := count(r, KindCurrentStep); n != 1 {
		for _, f := range r.Findings {
			t.Log(f.Message)
		}
		t.Fatalf("got %d steps, want 1", n)
	}
	var f Finding
	for _, f = range r.Findings {
		if f.Kind == KindCurrentStep {
			break
		}
	}
	wantFrom, wantTo := float64(after)*cpSpacing, float64(after+1)*cpSpacing
	if math.Abs(f.From-wantFrom) > 1e-6 || math.Abs(f.To-wantTo) > 1e-6 {
		t.Errorf("step bracketed at chainage %g..%g m, want %g..%g", f.From, f.To, wantFrom, wantTo)
	}
	if len(f.Keys) != 2 || f.Keys[0] != key(after) || f.Keys[1] != key(after+1) {
		t.Errorf("step keys %v, want [%s %s]", f.Keys, key(after), key(after+1))
	}
	// The step is the difference of the levels either side of it, both
	// carried to the step by the smooth trend: the true discontinuity.
	checkStep(t, f, -step)
	if !strings.Contains(f.Message, "falls") || !strings.Contains(f.Message, "leaving") {
		t.Errorf("message %q does not say current leaves", f.Message)
	}
	// Flipped stations now follow the route with positive current.
	for _, p := range r.Stations {
		if p.Current <= 0 {
			t.Errorf("%s: current %g after orientation, want > 0", p.Key, p.Current)
		}
		if p.Flipped != (p.Index == 3 || p.Index == 8 || p.Index == 18 || p.Index == 25) {
			t.Errorf("%s: flipped = %v", p.Key, p.Flipped)
		}
	}
}

// A station whose fit is disturbed (its current 0.6 A low, as beside a
// magnetised object) is a current anomaly, not a step out and a step back
// in; the real step elsewhere is still found.
func TestCurrentAnomaly(t *testing.T) {
	st := spur(12, 0, cpCount)
	st[6].Current -= 0.6
	for i := 20; i < cpCount; i++ {
		st[i].Current -= 1.0 // a real step between T19 and T20
	}
	r, err := Build(st, nil)
	if err != nil {
		t.Fatal(err)
	}
	r.Findings = withoutAttenuation(r.Findings) // the spur's steady fall, reported as information (attenuation.go)
	var kinds []string
	for _, f := range r.Findings {
		kinds = append(kinds, string(f.Kind)+" "+strings.Join(f.Keys, "-"))
	}
	want := []string{"current-anomaly T05-T06-T07", "current-step T19-T20"}
	if strings.Join(kinds, ", ") != strings.Join(want, ", ") {
		t.Errorf("findings %q, want %q", kinds, want)
	}
	if v := r.Findings[0].Values[0]; math.Abs(v.Value+0.6) > 4*v.Sigma {
		t.Errorf("departure %v, want -0.6 A", v)
	}
}

// A fault beside a traverse shows partly in that traverse's current: two
// adjacent steps of the same sign are one step, reported once with the
// total and bracketed by the outer stations.
func TestSpreadStepMerged(t *testing.T) {
	st := spur(13, 0, cpCount)
	st[15].Current -= 0.7 // partly
	for i := 16; i < cpCount; i++ {
		st[i].Current -= 1.4
	}
	r, err := Build(st, nil)
	if err != nil {
		t.Fatal(err)
	}
	r.Findings = withoutAttenuation(r.Findings) // the spur's steady fall, reported as information (attenuation.go)
	if n := count(r, KindCurrentStep); n != 1 {
		t.Fatalf("%d steps, want 1: %+v", n, r.Findings)
	}
	f := r.Findings[0]
	if strings.Join(f.Keys, "-") != "T14-T15-T16" || !near(f.From, 14*cpSpacing) || !near(f.To, 16*cpSpacing) {
		t.Errorf("step %v over %g..%g m, want T14-T15-T16 over 280..320 m", f.Keys, f.From, f.To)
	}
	checkStep(t, f, -1.4)
	if !strings.Contains(f.Message, "most of the change") {
		t.Errorf("message %q does not say where most of the step is", f.Message)
	}
}

// Two steps two intervals apart are both found, and neither makes the
// interval between them look like a step.
func TestTwoNearbySteps(t *testing.T) {
	st := spur(8, 0, cpCount)
	for i := 11; i < cpCount; i++ {
		st[i].Current -= 0.8 // between T10 and T11
	}
	for i := 13; i < cpCount; i++ {
		st[i].Current -= 0.6 // between T12 and T13
	}
	r, err := Build(st, nil)
	if err != nil {
		t.Fatal(err)
	}
	var at []float64
	for _, f := range r.Findings {
		if f.Kind == KindCurrentStep {
			at = append(at, f.From)
		}
	}
	if len(at) != 2 || !near(at[0], 10*cpSpacing) || !near(at[1], 12*cpSpacing) {
		t.Errorf("steps at %v m, want [200 240]", at)
	}
}

// TestNoFalseSteps runs many noisy realisations of the smooth decay and
// counts intervals called steps. With k = 3 a normal deviate exceeds the
// limit with probability 0.27% (two-sided); the trend estimate adds noise
// that the test statistic accounts for only approximately, so allow 1%.
func TestNoFalseSteps(t *testing.T) {
	const runs = 200
	const maxRate = 0.01
	falses := 0
	for seed := uint64(0); seed < runs; seed++ {
		r, err := Build(spur(seed, 0, cpCount), nil)
		if err != nil {
			t.Fatal(err)
		}
		falses += count(r, KindCurrentStep)
		if seed == 1 && count(r, KindCurrentStep) != 0 {
			t.Errorf("seed 1: false step on the smooth decay: %v", r.Findings)
		}
	}
	rate := float64(falses) / float64(runs*(cpCount-1))
	t.Logf("false step rate %.4f over %d intervals", rate, runs*(cpCount-1))
	if rate > maxRate {
		t.Errorf("false step rate %.4f, want <= %g", rate, maxRate)
	}
}

// Without the trend, the decay itself (0.39 A per interval against a
// sigma of 0.07 A) is a run of "steps": the trend is what prevents them.
func TestRawDifferencesFlagDecay(t *testing.T) {
	r, err := Build(spur(1, 0, cpCount), &Settings{TrendWindow: -1})
	if err != nil {
		t.Fatal(err)
	}
	// Every interval whose true decay exceeds the 3-sigma limit by a
	// further 2 sigma must be flagged.
	flagged := map[float64]bool{}
	for _, f := range r.Findings {
		if f.Kind == KindCurrentStep { // adjacent steps merge: mark every interval covered
			for j := math.Round(f.From / cpSpacing); j < math.Round(f.To/cpSpacing); j++ {
				flagged[j] = true
			}
		}
	}
	s := math.Sqrt2 * cpSigma
	must := 0
	for j := 0; j < cpCount-1; j++ {
		x := float64(j) * cpSpacing
		if d := cpI0 * (math.Exp(-cpAlpha*x) - math.Exp(-cpAlpha*(x+cpSpacing))); d > 5*s {
			must++
			if !flagged[float64(j)] {
				t.Errorf("interval from %g m (true decay %.3f A) not flagged without a trend", x, d)
			}
		}
	}
	if must < 3 {
		t.Fatalf("only %d intervals decay by more than 5 sigma: test data too weak", must)
	}
}

func TestChainageStraight(t *testing.T) {
	st := spur(3, 0, cpCount)
	r, err := Build(st, nil)
	if err != nil {
		t.Fatal(err)
	}
	for k, p := range r.Stations {
		if p.Index != k {
			t.Fatalf("position %d holds station %d, want %d", k, p.Index, k)
		}
		if want := float64(k) * cpSpacing; !near(p.Chainage, want) {
			t.Errorf("%s chainage %g, want %g", p.Key, p.Chainage, want)
		}
	}
	if want := float64(cpCount-1) * cpSpacing; math.Abs(r.Length-want) > 1e-6 {
		t.Errorf("length %g, want %g", r.Length, want)
	}
}

// An arc given in scrambled order comes out in arc order; its chainage is
// the sum of the chords (exact geometry).
func TestOrderCurvedRoute(t *testing.T) {
	const n, radius = 25, 50.0
	const span = 1.5 * math.Pi // three quarters of a circle: not sortable by one axis
	chord := 2 * radius * math.Sin(span/float64(n-1)/2)
	truth := make([]Station, n)
	for i := range truth {
		a := span * float64(i) / float64(n-1)
		truth[i] = Station{Key: key(i), Point: [3]float64{radius * math.Cos(a), radius * math.Sin(a), -1},
			Current: 5, CurrentSigma: 0.1, Depth: 1, DepthSigma: 0.05, OK: true}
	}
	rng := rand.New(rand.NewPCG(11, 12))
	perm := rng.Perm(n)
	st := make([]Station, n)
	for i, j := range perm {
		st[i] = truth[j]
	}
	r, err := Build(st, nil)
	if err != nil {
		t.Fatal(err)
	}
	// Recover the arc index of each placed station.
	idx := make([]int, n)
	for k, p := range r.Stations {
		idx[k] = perm[p.Index]
	}
	dir := 1
	if idx[0] != 0 {
		dir = -1
	}
	for k := range idx {
		want := k
		if dir < 0 {
			want = n - 1 - k
		}
		if idx[k] != want {
			t.Fatalf("route order %v is not the arc order", idx)
		}
	}
	if want := float64(n-1) * chord; math.Abs(r.Length-want) > 1e-9 {
		t.Errorf("length %g, want %g", r.Length, want)
	}
	if count(r, KindCurrentStep) != 0 {
		t.Errorf("constant current gave steps: %v", r.Findings)
	}
}

// Minimum cover: DOMAIN.md lists US NEC Table 300.5, 600 mm for direct-burial
// cable up to 1000 V in general locations.
func TestShallowCover(t *testing.T) {
	const sensor = 0.3 // m above ground
	st := spur(5, 0, cpCount)
	for i := range st {
		st[i].Depth, st[i].DepthSigma = 1.0, 0.02 // cover 0.70 m
	}
	for _, i := range []int{5, 6, 7} {
		st[i].Depth = 0.75 // cover 0.45 m: certainly shallow
	}
	st[6].Depth = 0.72        // shallowest of the run
	st[20].Depth = 0.3 + 0.62 // cover 0.62 m ...
	st[20].DepthSigma = 0.05  // ... but 2 sigma reaches below 0.60 m
	st[25].OK = false         // a failed fit is not used for cover
	st[25].Depth = 0.1
	set := &Settings{MinCover: 0.6, CoverCode: "NEC Table 300.5", SensorHeight: sensor}
	r, err := Build(st, set)
	if err != nil {
		t.Fatal(err)
	}
	cov := findings(r, KindShallowCover)
	if len(cov) != 2 {
		t.Fatalf("got %d cover findings, want 2: %+v", len(cov), cov)
	}
	// The stations T05-T07 fail; the stretch is bracketed by the nearest
	// stations with enough cover, T04 and T08 (cover.go).
	w := cov[0]
	if w.Severity != SeverityWarning || !near(w.From, 4*cpSpacing) || !near(w.To, 8*cpSpacing) || strings.Join(w.Keys, " ") != "T05 T06 T07" {
		t.Errorf("first cover finding %s %g..%g m at %v, want warning 80..160 m at T05 T06 T07", w.Severity, w.From, w.To, w.Keys)
	}
	if math.Abs(w.Values[0].Value-0.42) > 1e-12 || w.Position != st[6].Point {
		t.Errorf("shallowest cover %v at %v, want 0.42 m at T06", w.Values[0], w.Position)
	}
	if !strings.Contains(w.Message, "NEC Table 300.5") {
		t.Errorf("message %q does not name the code", w.Message)
	}
	if c := cov[1]; c.Severity != SeverityCaution || !near(c.From, 19*cpSpacing) || !near(c.To, 21*cpSpacing) || strings.Join(c.Keys, " ") != "T20" {
		t.Errorf("second cover finding %s %g..%g m at %v, want caution 380..420 m at T20", c.Severity, c.From, c.To, c.Keys)
	}
	// Without a minimum there is no cover check.
	r, _ = Build(st, &Settings{SensorHeight: sensor})
	if n := count(r, KindShallowCover); n != 0 {
		t.Errorf("cover findings without a minimum: %d", n)
	}
}

// TestCoverGroundSigma: the ground level's uncertainty widens the cover's sigma in
// quadrature (independent errors add in quadrature: common practice, e.g. the GUM,
// JCGM 100:2008 section 5.1), turning a certain verdict into a possible one and flagging a station
// whose fit alone says it is clear of the minimum.
func TestCoverGroundSigma(t *testing.T) {
	const sensor = 0.3
	st := spur(5, 0, cpCount)
	for i := range st {
		st[i].Depth, st[i].DepthSigma = 1.0, 0.0004 // cover 0.70 m, a strong signal's sigma
	}
	st[4].Depth = 0.3 + 0.59 // cover 0.59 m: 25 fit sigmas below 0.60 m
	st[12].Depth = 0.3 + 0.63
	covers := func(gs float64) []Finding {
		r, err := Build(st, &Settings{MinCover: 0.6, SensorHeight: sensor, GroundSigma: gs})
		if err != nil {
			t.Fatal(err)
		}
		return findings(r, KindShallowCover)
	}
	c := covers(0)
	if len(c) != 1 || c[0].Severity != SeverityWarning || c[0].Values[0].Sigma != 0.0004 {
		t.Fatalf("fit sigmas only: %+v, want one warning at T04 with sigma 0.0004 m", c)
	}
	// 0.02 m of ground uncertainty: 0.59 is within 2 sigma of 0.60 (caution), and so is
	// 0.63 (0.63 - 2*0.02 < 0.60); 0.70 is not.
	c = covers(0.02)
	if len(c) != 2 || c[0].Severity != SeverityCaution || c[1].Severity != SeverityCaution {
		t.Fatalf("ground sigma 0.02 m: %+v, want two cautions", c)
	}
	if want := math.Hypot(0.0004, 0.02); math.Abs(c[0].Values[0].Sigma-want) > 1e-15 {
		t.Errorf("cover sigma %g, want %g (quadrature)", c[0].Values[0].Sigma, want)
	}
	if !strings.Contains(c[0].Message, "0.590 ± 0.020") {
		t.Errorf("message %q does not give the widened sigma", c[0].Message)
	}
}

func TestQualityFindings(t *testing.T) {
	tests := []struct {
		name     string
		edit     func(s *Station)
		kinds    []Kind
		contains string
	}{
		{"sound", func(s *Station) {}, nil, ""},
		{"failed", func(s *Station) { s.OK = false; s.Problem = "did not converge" }, []Kind{KindPoorFit}, "did not converge"},
		{"ambiguous", func(s *Station) { s.Problem = "azimuth unidentifiable" }, []Kind{KindPoorFit}, "used with care"},
		// The misfit in units of the noise is the square root of the
		// reduced chi-square: sqrt(500/50) = 3.16, against sqrt(4) = 2.
		{"high chi2", func(s *Station) { s.Chi2, s.DOF = 500, 50 }, []Kind{KindPoorFit}, "by 3.16 times the noise, more than the 2 times allowed"},
		{"chi2 fine", func(s *Station) { s.Chi2, s.DOF = 55, 50 }, nil, ""},
		// A misfit far above the noise but 0.5% of the signal is information (a bend
		// the straight line cannot follow); at 5% of the signal it is a caution.
		{"high chi2, minor misfit", func(s *Station) { s.Chi2, s.DOF, s.RMS, s.Signal = 500, 50, 5, 1000 }, []Kind{KindPoorFit}, "misses 5 nT RMS of a 1000 nT signal (0.5%)"},
		{"high chi2, large misfit", func(s *Station) { s.Chi2, s.DOF, s.RMS, s.Signal = 500, 50, 50, 1000 }, []Kind{KindPoorFit}, "used with care"},
		{"dipole", func(s *Station) { s.Dipole = true }, []Kind{KindDipole}, "magnetised object"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			st := spur(9, 0, cpCount)
			tc.edit(&st[12])
			r, err := Build(st, nil)
			if err != nil {
				t.Fatal(err)
			}
			r.Findings = withoutAttenuation(r.Findings) // the spur's steady fall, reported as information (attenuation.go)
			var got []Kind
			for _, f := range r.Findings {
				got = append(got, f.Kind)
				if f.Kind == KindPoorFit {
					minor := strings.Contains(tc.name, "minor")
					if want := map[bool]Severity{true: SeverityInfo, false: SeverityCaution}[minor]; f.Severity != want {
						t.Errorf("severity %v, want %v", f.Severity, want)
					}
				}
				if tc.contains != "" && !strings.Contains(f.Message, tc.contains) {
					t.Errorf("message %q lacks %q", f.Message, tc.contains)
				}
				if !near(f.From, 12*cpSpacing) || f.Keys[0] != key(12) {
					t.Errorf("finding at %g m for %v, want 240 m for T12", f.From, f.Keys)
				}
			}
			if len(got) != len(tc.kinds) {
				t.Fatalf("kinds %v, want %v", got, tc.kinds)
			}
			for i := range got {
				if got[i] != tc.kinds[i] {
					t.Errorf("kinds %v, want %v", got, tc.kinds)
				}
			}
		})
	}
}

// A failed or dipole station must not create steps: its current is
// meaningless, and the stations either side still bracket correctly.
func TestUnusableStationsSkipped(t *testing.T) {
	st := spur(4, 0, cpCount)
	st[10].OK, st[10].Current = false, 1000
	st[11].Dipole, st[11].Current = true, -1000
	r, err := Build(st, nil)
	if err != nil {
		t.Fatal(err)
	}
	if n := count(r, KindCurrentStep); n != 0 {
		t.Errorf("unusable stations produced %d steps", n)
	}
}

func TestAC(t *testing.T) {
	st := spur(2, 0, cpCount)
	for i := range st {
		st[i].AC, st[i].Phase, st[i].PhaseSigma = true, 20, 0.5
	}
	st[4].Dir = [3]float64{-st[4].Dir[0], -st[4].Dir[1], 0}
	st[4].Phase = -160
	r, err := Build(st, nil)
	if err != nil {
		t.Fatal(err)
	}
	p := r.Stations[4]
	if !p.Flipped || math.Abs(p.Phase-20) > 1e-12 || p.Current <= 0 {
		t.Errorf("flipped AC station: phase %g current %g flipped %v, want phase 20, current > 0", p.Phase, p.Current, p.Flipped)
	}
}

func TestBuildErrors(t *testing.T) {
	nan := math.NaN()
	tests := []struct {
		name string
		st   []Station
		want string
	}{
		{"empty", nil, "no stations"},
		{"nan point", []Station{{Key: "T01", Point: [3]float64{0, nan, 0}}}, `station 0 ("T01"): point[1] is NaN`},
		{"inf current", []Station{{OK: true, Current: math.Inf(1)}}, "station 0: current is +Inf"},
		{"negative sigma", []Station{{Key: "A", OK: true, DepthSigma: -1}}, "depth sigma is negative"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Build(tc.st, nil)
			if err == nil || !strings.Contains(err.Error(), tc.want) || !strings.HasPrefix(err.Error(), "route: ") {
				t.Errorf("error %v, want one containing %q", err, tc.want)
			}
		})
	}
}

func TestInputUntouched(t *testing.T) {
	st := spur(1, 0, 5)
	st[2].Dir[0] = -st[2].Dir[0]
	st[3].Further = []Line{{Point: [3]float64{1, 2, -0.5}, Dir: [3]float64{0, 0.3, 1}, Current: -0.01, CurrentSigma: 0.001, Depth: 0.5, DepthSigma: 0.01}}
	before := append([]Station(nil), st...)
	for i := range before {
		before[i].Further = append([]Line(nil), st[i].Further...)
	}
	if _, err := Build(st, nil); err != nil {
		t.Fatal(err)
	}
	for i := range st {
		if !reflect.DeepEqual(st[i], before[i]) {
			t.Fatalf("station %d modified", i)
		}
	}
}

func BenchmarkBuild31(b *testing.B) {
	st := spur(1, 1, 15)
	set := &Settings{MinCover: 0.6}
	for b.Loop() {
		if _, err := Build(st, set); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkBuild1000(b *testing.B) {
	rng := rand.New(rand.NewPCG(1, 2))
	st := make([]Station, 1000)
	for i := range st {
		st[i] = Station{Point: [3]float64{float64(i) * 5, 10 * math.Sin(float64(i)/50), -1},
			Current: 5 + 0.01*rng.NormFloat64(), CurrentSigma: 0.01, Depth: 1, DepthSigma: 0.01, OK: true}
	}
	for b.Loop() {
		if _, err := Build(st, nil); err != nil {
			b.Fatal(err)
		}
	}
}

// A single station gets the cover and fit checks, without a chainage in
// the messages.
func TestSingleStation(t *testing.T) {
	st := []Station{{Key: "K1", Point: [3]float64{1, 2, -0.9}, Dir: [3]float64{0, 1, 0}, Current: 3, CurrentSigma: 0.01,
		Depth: 0.9, DepthSigma: 0.01, OK: true, Problem: "azimuth unidentifiable"}}
	r, err := Build(st, &Settings{MinCover: 0.75, SensorHeight: 0.3})
	if err != nil {
		t.Fatal(err)
	}
	if r.Length != 0 || len(r.Stations) != 1 || len(r.Findings) != 2 {
		t.Fatalf("length %g, %d stations, findings %+v", r.Length, len(r.Stations), r.Findings)
	}
	for _, f := range r.Findings {
		if strings.Contains(f.Message, "chainage") {
			t.Errorf("single-station message mentions chainage: %s", f.Message)
		}
	}
}

// Near the point where current leaves a conductor, each traverse fitted as
// an infinite line sees a semi-infinite one: at a distance d along the
// route from its end at depth h a point above it sees the fraction
// (1 + d/sqrt(d^2 + h^2))/2 of the current (Biot-Savart over a half line;
// the readings to the side of a traverse see less, which the effective
// length heff = 4 m below stands for). The fitted currents then change over
// several stations, as in the demo at T22-T25. The step must still be the
// full 9 A (42 A to 33 A, the Fenwick Lane demo's figures), within its
// sigma, and bracketed where most of the change happens.
func TestSmearedStepSizedFromPlateaus(t *testing.T) {
	const (
		before, after = 42.0, 33.0
		fault         = 112.5 // m
		heff          = 4.0   // m
		spacing       = 5.0
		n             = 31
		sigma         = 0.05
	)
	st := smearSt()
	r, err := Build(st, nil)
	if err != nil {
		t.Fatal(err)
	}
	steps := findings(r, KindCurrentStep)
	if len(steps) != 1 {
		t.Fatalf("%d steps, want 1: %+v", len(steps), r.Findings)
	}
	f := steps[0]
	if !(f.From < fault && fault < f.To) {
		t.Errorf("step bracketed at %g..%g m, want around %g m", f.From, f.To, fault)
	}
	if math.Abs(f.Position[0]-fault) > spacing/2+1e-9 {
		t.Errorf("step placed at %g m, want within half a spacing of %g m", f.Position[0], fault)
	}
	v := f.Values[0]
	if math.Abs(v.Value-(after-before)) > kStep*v.Sigma {
		t.Errorf("step %v, want %g within %d sigma", v, after-before, kStep)
	}
	if v.Sigma > 0.05*(before-after) {
		t.Errorf("step sigma %.3g A: the levels either side should pin the 9 A step within 5%%", v.Sigma)
	}
	// The shape of the transition places the fault within the bracket.
	located := false
	for _, w := range f.Values {
		if w.Name == "location (chainage)" {
			located = true
			if math.Abs(w.Value-fault) > kStep*w.Sigma {
				t.Errorf("location %v, want %g m within %d sigma", w, fault, kStep)
			}
		}
	}
	if !located {
		t.Errorf("the smeared step was not located within its bracket: %s", f.Message)
	}
	// The change between the bracketing stations alone understates it.
	for _, w := range f.Values {
		if w.Name == "change between bracketing stations" && math.Abs(w.Value) > 0.95*(before-after) {
			t.Errorf("bracketing stations differ by %v: the test does not smear the step", w)
		}
	}
}

func smearSt() []Station {
	const (
		before, after = 42.0, 33.0
		fault         = 112.5 // m
		heff          = 4.0   // m
		spacing       = 5.0
		n             = 31
		sigma         = 0.05
	)
	rng := rand.New(rand.NewPCG(21, 22))
	st := make([]Station, n)
	for i := range st {
		x := float64(i) * spacing
		d := fault - x // > 0 upstream: the station sees the full upstream current plus ...
		frac := (1 + d/math.Hypot(d, heff)) / 2
		cur := after + (before-after)*frac
		st[i] = Station{Key: key(i), Point: [3]float64{x, 0, -1.2}, Dir: [3]float64{1, 0, 0},
			Current: cur + sigma*rng.NormFloat64(), CurrentSigma: sigma, Depth: 1.2, DepthSigma: 0.01, OK: true}
	}
	return st
}

// A poor fit whose current departs from both neighbours (a traverse over a
// bend) is reported once, as a poor fit, not also as a current anomaly.
func TestPoorFitNotAlsoAnomaly(t *testing.T) {
	st := spur(12, 0, cpCount)
	st[9].Current += 0.8
	st[9].Chi2, st[9].DOF = 300, 50
	r, err := Build(st, nil)
	if err != nil {
		t.Fatal(err)
	}
	r.Findings = withoutAttenuation(r.Findings) // the spur's steady fall, reported as information (attenuation.go)
	if len(r.Findings) != 1 || r.Findings[0].Kind != KindPoorFit || r.Findings[0].Keys[0] != key(9) {
		t.Errorf("findings %+v, want one poor fit at %s", r.Findings, key(9))
	}
}

// With only the two stations that bracket it, a step's levels are the
// stations themselves: the difference, with the sigma of a difference.
func TestStepBetweenTwoStations(t *testing.T) {
	st := []Station{
		{Key: "A", Point: [3]float64{0, 0, -1}, Dir: [3]float64{1, 0, 0}, Current: 5, CurrentSigma: 0.05, Depth: 1, DepthSigma: 0.01, OK: true},
		{Key: "B", Point: [3]float64{20, 0, -1}, Dir: [3]float64{1, 0, 0}, Current: 4, CurrentSigma: 0.05, Depth: 1, DepthSigma: 0.01, OK: true},
	}
	r, err := Build(st, nil)
	if err != nil {
		t.Fatal(err)
	}
	if len(r.Findings) != 1 || r.Findings[0].Kind != KindCurrentStep {
		t.Fatalf("findings %+v, want one step", r.Findings)
	}
	v := r.Findings[0].Values[0]
	if math.Abs(v.Value+1) > 1e-9 || math.Abs(v.Sigma-math.Sqrt2*0.05) > 1e-9 {
		t.Errorf("step %v, want -1 ± %.4f A", v, math.Sqrt2*0.05)
	}
}

// TestStepSigmaCoverage checks that the step's sigma is honest: over many
// noisy realisations the true step lies within two reported sigmas about
// 95% of the time (normal coverage; allow down to 88% for 150 runs, about
// three binomial standard deviations), for a sharp step on the
// exponential decay and for a step smeared over several stations.
func TestStepSigmaCoverage(t *testing.T) {
	if testing.Short() {
		t.Skip("150 realisations of two routes")
	}
	const runs, minCover = 150, 0.88
	smeared := func(seed uint64) []Station {
		rng := rand.New(rand.NewPCG(seed, 99))
		st := make([]Station, 31)
		for i := range st {
			x := 5 * float64(i)
			d := 112.5 - x
			cur := 33 + 9*(1+d/math.Hypot(d, 3))/2
			st[i] = Station{Key: key(i), Point: [3]float64{x, 0, -1.2}, Dir: [3]float64{1, 0, 0},
				Current: cur + 0.05*rng.NormFloat64(), CurrentSigma: 0.05, Depth: 1.2, DepthSigma: 0.01, OK: true}
		}
		return st
	}
	cases := []struct {
		name  string
		route func(seed uint64) []Station
		want  float64
		at    float64 // chainage of the step, m
	}{
		{"sharp on decay", func(seed uint64) []Station { return spur(seed, 1.0, 17) }, -1.0, 17.5 * cpSpacing},
		{"smeared", smeared, -9.0, 112.5},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			in, n, other := 0, 0, 0
			for seed := uint64(100); seed < 100+runs; seed++ {
				r, err := Build(tc.route(seed), nil)
				if err != nil {
					t.Fatal(err)
				}
				for _, f := range r.Findings {
					if f.Kind != KindCurrentStep {
						continue
					}
					if !(f.From < tc.at && tc.at < f.To) {
						other++ // a false step elsewhere (TestNoFalseSteps bounds their rate)
						continue
					}
					n++
					if v := f.Values[0]; math.Abs(v.Value-tc.want) <= 2*v.Sigma {
						in++
					}
				}
			}
			frac := float64(in) / float64(runs)
			t.Logf("%d of %d runs within two sigma (%d other steps found)", in, runs, other)
			if n != runs {
				t.Errorf("the step was found %d times in %d runs, want once each", n, runs)
			}
			// 30 intervals per run at the 1% false-step limit of
			// TestNoFalseSteps.
			if other > runs*30/100 {
				t.Errorf("%d other steps in %d runs", other, runs)
			}
			if frac < minCover {
				t.Errorf("coverage %.2f, want >= %.2f", frac, minCover)
			}
		})
	}
}

// A poor fit at a traverse over a bend is explained by the turn between
// the sound stations either side, measured in plan from their fitted
// directions (positive to the left, looking along the route); a turn of a
// few degrees is not called a bend, and a neighbour fitted worse than both
// the limit and half the poor station's reduced chi-square is passed over.
func TestBendNamedAtPoorFit(t *testing.T) {
	tests := []struct {
		name       string
		turn       float64 // change of azimuth at T12, degrees clockwise (to the right)
		minor      bool    // misfit small against the signal: an information finding
		badT11     bool    // T11 fitted worse than half T12's reduced chi-square
		contains   string
		wantValue  float64 // the "turn" value, degrees to the left; 0 for none
		wantNoBend bool
	}{
		{"right turn", 35, false, false, "the conductor turns 35 degrees to the right between T11 and T13, which one straight line cannot follow", -35, false},
		{"left turn, minor misfit", -20, true, false, "only approximate here (the conductor turns 20 degrees to the left between T11 and T13)", 20, false},
		{"neighbour fitted badly", 35, false, true, "the conductor turns 35 degrees to the right between T10 and T13", -35, false},
		{"slight turn", 5, false, false, "", 0, true},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			st := make([]Station, cpCount)
			var pos [3]float64
			for i := range st {
				az := cpAzimuth
				switch {
				case i > 12:
					az += tc.turn
				case i == 12:
					az += tc.turn / 2
				}
				a := az * math.Pi / 180
				u := [3]float64{math.Sin(a), math.Cos(a), 0}
				if i > 0 {
					pos = [3]float64{pos[0] + cpSpacing*u[0], pos[1] + cpSpacing*u[1], -cpDepth}
				}
				st[i] = Station{Key: key(i), Point: pos, Dir: u, Current: cpI0, CurrentSigma: cpSigma,
					Depth: cpDepth, DepthSigma: 0.01, OK: true, Chi2: 50, DOF: 50}
			}
			st[12].Chi2, st[12].RMS, st[12].Signal = 5000, 50, 1000
			if tc.minor {
				st[12].RMS = 5
			}
			if tc.badT11 {
				st[11].Chi2 = 3000 // reduced 60, over half of T12's 100
			}
			r, err := Build(st, &Settings{MaxReducedChi2: 4})
			if err != nil {
				t.Fatal(err)
			}
			var f *Finding
			for k := range r.Findings {
				if r.Findings[k].Kind == KindPoorFit && r.Findings[k].Keys[0] == key(12) {
					f = &r.Findings[k]
				}
			}
			if f == nil {
				t.Fatalf("no poor-fit finding at T12: %+v", r.Findings)
			}
			if tc.wantNoBend {
				if strings.Contains(f.Message, "turns") {
					t.Errorf("a %g degree turn was called a bend: %s", tc.turn, f.Message)
				}
				return
			}
			if !strings.Contains(f.Message, tc.contains) {
				t.Errorf("message %q lacks %q", f.Message, tc.contains)
			}
			var got float64
			for _, v := range f.Values {
				if v.Name == "turn" {
					got = v.Value
				}
			}
			if math.Abs(got-tc.wantValue) > 1e-9 {
				t.Errorf("turn value %g, want %g", got, tc.wantValue)
			}
		})
	}
}

// TestSmallChangeNotAStep: a change of current beyond StepK sigma but under
// MinStep of the current (default 2%) is information (KindCurrentChange),
// not a step; with MinStep negative it is a step, and a change over the
// threshold is one by default. The 2% is this package's rule for the
// straight-line model's error near a change of depth or a bend (about 1%
// on the demo route's simulated traverses: a rule of its own, not a cited
// figure), checked here for what it does, not for its value.
func TestSmallChangeNotAStep(t *testing.T) {
	const after, level = 17, cpI0
	for _, tc := range []struct {
		name    string
		frac    float64 // of the current at the step
		minStep float64
		kind    Kind
	}{
		{"1% by default", 0.01, 0, KindCurrentChange},
		{"1% with every change a step", 0.01, -1, KindCurrentStep},
		{"1% under a 0.5% threshold", 0.01, 0.005, KindCurrentStep},
		{"4% by default", 0.04, 0, KindCurrentStep},
	} {
		t.Run(tc.name, func(t *testing.T) {
			// Fits good to 0.05% of a steady 10 A: a 1% change is 20
			// sigma. (A decaying current's curvature would itself pass
			// for steps against sigmas this small.)
			const sigma = 0.005
			step := tc.frac * level
			st := spurSigma(7, 0, after, sigma)
			rng := rand.New(rand.NewPCG(8, 1))
			for i := range st {
				st[i].Current = level + sigma*rng.NormFloat64()
				if i > after {
					st[i].Current -= step
				}
			}
			r, err := Build(st, &Settings{MinStep: tc.minStep})
			if err != nil {
				t.Fatal(err)
			}
			other := KindCurrentStep
			if tc.kind == KindCurrentStep {
				other = KindCurrentChange
			}
			got := findings(r, tc.kind)
			if len(got) != 1 || count(r, other) != 0 {
				for _, f := range r.Findings {
					t.Log(f.Kind, f.Message)
				}
				t.Fatalf("%d %s and %d %s findings, want 1 and 0", len(got), tc.kind, count(r, other), other)
			}
			f := got[0]
			if !near(f.From, float64(after)*cpSpacing) || !near(f.To, float64(after+1)*cpSpacing) {
				t.Errorf("bracketed at %g..%g m", f.From, f.To)
			}
			if v := f.Values[0]; v.Name != "step" || math.Abs(v.Value+step) > kStep*v.Sigma || v.Sigma > 3*math.Sqrt2*sigma {
				t.Errorf("step %v, want %.4g within %d sigma", v, -step, kStep)
			}
			if tc.kind == KindCurrentChange {
				if f.Severity != SeverityInfo || !strings.Contains(f.Message, "under the 2% taken as a step") || strings.Contains(f.Message, "leaving the conductor there") {
					t.Errorf("%s: %s", f.Severity, f.Message)
				}
			} else if f.Severity != SeverityWarning {
				t.Errorf("step severity %s", f.Severity)
			}
		})
	}
}

// withoutAttenuation drops the attenuation finding, which the spur's
// exponential fall gives every route here, for tests of the other kinds.
func withoutAttenuation(fs []Finding) []Finding {
	var out []Finding
	for _, f := range fs {
		if f.Kind != KindAttenuation {
			out = append(out, f)
		}
	}
	return out
}
