package route

import (
	"math"
	"slices"
	"strings"
	"testing"
)

// The numbers below are those of the demo scenario, testdata/demo/fenwick-lane.toml
// (an invented site, the Fenwick Lane 11 kV cable): sensors carried 0.3 m above the
// ground, the ground level known to 0.02 m, a steel drum buried 0.60 m below ground
// at T07, which the demo's fit placed 0.9065 ± 0.0028 m below the sensors; cover is
// depth below the sensors less their height (package documentation, "Cover").
const (
	demoSensor      = 0.3    // m above ground
	demoGroundSigma = 0.02   // m
	demoDrumDepth   = 0.9065 // m below the sensors, as fitted
	demoDrumSigma   = 0.0028 // m, the fit's sigma
)

// dipoleRoute builds a route on which T12 is taken for a magnetised object at the
// demo drum's fitted depth, and returns its dipole finding.
func dipoleRoute(t *testing.T, set *Settings) Finding {
	t.Helper()
	st := spur(3, 0, cpCount)
	st[12].Dipole = true
	st[12].Object = &Object{Point: [3]float64{1, 2, -demoDrumDepth + demoSensor}, Depth: demoDrumDepth, DepthSigma: demoDrumSigma,
		Moment: 1.2, MomentSigma: 0.01, Distance: 4.1, Evidence: 3601}
	r, err := Build(st, set)
	if err != nil {
		t.Fatal(err)
	}
	d := findings(r, KindDipole)
	if len(d) != 1 {
		t.Fatalf("%d dipole findings, want 1", len(d))
	}
	return d[0]
}

// valueNamed returns f's value called name, and whether there is one.
func valueNamed(f Finding, name string) (Value, bool) {
	for _, v := range f.Values {
		if v.Name == name {
			return v, true
		}
	}
	return Value{}, false
}

// TestDipoleDepthBelowGround: a magnetised object's depth is given below ground
// when the ground is known, with the ground sigma in quadrature (JCGM 100:2008,
// GUM section 5.1), and named as below the sensors otherwise. The demo reported
// the drum "0.9065 ± 0.0028 m deep" with the sensors 0.3 m up: a crew would have
// dug for it 0.3 m too deep.
func TestDipoleDepthBelowGround(t *testing.T) {
	cover := demoDrumDepth - demoSensor
	coverSigma := math.Hypot(demoDrumSigma, demoGroundSigma)
	tests := []struct {
		name      string
		set       *Settings
		text      string
		ground    float64 // depth below ground, NaN when not given
		sensors   float64 // depth below sensors, NaN when not given
		sigmaBelo float64 // sigma of the depth below ground
	}{
		{"sensor height", &Settings{SensorHeight: demoSensor, GroundSigma: demoGroundSigma},
			"0.607 ± 0.020 m below ground", cover, demoDrumDepth, coverSigma},
		{"depths below ground", &Settings{DepthsBelowGround: true, GroundSigma: demoGroundSigma},
			"0.906 ± 0.020 m below ground", demoDrumDepth, math.NaN(), coverSigma},
		// Checking cover against a minimum with no sensor height takes the
		// depths to be below ground already (the cover check's own rule).
		{"minimum cover", &Settings{MinCover: 0.6},
			"0.9065 ± 0.0028 m below ground", demoDrumDepth, math.NaN(), demoDrumSigma},
		{"ground not given", nil,
			"0.9065 ± 0.0028 m below the sensors (ground level not given)", math.NaN(), demoDrumDepth, 0},
		{"ground not given, settings", &Settings{StepK: 3},
			"0.9065 ± 0.0028 m below the sensors (ground level not given)", math.NaN(), demoDrumDepth, 0},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			f := dipoleRoute(t, tc.set)
			if !strings.Contains(f.Message, tc.text) {
				t.Errorf("message %q lacks %q", f.Message, tc.text)
			}
			if strings.Contains(f.Message, " deep") {
				t.Errorf("message %q says \"deep\" without saying below what", f.Message)
			}
			if _, ok := valueNamed(f, "depth"); ok {
				t.Errorf("values %v hold a bare \"depth\"", f.Values)
			}
			g, ok := valueNamed(f, "depth below ground")
			if ok != !math.IsNaN(tc.ground) || ok && (math.Abs(g.Value-tc.ground) > 1e-12 || math.Abs(g.Sigma-tc.sigmaBelo) > 1e-12) {
				t.Errorf("depth below ground %v (given %v), want %.4g ± %.2g", g, ok, tc.ground, tc.sigmaBelo)
			}
			s, ok := valueNamed(f, "depth below sensors")
			if ok != !math.IsNaN(tc.sensors) || ok && (s.Value != tc.sensors || s.Sigma != demoDrumSigma) {
				t.Errorf("depth below sensors %v (given %v), want %.4g", s, ok, tc.sensors)
			}
			if !strings.Contains(f.Message, "magnetised object") || !strings.Contains(f.Message, "4.1 m from the conductor") {
				t.Errorf("message %q does not describe the object", f.Message)
			}
		})
	}
}

