package route

import (
	"math"
	"math/rand/v2"
	"regexp"
	"strconv"
	"strings"
	"testing"
)

// TestCurrentChangeReadsUnderThreshold: a current change fitted at about 1.77% of
// the current beside a 1.8% MinStep is information, and its message must
// show the percentage with enough digits to read below the threshold (two
// significant digits round 1.77 to 1.8, which reads as equal to it), say
// the number of sigma it is beyond in numbers (StepK, not a flag name), and
// carry both percentages in Values. The check is the arithmetic of the
// message's own numbers against the finding's values.
func TestCurrentChangeReadsUnderThreshold(t *testing.T) {
	const after, level, sigma = 17, cpI0, 0.005
	const frac, minStep = 0.0184, 0.018
	st := spurSigma(7, 0, after, sigma)
	rng := rand.New(rand.NewPCG(8, 1))
	for i := range st {
		st[i].Current = level + sigma*rng.NormFloat64()
		if i > after {
			st[i].Current -= frac * level
		}
	}
	r, err := Build(st, &Settings{MinStep: minStep})
	if err != nil {
		t.Fatal(err)
	}
	got := findings(r, KindCurrentChange)
	if len(got) != 1 {
		for _, f := range r.Findings {
			t.Log(f.Kind, f.Message)
		}
		t.Fatalf("%d current-change findings, want 1", len(got))
	}
	f := got[0]
	m := regexp.MustCompile(`A \(([0-9.]+)%\) between .* under the ([0-9.]+)% taken as a step`).FindStringSubmatch(f.Message)
	if m == nil {
		t.Fatalf("message has no percentage and threshold: %s", f.Message)
	}
	shown, _ := strconv.ParseFloat(m[1], 64)
	thr, _ := strconv.ParseFloat(m[2], 64)
	if math.Abs(thr-100*minStep) > 1e-9 {
		t.Errorf("threshold reads %s%%, want 1.8%%", m[2])
	}
	if !(shown < thr) {
		t.Errorf("change reads %s%%, not visibly under the %s%% threshold: %s", m[1], m[2], f.Message)
	}
	if !regexp.MustCompile(`beyond (the )?3 times`).MatchString(f.Message) || strings.Contains(f.Message, "--step-k") {
		t.Errorf("message does not say beyond 3 times its uncertainty (StepK's default) in numbers: %s", f.Message)
	}
	var rel, floor *Value
	for i := range f.Values {
		switch f.Values[i].Name {
		case "relative change":
			rel = &f.Values[i]
		case "minimum step":
			floor = &f.Values[i]
		}
	}
	if rel == nil || floor == nil {
		t.Fatalf("values %+v lack the relative change or the minimum step", f.Values)
	}
	if rel.Unit != "%" || floor.Unit != "%" || math.Abs(floor.Value-100*minStep) > 1e-9 {
		t.Errorf("relative change %+v, minimum step %+v", *rel, *floor)
	}
	// The value is the step over the larger level, as the message says.
	step := math.Abs(f.Values[0].Value)
	lvl := math.Max(math.Abs(f.Values[1].Value), math.Abs(f.Values[2].Value))
	if math.Abs(rel.Value-100*step/lvl) > 1e-9 || math.Abs(rel.Value-shown) > 0.05 || !(rel.Value < floor.Value) {
		t.Errorf("relative change %g%%, step %g A of %g A, shown %s%%", rel.Value, step, lvl, m[1])
	}
}
