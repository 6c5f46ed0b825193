package live

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"regexp"
	"strconv"
	"testing"

	"undercurrent/ingest/ingesttest"
)

// operatorJargon matches the statistician's terms an operator should not
// have to read to act on an alarm (review rv18a, finding 6): they may
// stand in a closing parenthesis for a specialist, not as the lead
// words. "sigma" counts when used bare, not in "one-sigma" or a flag or
// field name such as sigma_scale.
var operatorJargon = regexp.MustCompile(`(?i:chi-square|chi2|χ²|criterion|autocorrelation|lag-1|degrees? of freedom|(?:^|[^-_\w])dof\b|(?:^|[^-_\w])sigmas?\b)|\bAIC\b|\bBIC\b`)

// TestAlarmMessagesPlainWords raises the alarms whose messages spoke of
// chi-square and sigmas as their lead words: a degraded window with the
// noise given and with noise = 0 (a flat bar the thin-line model misses,
// as in TestBusbarModelMisfitTold), a sensor knocked round and left out
// (TestKnockedSensorNamedAndLeftOut), and an AC window sent in microtesla
// as nanotesla (TestImplausibleACWindowInWrongUnit). Each message must say
// what was seen in plain words, keep the statistic in a parenthesis, and
// give the misfit as a factor that is the square root of the reduced
// chi-square the alarm carries as its value (the Birge ratio).
func TestAlarmMessagesPlainWords(t *testing.T) {
	check := func(what, msg string) {
		t.Helper()
		if m := operatorJargon.FindString(ingesttest.OutsideParentheses(msg)); m != "" {
			t.Errorf("%s: the message says %q outside parentheses:\n%s", what, m, msg)
		}
	}
	factor := regexp.MustCompile(`miss the held geometry by ([0-9.e+]+) times .*\(reduced chi-square ([0-9.e+]+) above`)

	for _, noise := range []string{"0", "0.5"} {
		_, alarms := barSolved(t, noise)
		al, ok := alarmFor(alarms, AlarmDegraded, "")
		if !ok {
			t.Fatalf("noise %s: no degraded alarm", noise)
		}
		check("degraded, noise "+noise, al.Message)
		m := factor.FindStringSubmatch(al.Message)
		if m == nil {
			t.Errorf("noise %s: the degraded alarm gives no misfit factor and reduced chi-square: %s", noise, al.Message)
			continue
		}
		// The factor is printed to 3 significant figures: 0.5% allows
		// for that rounding.
		f, err1 := strconv.ParseFloat(m[1], 64)
		red, err2 := strconv.ParseFloat(m[2], 64)
		if err1 != nil || err2 != nil {
			t.Fatalf("noise %s: %v, %v", noise, err1, err2)
		}
		if math.Abs(f-math.Sqrt(al.Value)) > 0.005*math.Sqrt(al.Value) || math.Abs(red-al.Value) > 0.005*al.Value {
			t.Errorf("noise %s: factor %v and reduced chi-square %v, want sqrt(%v) and %v", noise, f, red, al.Value, al.Value)
		}
	}

	earth := [3]float64{-150, 19200, -45100}
	a, p := kestrelProcessor(t, "0.5")
	w := synthWindow(a, []complex128{5}, earth, 1796279400, 10, 20, a.Noise, rand.New(rand.NewPCG(13, 9)))
	turnAboutX(w, 2, 10)
	_, alarms := p.solve(w, p.reduce(w))
	al, ok := alarmFor(alarms, AlarmInconsistent, "km-c")
	if !ok {
		t.Fatal("the sensor turned 10 degrees raised no inconsistent alarm")
	}
	check("inconsistent sensor", al.Message)
	if !regexp.MustCompile(`leaving it out removes [0-9]+% of the window's misfit \(chi-square from `).MatchString(al.Message) {
		t.Errorf("the inconsistent alarm does not say how much of the misfit the sensor holds: %s", al.Message)
	}

	site := harrowFen(t)
	ac := site.Asset("fenwick-lane")
	truth := []complex128{cmplx.Rect(200, 20*math.Pi/180), cmplx.Rect(180, -160*math.Pi/180)}
	wu := synthWindow(ac, truth, [3]float64{}, 1764650000, 500, 500, ac.Noise, rand.New(rand.NewPCG(8, 3)))
	e, got := solveScaled(ac, wu, 1000)
	if !got[checkChi2] || len(e.Implausible) == 0 {
		t.Fatalf("the window sent in microtesla as nanotesla raised no chi2 implausible alarm: %v", e.Implausible)
	}
	for _, msg := range e.Implausible {
		check("implausible", msg)
	}
}
