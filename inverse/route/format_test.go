package route

import (
	"math/rand/v2"
	"regexp"
	"strings"
	"testing"
)

// TestPlusMinus checks the house way of writing a value and its sigma: the
// sigma to two significant digits and the value to the same decimal place,
// as JCGM 100:2008 (GUM) section 7.2.6 asks ("it usually suffices to quote
// the uncertainty to at most two significant digits") and section 7.2.2
// and NIST TN 1297 section 7 show with their example mass, 100.02147 g with
// a standard uncertainty of 0.35 mg, written (100.02147 ± 0.00035) g.
func TestPlusMinus(t *testing.T) {
	for _, tc := range []struct {
		v, s float64
		want string
	}{
		{100.02147, 0.00035, "100.02147 ± 0.00035"},
		// The reviewed demo: the step location and the largest part.
		{111.9412, 0.7301, "111.94 ± 0.73"},
		{5.6871, 0.0862, "5.687 ± 0.086"},
		// A milliampere current (cathodic protection) to a microampere
		// sigma, and the Kestrel Moor trend, A/m.
		{0.0200412, 0.0000031, "0.0200412 ± 0.0000031"},
		{-0.000332, 0.0000133, "-0.000332 ± 0.000013"},
		// Sigmas of ten and more: no decimals, and no padding to two.
		{112.4, 12.3, "112 ± 12"},
		{0.403, 0.0200, "0.403 ± 0.020"},
		// Rounding carries the sigma to the next power of ten: two
		// significant digits there (0.10), not three (0.100).
		{2.3456, 0.0996, "2.35 ± 0.10"},
		{2.3456, 0.996, "2.3 ± 1.0"},
		// No negative zero.
		{-0.00004, 0.0021, "0.0000 ± 0.0021"},
		// Below 1e-9 of the unit the sigma takes an exponent, but is shown.
		{1.16953, 1.2e-12, "1.169530000 ± 1.2e-12"},
		// No sigma: the value alone.
		{5.5, 0, "5.5"},
	} {
		if got := PlusMinus(tc.v, tc.s); got != tc.want {
			t.Errorf("PlusMinus(%g, %g) = %q, want %q", tc.v, tc.s, got, tc.want)
		}
	}
	for _, tc := range []struct {
		s    float64
		want string
	}{{0.03, "0.030"}, {0.0038, "0.0038"}, {0.0000133, "0.000013"}, {12.3, "12"}, {0.0996, "0.10"}} {
		if got := SigmaText(tc.s); got != tc.want {
			t.Errorf("SigmaText(%g) = %q, want %q", tc.s, got, tc.want)
		}
	}
	v := Value{Name: "trend", Value: -0.000332, Sigma: 0.0000133, Unit: "A/m"}
	if got, want := v.String(), "trend = -0.000332 ± 0.000013 A/m"; got != want {
		t.Errorf("Value.String() = %q, want %q", got, want)
	}
}

// pmPair matches "value ± sigma" in a message.
var pmPair = regexp.MustCompile(`(-?[0-9]+(?:\.[0-9]+)?) ± ([0-9]+(?:\.[0-9]+)?)`)

// decimals is the number of digits after the point in a plain decimal.
func decimals(s string) int {
	if i := strings.IndexByte(s, '.'); i >= 0 {
		return len(s) - i - 1
	}
	return 0
}

// significant is the number of significant digits of a plain decimal
// written without an exponent (leading zeros do not count).
func significant(s string) int {
	return len(strings.TrimLeft(strings.ReplaceAll(s, ".", ""), "0"))
}

