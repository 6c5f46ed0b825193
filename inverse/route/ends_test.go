package route

import (
	"math"
	"strconv"
	"strings"
	"testing"
)

// segEnd is the fixture of the stations locate fed to Build for the
// invented Corran Leys bond cable: 10 A DC, 0.8 m below ground (1.1 m below
// the sensors) along east, ending at east 30 m in a 6 m vertical earth rod;
// traverses every 4 m from east 6 m (T01) to 54 m (T13). Past the end (T08
// at 34 m on) there is no conductor: T08-T10 fit lines 3-12 m deep of
// 3.6-5.0 A, T11-T13 find no current.
func segEnd() []Station {
	return []Station{
		{Key: "T01", Point: [3]float64{5.998385462814159, -0.00017915976007530564, -0.7965327646892044}, Dir: [3]float64{0.9999989097519544, -0.0001121853573313797, -0.001472382201867283}, Current: 9.95493158034263, CurrentSigma: 0.004657322705270417, Depth: 1.0965327646892045, DepthSigma: 0.0005933204094842516, RMS: 2.287390824352075, Chi2: 297.0707093485268, DOF: 355, OK: true},
		{Key: "T02", Point: [3]float64{9.996410474150338, 0.0003025843205089082, -0.7937996383409792}, Dir: [3]float64{0.9999946116333656, -8.420836822016004e-05, -0.003281708881853875}, Current: 9.925628326576733, CurrentSigma: 0.005079358640358577, Depth: 1.0937996383409794, DepthSigma: 0.0006476963387386801, RMS: 2.5004871931961885, Chi2: 355.0, DOF: 355, OK: true},
		{Key: "T03", Point: [3]float64{13.994042965738071, 0.0001346591104888898, -0.7900987353628375}, Dir: [3]float64{0.9999847201099654, -0.0008346675560601395, -0.005464693647873062}, Current: 9.88463519163523, CurrentSigma: 0.0070109134320262, Depth: 1.0900987353628375, DepthSigma: 0.0008952650549406788, RMS: 3.4622689665356843, Chi2: 680.613705188025, DOF: 355, OK: true},
		{Key: "T04", Point: [3]float64{17.98890102997553, -0.0002701246593004321, -0.7829339786106085}, Dir: [3]float64{0.9999474075595014, -0.0003918553620482332, -0.010248344471555119}, Current: 9.794654711653148, CurrentSigma: 0.010491328641393238, Depth: 1.0829339786106087, DepthSigma: 0.0013448599046407752, RMS: 5.212779129607611, Chi2: 1542.8287800913533, DOF: 355, OK: true},
		{Key: "T05", Point: [3]float64{21.984068668895482, -0.21022691527872622, -0.705803567564912}, Dir: [3]float64{0.9924494376461639, 0.11596332006499964, -0.039957754132527716}, Current: 4.7613664170936545, CurrentSigma: 1.0279848463756736, Depth: 1.0058035675649122, DepthSigma: 0.016528440786740185, RMS: 7.459573504476198, Chi2: 3159.4179366171907, DOF: 350, OK: true},
		{Key: "T06", Point: [3]float64{25.905330377731346, -0.0005377165606486387, -0.7081895598457257}, Dir: [3]float64{0.9956202759250347, 4.208537301352276e-05, -0.0934893811926228}, Current: 8.74295309203307, CurrentSigma: 0.04416383820426972, Depth: 1.0081895598457258, DepthSigma: 0.0059907576987305936, RMS: 23.335394806629434, Chi2: 30917.857414382714, DOF: 355, OK: true},
		{Key: "T07", Point: [3]float64{29.40083932414378, -0.000485764045163657, -0.6929352370294636}, Dir: [3]float64{0.8561969539250088, 3.0407624854075087e-05, -0.5166495670809302}, Current: 5.70258638022144, CurrentSigma: 0.04217761243374696, Depth: 0.9929352370294637, DepthSigma: 0.009004860760790536, RMS: 19.64329936145972, Chi2: 21908.263439337043, DOF: 355, OK: true},
		{Key: "T08", Point: [3]float64{30.822785211461234, -0.0055622968701266595, -2.721592967799955}, Dir: [3]float64{0.6891270059233051, -0.0070480183458985065, -0.7246063035501258}, Current: 4.479157512926303, CurrentSigma: 0.04811867358789356, Depth: 3.0215929677999553, DepthSigma: 0.02669351979752914, RMS: 3.3695726289357912, Chi2: 644.6570365550907, DOF: 355, OK: true},
		{Key: "T09", Point: [3]float64{32.5851614980862, 0.026587503649253916, -5.4771525966811705}, Dir: [3]float64{0.7295863974035994, -0.006318059547129432, -0.6838594671766971}, Current: 3.5508160816602956, CurrentSigma: 0.10848946160546546, Depth: 5.77715259668117, DepthSigma: 0.11122927650706736, RMS: 1.9688555882448573, Chi2: 220.09329347157725, DOF: 355, OK: true},
		{Key: "T10", Point: [3]float64{32.72582621145431, -0.05431320607206311, -11.747164091830053}, Dir: [3]float64{0.7922882437824923, 0.014079375857174337, -0.6099845161473582}, Current: 5.0019875078343325, CurrentSigma: 0.5908905190121773, Depth: 12.047164091830053, DepthSigma: 0.7657978207450905, RMS: 1.834759818964715, Chi2: 191.13381356519622, DOF: 355, OK: true},
		{Key: "T11", Point: [3]float64{46.0, 1.6148698540002277e-16, 0.3000000000000001}, Dir: [3]float64{0.999995057085543, 0.0031441699192899025, 0.0}, Current: 5.062245172755081, CurrentSigma: 1.7123158829512877, Depth: 17.794240647935165, DepthSigma: 3.127663688862073, RMS: 2.0298640576066886, Chi2: 233.94458179481873, DOF: 355, OK: false, Problem: "no current found: the strongest line's current, 5.1 \u00b1 1.7 A, is within 3 sigma of zero (no conductor under this group, or too weak a signal), so its position and depth mean nothing"},
		{Key: "T12", Point: [3]float64{50.0, -1.6148698540002277e-16, 0.3000000000000001}, Dir: [3]float64{1.0, 0.0, 0.0}, Current: 14.089602016970158, CurrentSigma: 17.88756961506266, Depth: 36.06468675274347, DepthSigma: 0.0, RMS: 1.9184994254025594, Chi2: 208.9788961578196, DOF: 355, OK: false, Problem: "no current found: the strongest line's current, 14 \u00b1 18 A, is within 3 sigma of zero (no conductor under this group, or too weak a signal), so its position and depth mean nothing"},
		{Key: "T13", Point: [3]float64{54.0, 1.6148698540002277e-16, 0.3000000000000001}, Dir: [3]float64{1.0, 8.074349270001139e-17, 0.0}, Current: 4.240595322926494, CurrentSigma: 5.948416337373529, Depth: 24.570467899795673, DepthSigma: 0.0, RMS: 1.9464214433910225, Chi2: 215.10615874986536, DOF: 355, OK: false, Problem: "no current found: the strongest line's current, 4.2 \u00b1 5.9 A, is within 3 sigma of zero (no conductor under this group, or too weak a signal), so its position and depth mean nothing"},
	}
}

