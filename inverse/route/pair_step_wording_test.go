package route

import (
	"strings"
	"testing"
)

// TestPairNetStepWording: on a go-and-return pair the route's current is
// the pair's net current, the sum of go and return. By Kirchhoff's current
// law a tee takes the same current out of the go core as it returns into
// the other, leaving the sum unchanged; the net current changes only where
// current passes between the circuit and earth or another path (a fault, a
// leak). So a step in it, up or down, DC or AC, is worded as that, never as
// "a bond, a tee or another source" joining, and no direction of feed is
// read from its sign. The levels are the Kestrel Moor spur's (spur) with
// 1 A lost or gained; the same stations not marked as a pair keep the one
// conductor's wording.
func TestPairNetStepWording(t *testing.T) {
	for _, ac := range []bool{false, true} {
		for _, step := range []float64{1, -1} {
			st := spur(1, step, 15)
			for i := range st {
				st[i].AC = ac
				st[i].PairNet = true
			}
			r, err := Build(st, nil)
			if err != nil {
				t.Fatal(err)
			}
			s := findings(r, KindCurrentStep)
			if len(s) != 1 {
				t.Fatalf("AC %v, step %g A: %d steps, want 1", ac, step, len(s))
			}
			m := s[0].Message
			for _, want := range []string{"net current ", "between the circuit and earth", "a tee carries go and return alike"} {
				if !strings.Contains(m, want) {
					t.Errorf("AC %v, step %g A: %q lacks %q", ac, step, m, want)
				}
			}
			for _, bad := range []string{"a bond, a tee or another source", "current joining the conductor", "current leaving the conductor", "if it is fed from", "direction the current flows"} {
				if strings.Contains(m, bad) {
					t.Errorf("AC %v, step %g A: %q holds %q", ac, step, m, bad)
				}
			}
			for i := range st {
				st[i].PairNet = false
			}
			if r, err = Build(st, nil); err != nil {
				t.Fatal(err)
			}
			if s := findings(r, KindCurrentStep); len(s) != 1 || !strings.Contains(s[0].Message, "the conductor there") {
				t.Errorf("AC %v, step %g A, one conductor: %v", ac, step, s)
			}
		}
	}
}
