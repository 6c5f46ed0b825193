package route

import (
	"strings"
	"testing"
)

// The rules by which a step is found and bracketed beside poor stations
// (fx26i) act only where a station is truly unusable, and raise no change
// to a warning unless its levels either side are clear. The fixtures are
// the route stations of two simulated scenarios (invented; review rg26c),
// as locate hands them to Build; the truth is each scenario's, by
// Kirchhoff's current law.
//
//   - steep79Seed1: one 20 A cable rising at 79 degrees from 12 m to 1 m
//     deep, traverses every 2 m, no current leaving it anywhere. T03 is a
//     sound but wrong fit (10.4 A at 8.1 m), T04 a pair's net, T05-T07
//     poor fits (misfit 12-14 times the noise), T08 on reads 21 A.
//   - teeServiceSeed1: a 20 A main under traverses every 2 m, with a 5 A
//     service teed off at chainage 7 m, so 15 A past it; T03-T06 misfit
//     by the tee's own field.

// TestMisfitRunNotAFault: no current leaves the steep cable, so no current
// step is reported; the change across the misfit run stays an info that
// the model's error may account for. Before the fix, "net current rises
// by 10.5 +- 2.9 A between T04 and T08 ... an earth fault", whose level
// before rested on T03 and T04's pair net only.
func TestMisfitRunNotAFault(t *testing.T) {
	st := append([]Station(nil), steep79Seed1...)
	r, err := Build(st, &Settings{MinStep: 0.02})
	if err != nil {
		t.Fatal(err)
	}
	var held bool
	for _, f := range r.Findings {
		if f.Kind == KindCurrentStep {
			t.Errorf("a current step reported on a cable that loses none: %s %s", f.Severity, f.Message)
		}
		if f.Kind == KindPoorFit && f.Severity == SeverityInfo && strings.Contains(f.Message, "not reported as current leaving or joining") && f.From < 10.5 && f.To > 13.5 {
			held = true
		}
	}
	if !held {
		for _, f := range r.Findings {
			t.Logf("%s %s %.1f-%.1f: %.150s", f.Kind, f.Severity, f.From, f.To, f.Message)
		}
		t.Error("the change across T06-T08 is not told as one the model's error may account for")
	}
}

// TestTeeBracketHeldByPoorStations: a poor station whose current, however
// uncertain at its misfit, sits at its own side's level still bounds the
// step. T04 and T05 read 22.1 and 13.7 A against levels of 20.2 and 14.8
// A: the tee (chainage 7 m) is bracketed between them, 2 m, not widened
// to T02-T07 (10 m) as before the fix.
func TestTeeBracketHeldByPoorStations(t *testing.T) {
	st := append([]Station(nil), teeServiceSeed1...)
	r, err := Build(st, &Settings{MinStep: 0.02})
	if err != nil {
		t.Fatal(err)
	}
	const at = 7.0 // m, the tee's chainage
	var found bool
	for _, f := range r.Findings {
		if f.Kind != KindCurrentStep {
			continue
		}
		found = true
		if !(f.From < at && at < f.To) {
			t.Errorf("bracketed %.1f to %.1f m, the tee at %g m: %s", f.From, f.To, at, f.Message)
		}
		if f.To-f.From > 2.5 {
			t.Errorf("bracketed %.1f to %.1f m, wider than the poor stations either side of the tee (2 m): %s", f.From, f.To, f.Message)
		}
	}
	if !found {
		t.Error("no current step found at the tee")
	}
}