// segEast is the east of traverse key ("T07" -> 30 m).
func segEast(t *testing.T, key string) float64 {
	k, err := strconv.Atoi(strings.TrimPrefix(key, "T"))
	if err != nil {
		t.Fatal(err)
	}
	return 6 + 4*float64(k-1)
}

// TestConductorEnds: beyond the end of a half-line a traverse sees
// only the field of its end (Biot-Savart over the half-line: the fraction
// (1 - d/sqrt(d^2 + h^2))/2 of the full line's field at d past the end),
// which one straight line fits as a deeper, weaker conductor. The 10 A
// leave the cable at east 30 m, between T07 (30 m) and T08 (34 m); the
// traverses past it have no conductor under them and must not enter the
// profile as its continuation.
func TestConductorEnds(t *testing.T) {
	r, err := Build(segEnd(), &Settings{SensorHeight: 0.3})
	if err != nil {
		t.Fatal(err)
	}
	var ends []Finding
	for _, f := range findings(r, KindCurrentStep) {
		if strings.Contains(f.Message, "appears to end") {
			ends = append(ends, f)
		}
	}
	if len(ends) != 1 {
		t.Fatalf("%d findings that the conductor ends, want 1: %v", len(ends), r.Findings)
	}
	f := ends[0]
	if a, b := segEast(t, f.Keys[0]), segEast(t, f.Keys[1]); a > 30 || b < 30 {
		t.Errorf("end bracketed by %s (east %.0f m) and %s (%.0f m), want it to hold east 30 m: %s", f.Keys[0], a, f.Keys[1], b, f.Message)
	}
	if f.Severity != SeverityWarning {
		t.Errorf("severity %s, want warning (10 A leave the conductor)", f.Severity)
	}
	if v, _ := valueNamed(f, "current before"); math.Abs(v.Value-10) > 0.02*10 {
		t.Errorf("current before %.4g A, want the cable's 10 A within 2%%", v.Value)
	}
	for _, p := range r.Stations {
		if segEast(t, p.Key) > 30 && p.usable() {
			t.Errorf("%s (east %.0f m, past the end) used in the profile: %.3g A at %.3g m", p.Key, segEast(t, p.Key), p.Current, p.Depth)
		}
	}
}

// TestDiveOrLossIsNoEnd: a conductor that dives keeps its current
// (Kirchhoff's current law: nothing leaves a conductor that only changes
// depth), and one that loses current at a fault keeps its depth; neither
// ends. Invented stations: 10 A at 1.1 m diving to 4.5 m over the last
// four of twelve stations; and 10 A falling to 5 A at a fault halfway.
func TestDiveOrLossIsNoEnd(t *testing.T) {
	mk := func(depth func(i int) float64, cur func(i int) float64) []Station {
		st := make([]Station, 12)
		for i := range st {
			st[i] = Station{Key: key(i + 1), Point: [3]float64{4 * float64(i), 0, -depth(i)}, Dir: [3]float64{1, 0, 0},
				Current: cur(i), CurrentSigma: 0.01, Depth: depth(i), DepthSigma: 0.01, OK: true}
		}
		return st
	}
	dive := mk(func(i int) float64 { return 1.1 + math.Max(0, float64(i-7))*0.85 }, func(int) float64 { return 10 })
	loss := mk(func(int) float64 { return 1.1 }, func(i int) float64 {
		if i >= 6 {
			return 5
		}
		return 10
	})
	for name, st := range map[string][]Station{"dive": dive, "loss": loss} {
		r, err := Build(st, nil)
		if err != nil {
			t.Fatal(err)
		}
		for _, f := range r.Findings {
			if strings.Contains(f.Message, "appears to end") {
				t.Errorf("%s: %s", name, f.Message)
			}
		}
		if n := len(usable(r.Stations)); n != len(st) {
			t.Errorf("%s: %d of %d stations used", name, n, len(st))
		}
	}
}