// TestCoverFindingReads: a run of shallow stations is one plain statement: the
// minimum and its code, where, then the shallowest station and its cover. The
// demo's "... shallowest at T13 is shallower than the 0.60 m minimum of UK 11 kV
// distribution practice, 600-700 mm" ran the two together. The minimum and the
// code's range are those of the package documentation (UK distribution practice
// 600-700 mm for 11 kV).
func TestCoverFindingReads(t *testing.T) {
	st := spur(5, 0, cpCount)
	for i := range st {
		st[i].Depth, st[i].DepthSigma = 1.2, 0.002
	}
	for _, i := range []int{13, 14, 15} {
		st[i].Depth = 0.75
	}
	st[13].Depth = 0.70 // cover 0.40 m
	st[22].Depth = 0.85 // cover 0.55 m, alone
	set := &Settings{MinCover: 0.6, CoverCode: "UK 11 kV distribution practice, 600-700 mm", SensorHeight: demoSensor, GroundSigma: demoGroundSigma}
	r, err := Build(st, set)
	if err != nil {
		t.Fatal(err)
	}
	c := findings(r, KindShallowCover)
	if len(c) != 2 {
		t.Fatalf("%d cover findings, want 2", len(c))
	}
	want := []string{
		"cover is less than the 0.60 m minimum (UK 11 kV distribution practice, 600-700 mm) from T13 (chainage 260.0 m) to T15 (300.0 m); shallowest at T13 (chainage 260.0 m): 0.400 ± 0.020 m; the shallow stretch may reach back to T12 (chainage 240.0 m) and on to T16 (chainage 320.0 m), the nearest stations either side with enough cover",
		"cover at T22 (chainage 440.0 m) is 0.550 ± 0.020 m: it is less than the 0.60 m minimum (UK 11 kV distribution practice, 600-700 mm); the shallow stretch may reach back to T21 (chainage 420.0 m) and on to T23 (chainage 460.0 m), the nearest stations either side with enough cover",
	}
	for i, f := range c {
		if f.Message != want[i] {
			t.Errorf("message\n%q, want\n%q", f.Message, want[i])
		}
	}
	// A possible shortfall says so; with no code named the message says that.
	st[22].Depth = 0.3 + 0.63
	r, err = Build(st, &Settings{MinCover: 0.6, SensorHeight: demoSensor, GroundSigma: demoGroundSigma})
	if err != nil {
		t.Fatal(err)
	}
	c = findings(r, KindShallowCover)
	if len(c) != 2 || !strings.Contains(c[1].Message, "it may be less than the 0.60 m minimum (no code named); ") {
		t.Errorf("possible shortfall: %+v", c)
	}
}

