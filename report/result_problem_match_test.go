package report

import (
	"strings"
	"testing"

	"undercurrent/inverse"
)

// A result paired with a problem it was not fitted to is refused, naming
// the fit. The fits are kestrelMoor's (build_test.go: eight simulated DC
// traverses of 31 readings). Before, Build took such pairs: a result of 31
// readings beside a problem of 10 was reported as those 10 readings' fit
// with no profile, and a DC result beside AC phasors was reported as an AC
// survey whose group found "no current".
func TestBuildRefusesResultOfAnotherProblem(t *testing.T) {
	fits := kestrelMoor(t)
	set := &BuildSettings{Noise: 2}
	if _, err := Build(Document{}, fits, set); err != nil {
		t.Fatalf("matched fits: %v", err)
	}
	// A problem of the first 10 readings beside the result of all 31.
	short := append([]Fit(nil), fits...)
	p := *short[2].Problem
	p.Points, p.Fields = p.Points[:10], p.Fields[:10]
	short[2].Problem = &p
	if _, err := Build(Document{}, short, set); err == nil || !strings.Contains(err.Error(), `fit 2 (group "K3") has a result fitted to 31 readings but a problem of 10`) {
		t.Errorf("31-reading result on a 10-reading problem: err %v", err)
	}
	// The same readings as AC phasors (every fit, so that the survey is
	// one kind) beside the DC results.
	phasors := func(q *inverse.Problem) *inverse.Problem {
		a := &inverse.Problem{Points: q.Points, Sigma: q.Sigma}
		for _, f := range q.Fields {
			a.Phasors = append(a.Phasors, [3]complex128{complex(f[0], 0), complex(f[1], 0), complex(f[2], 0)})
		}
		return a
	}
	ac := append([]Fit(nil), fits...)
	for i := range ac {
		ac[i].Problem = phasors(ac[i].Problem)
	}
	if _, err := Build(Document{}, ac, set); err == nil || !strings.Contains(err.Error(), `fit 0 (group "K1") has an AC problem (phasors) but a DC result`) {
		t.Errorf("DC results on AC problems: err %v", err)
	}
	// An AC result beside its DC problem.
	mixed := append([]Fit(nil), fits...)
	r, err := inverse.FitLines(phasors(mixed[5].Problem), &inverse.Settings{Count: 1})
	if err != nil {
		t.Fatal(err)
	}
	mixed[5].Result = r
	if _, err := Build(Document{}, mixed, set); err == nil || !strings.Contains(err.Error(), `fit 5 (group "K6") has a DC problem (fields) but an AC result`) {
		t.Errorf("an AC result on a DC problem: err %v", err)
	}
}
