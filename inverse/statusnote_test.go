package inverse

import (
	"strings"
	"testing"
)

// TestStatusNoteAgreesWithOK checks that a fit's note calls it unconverged
// exactly when the report does not use it: report/build.go takes a fit as
// ok when its status converged or stalled (no step reduces the sum of
// squares in floating point: a minimum to machine precision; MINPACK's
// lmder, Moré, Garbow and Hillstrom, ANL-80-74 (1980), exits there with
// info = 6, "ftol is too small. no further reduction in the sum of squares
// is possible": the tolerance asked for more than the machine can give,
// not a fit that failed). A reviewed run listed a stalled fit as "the fit did not
// converge" while its Fit column, CSV and GeoJSON said ok.
func TestStatusNoteAgreesWithOK(t *testing.T) {
	for s := StatusNone; s <= NumericalFailure; s++ {
		used := s.Converged() || s == Stalled // report/build.go, Group.OK
		note := statusNote(s)
		if says := strings.Contains(note, "did not converge"); says == used {
			t.Errorf("status %q: note %q, but the fit is used=%v", s, note, used)
		}
		if s.Converged() && note != "" {
			t.Errorf("status %q converged but has the note %q", s, note)
		}
	}
	if n := statusNote(Stalled); !strings.Contains(n, "machine precision") {
		t.Errorf("stalled note %q does not say it converged to machine precision", n)
	}
	// A step whose SVD did not converge is a failure, not a stall.
	if n := statusNote(NumericalFailure); !strings.Contains(n, "did not converge") || !strings.Contains(n, "singular value decomposition") {
		t.Errorf("numerical-failure note %q", n)
	}
	if n := statusNote(MaxIterations); !strings.Contains(n, "iteration limit") {
		t.Errorf("iteration-limit note %q does not say why", n)
	}
}