// TestPoorFitSaysEachThingOnce: a failed fit's message names the failure once (the
// demo showed "the fit failed; the fit failed: inverse: ..."), and a poor fit's
// chi-square is not in parentheses within parentheses.
func TestPoorFitSaysEachThingOnce(t *testing.T) {
	tests := []struct {
		name string
		edit func(s *Station)
		want string
	}{
		{"failed with error", func(s *Station) { s.OK = false; s.Problem = "the fit failed: inverse: 40 readings for 46 parameters" },
			"fit at T12 (chainage 240.0 m) failed: inverse: 40 readings for 46 parameters; it is left out of the current and cover profile"},
		{"did not converge", func(s *Station) { s.OK = false; s.Problem = "the fit did not converge (ran out of iterations)" },
			"fit at T12 (chainage 240.0 m) did not converge (ran out of iterations); it is left out of the current and cover profile"},
		{"failed, no reason", func(s *Station) { s.OK = false },
			"fit at T12 (chainage 240.0 m) failed; it is left out of the current and cover profile"},
		{"failed, other reason", func(s *Station) { s.OK = false; s.Problem = "no conductor was fitted" },
			"fit at T12 (chainage 240.0 m) failed: no conductor was fitted; it is left out of the current and cover profile"},
		{"ambiguous", func(s *Station) { s.Problem = "2 and 3 conductors fit about as well (BIC within 2)" },
			"fit at T12 (chainage 240.0 m) is poor or ambiguous: 2 and 3 conductors fit about as well (BIC within 2); its estimates are used with care"},
		{"chi-square", func(s *Station) { s.Chi2, s.DOF = 500, 50 },
			"fit at T12 (chainage 240.0 m) is poor: the readings miss the fitted conductors by 3.16 times the noise, more than the 2 times allowed, so the model or the noise level does not match the readings (reduced chi-square 10, limit 4); its estimates are used with care"},
		{"failed and chi-square", func(s *Station) { s.OK = false; s.Problem = "the fit failed: stalled"; s.Chi2, s.DOF = 500, 50 },
			"fit at T12 (chainage 240.0 m) failed: stalled; the readings miss the fitted conductors by 3.16 times the noise, more than the 2 times allowed, so the model or the noise level does not match the readings (reduced chi-square 10, limit 4); it is left out of the current and cover profile"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			st := spur(9, 0, cpCount)
			tc.edit(&st[12])
			r, err := Build(st, nil)
			if err != nil {
				t.Fatal(err)
			}
			p := findings(r, KindPoorFit)
			if len(p) != 1 {
				t.Fatalf("%d poor-fit findings, want 1", len(p))
			}
			if p[0].Message != tc.want {
				t.Errorf("message\n%q, want\n%q", p[0].Message, tc.want)
			}
			if n := strings.Count(p[0].Message, "fail"); n > 1 {
				t.Errorf("message %q says \"fail\" %d times", p[0].Message, n)
			}
			// The reasons reach the report's group apart from the sentence:
			// each is in the message, and there is one per cause.
			causes := 0
			if st[12].Problem != "" || !st[12].OK {
				causes++
			}
			if st[12].DOF > 0 {
				causes++
			}
			if len(p[0].Reasons) != causes {
				t.Errorf("reasons %q, want %d", p[0].Reasons, causes)
			}
			for _, why := range p[0].Reasons {
				if why != "the fit failed" && !strings.Contains(p[0].Message, strings.TrimPrefix(why, "the fit ")) {
					t.Errorf("reason %q is not in the message %q", why, p[0].Message)
				}
			}
		})
	}
}

// demoStations are stations over the demo's main conductor (testdata/demo/
// fenwick-lane.toml: 42 A; 0.95 m below ground before it rises between chainage
// 52 m and 58 m), 1.25 m below sensors carried 0.3 m up; T13 carries exactly 42 A.
func demoStations() []Station {
	st := spur(11, 0, cpCount)
	for i := range st {
		st[i].Current, st[i].CurrentSigma = 42+0.02*float64(i%3-1), 0.025 // 42 A at T13
		st[i].Depth, st[i].DepthSigma = 1.25, 0.0007
	}
	return st
}

