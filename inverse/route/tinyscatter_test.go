package route

import (
	"strings"
	"testing"
)

// TestNegligibleScatterNotSaid: a between-station scatter under 1% of the
// stations' own sigmas changes no sigma that matters and is not named in
// a step's message (it read "an excess scatter between stations of
// 0.000000014 A ... widened 5.1 times" beside sigmas of ±1.1 A, as if it
// were a real correction); one of the stations' size still is.
func TestNegligibleScatterNotSaid(t *testing.T) {
	r, err := Build(smearSt(), nil)
	if err != nil {
		t.Fatal(err)
	}
	ps := r.Stations
	for _, c := range []struct {
		tau  float64
		said bool
	}{{1e-8, false}, {0.05, true}} {
		out, _ := steps(append([]Placed(nil), ps...), nil, c.tau, 1)
		if len(out) == 0 {
			t.Fatalf("tau %g: no step found", c.tau)
		}
		for _, f := range out {
			if got := strings.Contains(f.Message, "excess scatter between stations"); got != c.said {
				t.Errorf("tau %g: scatter named %v, want %v: %s", c.tau, got, c.said, f.Message)
			}
		}
	}
}
