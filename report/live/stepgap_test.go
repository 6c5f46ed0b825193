package live

import (
	"encoding/json"
	"math/rand/v2"
	"strings"
	"testing"
)

// A step alarm that compares with a window before a data gap says so and
// gives the gap: a load that ramps through an outage is not a step
// between neighbouring windows. Simulated truth: synthWindow's currents,
// 100 A in the window at 0 s and 150 A in the one at 5 s, none between.
func TestStepAcrossGapSaysSo(t *testing.T) {
	site := harrowFen(t)
	a := site.Asset("fenwick-lane")
	a.Alarms = AlarmConfig{MaxChi2: 25, Step: 20}
	rng := rand.New(rand.NewPCG(16, 7))
	p := solvingProcessor(t, a, []string{"go", "return"})
	w1 := synthWindow(a, []complex128{100, -100}, [3]float64{}, 0, 1000, 500, 2, rng)
	p.solve(w1, p.reduce(w1))
	w2 := synthWindow(a, []complex128{150, -150}, [3]float64{}, 5, 1000, 500, 2, rng)
	e2, al := p.solve(w2, p.reduce(w2))
	st, ok := alarmFor(al, AlarmStep, "go")
	if !ok {
		t.Fatalf("no step alarm across the gap: %+v", al)
	}
	if !strings.Contains(st.Message, "4.5 s before this window began") || !strings.Contains(st.Message, "gap") {
		t.Errorf("step across a 4.5 s gap says %q; want it to name the gap", st.Message)
	}
	b, _ := json.Marshal(e2)
	if !strings.Contains(string(b), `"after_gap_s":4.5`) {
		t.Errorf("estimate after the gap does not mark it: %s", b)
	}
	// Neighbouring windows: no gap named.
	w3 := synthWindow(a, []complex128{200, -200}, [3]float64{}, 5.5, 1000, 500, 2, rng)
	e3, al3 := p.solve(w3, p.reduce(w3))
	if st, ok := alarmFor(al3, AlarmStep, "go"); !ok || strings.Contains(st.Message, "gap") {
		t.Errorf("step between neighbouring windows: %+v", al3)
	}
	if b, _ := json.Marshal(e3); strings.Contains(string(b), "after_gap_s") {
		t.Errorf("neighbouring window marked as after a gap: %s", b)
	}
}