// demoPhantom is the third source the demo's fit placed at T13 (1.02 ± 0.009 A,
// 2.4% of the main conductor, dipping 70.7 degrees, 0.67 m below the sensors), which
// the scenario does not have.
func demoPhantom(p [3]float64) Line {
	dip := 70.7 * math.Pi / 180
	return Line{Point: [3]float64{p[0] + 0.2, p[1] - 0.1, -0.37}, Dir: [3]float64{math.Cos(dip) * 0.6, math.Cos(dip) * 0.8, math.Sin(dip)},
		Current: -1.02, CurrentSigma: 0.009, Depth: 0.67, DepthSigma: 0.002}
}

// TestWeakSteepSourceReported: a further source far weaker than the conductor and
// steep is reported, cautiously both ways: it may absorb the conductor's change of
// depth (the demo's phantom, see demoPhantom), and if it is real it is shallow. A
// strong parallel conductor (the demo's 15 A LV feeder, level), a weak level one, and
// sources at a station that is not used are not reported.
func TestWeakSteepSourceReported(t *testing.T) {
	demoSet := &Settings{MinCover: 0.6, CoverCode: "UK 11 kV distribution practice, 600-700 mm", SensorHeight: demoSensor, GroundSigma: demoGroundSigma}
	lv := func(p [3]float64) Line {
		return Line{Point: [3]float64{p[0] - 2.6, p[1], -1.0}, Dir: [3]float64{0.6, 0.8, 0}, Current: 15, CurrentSigma: 0.03, Depth: 1.0, DepthSigma: 0.002}
	}
	tests := []struct {
		name     string
		set      *Settings
		edit     func(s *Station)
		severity Severity // "" for no finding
		contains []string
	}{
		{"demo phantom", demoSet, func(s *Station) { s.Further = []Line{lv(s.Point), demoPhantom(s.Point)} }, SeverityCaution, []string{
			"the fit at T13 (chainage 260.0 m) has a further line source of 1.0200 ± 0.0090 A (2.4% of the conductor's 42 A) dipping 71 degrees, 0.370 ± 0.020 m below ground",
			"may absorb a bend or a change of depth of the conductor rather than mark another conductor",
			"its cover is not checked against the 0.60 m minimum",
			"if it is a real conductor it may lie shallower than that minimum: confirm before digging here"}},
		{"deep phantom", demoSet, func(s *Station) { l := demoPhantom(s.Point); l.Depth = 1.9; s.Further = []Line{l} }, SeverityInfo, []string{
			"1.600 ± 0.020 m below ground", "its cover is not checked against the 0.60 m minimum"}},
		{"no minimum, ground not given", nil, func(s *Station) { s.Further = []Line{demoPhantom(s.Point)} }, SeverityInfo, []string{
			"0.6700 ± 0.0020 m below the sensors (ground level not given)", "if it is a real conductor, it lies at the depth given"}},
		{"strong parallel conductor", demoSet, func(s *Station) { s.Further = []Line{lv(s.Point)} }, "", nil},
		{"strong steep", demoSet, func(s *Station) { l := demoPhantom(s.Point); l.Current = 11; s.Further = []Line{l} }, "", nil},
		// The demo's T16 (found in review): a fifth of the cable's current,
		// 3.4 m down, dipping 58 degrees, absorbing its change of depth.
		{"a fifth, deep and steep", demoSet, func(s *Station) {
			l := demoPhantom(s.Point)
			l.Current, l.Depth, l.Dir = 8.5, 3.7, [3]float64{0.31, 0.42, -0.85}
			s.Further = []Line{l}
		}, SeverityInfo, []string{"(20% of the conductor's 42 A) dipping 58 degrees", "3.400 ± 0.020 m below ground"}},
		{"weak level", demoSet, func(s *Station) { l := demoPhantom(s.Point); l.Dir = [3]float64{0.6, 0.8, 0.16}; s.Further = []Line{l} }, "", nil},
		{"station not used", demoSet, func(s *Station) { s.OK = false; s.Further = []Line{demoPhantom(s.Point)} }, "", nil},
		{"station a dipole", demoSet, func(s *Station) { s.Dipole = true; s.Further = []Line{demoPhantom(s.Point)} }, "", nil},
		{"not finite", demoSet, func(s *Station) { l := demoPhantom(s.Point); l.Depth = math.NaN(); s.Further = []Line{l} }, "", nil},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			st := demoStations()
			tc.edit(&st[13])
			r, err := Build(st, tc.set)
			if err != nil {
				t.Fatal(err)
			}
			w := findings(r, KindWeakSource)
			if tc.severity == "" {
				if len(w) != 0 {
					t.Fatalf("weak-source findings %+v, want none", w)
				}
				return
			}
			if len(w) != 1 {
				t.Fatalf("%d weak-source findings, want 1", len(w))
			}
			f := w[0]
			if f.Severity != tc.severity || f.Keys[0] != "T13" || !near(f.From, 13*cpSpacing) {
				t.Errorf("finding %s for %v at %g m, want %s for T13 at 260 m", f.Severity, f.Keys, f.From, tc.severity)
			}
			for _, s := range tc.contains {
				if !strings.Contains(f.Message, s) {
					t.Errorf("message %q lacks %q", f.Message, s)
				}
			}
			l := st[13].Further[len(st[13].Further)-1] // the steep one
			wantDip := math.Atan2(math.Abs(l.Dir[2]), math.Hypot(l.Dir[0], l.Dir[1])) * 180 / math.Pi
			if v, ok := valueNamed(f, "dip"); !ok || math.Abs(v.Value-wantDip) > 1e-9 {
				t.Errorf("dip %v, want %.3g deg", v, wantDip)
			}
			if v, ok := valueNamed(f, "share of the conductor's current"); !ok || math.Abs(v.Value-100*math.Abs(l.Current)/42) > 1e-9 {
				t.Errorf("share %v, want %.3g%%", v, 100*math.Abs(l.Current)/42)
			}
			// The source enters neither the steps nor the cover check.
			if n := count(r, KindShallowCover) + count(r, KindCurrentStep) + count(r, KindCurrentAnomaly); n != 0 {
				t.Errorf("%d step, anomaly or cover findings from a further source", n)
			}
		})
	}
}