// checkPrecision checks every "value ± sigma" in msg: the sigma to two
// significant digits (more only for a whole number of ten or more) and the
// value to the same decimal place (GUM section 7.2.6, as in TestPlusMinus).
func checkPrecision(t *testing.T, msg string) int {
	t.Helper()
	pairs := pmPair.FindAllStringSubmatch(msg, -1)
	for _, p := range pairs {
		v, s := p[1], p[2]
		if n := significant(s); n != 2 && !(decimals(s) == 0 && n > 2) {
			t.Errorf("sigma %q in %q has %d significant digits, want 2", s, p[0], n)
		}
		if decimals(v) != decimals(s) {
			t.Errorf("%q: value to %d decimals, its sigma to %d", p[0], decimals(v), decimals(s))
		}
	}
	return len(pairs)
}

// TestStepMessagesAtSigmaPrecision: the reviewed demo's step finding read
// "most of the change (5.69 ± 0.086 A)", "most likely at chainage 111.9 ±
// 0.7 m" and "an excess scatter between stations of 0.03 A" while its
// values were 5.687 ± 0.086, 111.94 ± 0.73 and 0.030. Every value ± sigma
// in the messages must now be written as its value is, and the scatter to
// two significant digits.
func TestStepMessagesAtSigmaPrecision(t *testing.T) {
	// The smeared 9 A step of TestSmearedStepSizedFromPlateaus, with
	// station-to-station scatter beyond the fits' sigmas (0.15 A against
	// 0.05 A), so that the excess scatter is estimated and named.
	st := smearSt()
	rng := rand.New(rand.NewPCG(5, 6))
	for i := range st {
		st[i].Current += 0.15 * rng.NormFloat64()
	}
	r, err := Build(st, nil)
	if err != nil {
		t.Fatal(err)
	}
	steps := findings(r, KindCurrentStep)
	if len(steps) != 1 {
		t.Fatalf("%d steps, want 1: %+v", len(steps), r.Findings)
	}
	f := steps[0]
	if n := checkPrecision(t, f.Message); n < 3 {
		t.Errorf("%d value ± sigma pairs in %q, want the step, its largest part and its location", n, f.Message)
	}
	want := map[string]string{
		"largest part":        "most of the change (%s A)",
		"location (chainage)": "most likely at chainage %s m",
		"step":                "by %s A",
	}
	for name, form := range want {
		v, ok := valueNamed(f, name)
		if !ok {
			t.Errorf("no %q value in %+v", name, f.Values)
			continue
		}
		x := v.Value
		if x < 0 {
			x = -x // the message says falls or rises
		}
		if s := strings.Replace(form, "%s", PlusMinus(x, v.Sigma), 1); !strings.Contains(f.Message, s) {
			t.Errorf("message lacks %q (the %s value %v): %s", s, name, v, f.Message)
		}
	}
	tau, ok := valueNamed(f, "between-station scatter")
	if !ok {
		t.Fatalf("no excess scatter estimated: %s", f.Message)
	}
	if s := "excess scatter between stations of " + SigmaText(tau.Value) + " A"; !strings.Contains(f.Message, s) {
		t.Errorf("message lacks %q: %s", s, f.Message)
	}
	if got := SigmaText(tau.Value); significant(got) != 2 {
		t.Errorf("scatter written %q, want two significant digits", got)
	}
}

// TestAnomalyMessageAtSigmaPrecision: a current anomaly's departure is
// written to its sigma's precision (it was "%.3g ± %.2g").
func TestAnomalyMessageAtSigmaPrecision(t *testing.T) {
	st := spur(3, 0, cpCount)
	st[10].Current += 0.5
	r, err := Build(st, nil)
	if err != nil {
		t.Fatal(err)
	}
	a := findings(r, KindCurrentAnomaly)
	if len(a) != 1 {
		t.Fatalf("%d anomalies, want 1: %+v", len(a), r.Findings)
	}
	if n := checkPrecision(t, a[0].Message); n != 1 {
		t.Errorf("%d value ± sigma pairs in %q, want 1", n, a[0].Message)
	}
	d, _ := valueNamed(a[0], "departure from neighbours")
	if s := PlusMinus(d.Value, d.Sigma) + " A above"; !strings.Contains(a[0].Message, s) {
		t.Errorf("message lacks %q: %s", s, a[0].Message)
	}
}