// TestWeakSteepThresholds: a source at exactly the share or the dip limit is not
// reported, one just inside both is; the limits are furtherWeak of the conductor's
// current and furtherSteep degrees.
func TestWeakSteepThresholds(t *testing.T) {
	at := func(share, dipDeg float64) int {
		st := demoStations()
		d := dipDeg * math.Pi / 180
		main := math.Abs(st[13].Current)
		st[13].Further = []Line{{Dir: [3]float64{math.Cos(d), 0, -math.Sin(d)}, Current: share * main, CurrentSigma: 0.01, Depth: 0.5, DepthSigma: 0.01}}
		r, err := Build(st, nil)
		if err != nil {
			t.Fatal(err)
		}
		return count(r, KindWeakSource)
	}
	for _, tc := range []struct {
		share, dip float64
		want       int
	}{
		{furtherWeak * 0.999, furtherSteep + 0.01, 1},
		{furtherWeak * 1.001, furtherSteep + 0.01, 0},
		{furtherWeak * 0.999, furtherSteep - 0.01, 0},
		{0.001, 90, 1},
	} {
		if got := at(tc.share, tc.dip); got != tc.want {
			t.Errorf("share %.4g, dip %.4g deg: %d findings, want %d", tc.share, tc.dip, got, tc.want)
		}
	}
}

// TestStepSaysBetweenOnce: a step's message names its bracket once ("between T03
// and T04: current leaving the conductor there", not "... between them"), falling
// or rising. The step is the Kestrel Moor spur's (spur) with 1 A lost or gained.
// A fall names a branch (a tee or a bond) beside a loss to earth, as a rise
// names one beside a source: before, a fall named none, and a fall at a tee
// read as a coating defect to dig for (review rv27b).
func TestStepSaysBetweenOnce(t *testing.T) {
	for _, tc := range []struct {
		step float64
		want string
	}{
		{1, ": current leaving the conductor there (to earth at a coating defect, a leak or a fault, or along a branch: a tee or a bond), "},
		{-1, ": current joining the conductor there (a bond, a tee or another source), "},
	} {
		r, err := Build(spur(1, tc.step, 15), nil)
		if err != nil {
			t.Fatal(err)
		}
		s := findings(r, KindCurrentStep)
		if len(s) != 1 {
			t.Fatalf("step %g A: %d steps, want 1", tc.step, len(s))
		}
		m := s[0].Message
		head, _, _ := strings.Cut(m, ";")
		if !strings.Contains(m, tc.want) || strings.Count(head, "between") != 1 {
			t.Errorf("step %g A: message %q, want one \"between\" before %q", tc.step, m, tc.want)
		}
	}
}

// TestStepReadAlongTheFlow: whether DC current leaves or joins at a step
// follows from the way it flows (Kirchhoff's current law: what flows past
// the step downstream is what flowed past upstream, less what left), not
// from the order the traverses were walked. The leak of spur, walked from
// the far end, is still current leaving; the same levels with the current
// flowing the other way are current joining. AC magnitudes say which end
// they are read from.
func TestStepReadAlongTheFlow(t *testing.T) {
	message := func(st []Station) string {
		t.Helper()
		r, err := Build(st, nil)
		if err != nil {
			t.Fatal(err)
		}
		s := findings(r, KindCurrentStep)
		if len(s) != 1 {
			t.Fatalf("%d steps, want 1", len(s))
		}
		return s[0].Message
	}
	leaving, joining := "current leaving the conductor there", "current joining the conductor there"
	walked := spur(1, 1, 15)
	if m := message(walked); !strings.Contains(m, leaving) || strings.Contains(m, "direction the current flows") {
		t.Errorf("the leak walked along the flow: %q", m)
	}
	back := slices.Clone(walked)
	slices.Reverse(back)
	if m := message(back); !strings.Contains(m, leaving) || !strings.Contains(m, "in the direction the current flows (toward decreasing chainage)") {
		t.Errorf("the leak walked from the far end: %q", m)
	}
	against := slices.Clone(walked)
	for i := range against {
		against[i].Current = -against[i].Current
	}
	if m := message(against); !strings.Contains(m, joining) {
		t.Errorf("the same levels flowing toward decreasing chainage: %q", m)
	}
	ac := slices.Clone(walked)
	for i := range ac {
		ac[i].AC = true
	}
	if m := message(ac); !strings.Contains(m, leaving) || !strings.Contains(m, "if it is fed from the start of the route") {
		t.Errorf("AC: %q", m)
	}
}

// TestStepMayBeInTime: a route walked once reads a change of the supply's
// current between the walks of two traverses (a tram's current, a
// switched rectifier) as it reads current leaving or joining between
// them, so a current step's message says it may be either, DC and AC;
// a pair's net current, which a change of supply moves in proportion, is
// worded as before. Fails before the change (found in review: a step in
// time read as "a bond, a tee or another source").
func TestStepMayBeInTime(t *testing.T) {
	for _, tc := range []struct {
		name string
		ac   bool
		step float64
	}{{"DC loss", false, 1}, {"DC gain", false, -1}, {"AC loss", true, 1}} {
		st := spur(1, tc.step, 15)
		for i := range st {
			st[i].AC = tc.ac
		}
		r, err := Build(st, nil)
		if err != nil {
			t.Fatal(err)
		}
		s := findings(r, KindCurrentStep)
		if len(s) != 1 {
			t.Fatalf("%s: %d steps, want 1", tc.name, len(s))
		}
		if !strings.Contains(s[0].Message, stepInTime) {
			t.Errorf("%s: %q does not say the current may have changed in time", tc.name, s[0].Message)
		}
	}
}
