package main

import (
	"math"
	"strings"
	"testing"
)

// TestLocateMainsClash: a signal on a mains harmonic, or nearer one than
// the windows can fit apart (calibrate.NuisanceSeparation, 2/window), is
// said so: that mains line is not fitted and leaks into the signal (in
// review a 55 Hz tracer beside a 50 Hz cable gave a phantom conductor and
// a false cover warning, silently). The frequencies decide, not the data:
// 150 Hz is the 50 Hz mains' 3rd harmonic; 128 Hz in 0.05 s windows lies
// 22 Hz from it, under 40 Hz; 512 Hz in 0.1 s windows clears every line.
func TestLocateMainsClash(t *testing.T) {
	_, log := acWalkAt(t, t.TempDir(), "50.0", "")
	for _, tc := range []struct {
		args []string
		want string // "" for no clash warning
	}{
		{[]string{"--freq", "150"}, "the signal's 150 Hz is the 3rd harmonic of the 50 Hz mains"},
		{[]string{"--freq", "128", "--window", "0.05"}, "the signal's 128 Hz lies 22 Hz from the 3rd harmonic of the 50 Hz mains (150 Hz), closer than 0.05 s windows can fit apart (40 Hz)"},
		{[]string{"--freq", "512"}, ""},
		{[]string{"--freq", "150", "--mains", "none"}, ""},
	} {
		doc := locateDoc(t, append(append(tc.args, "--group-by", "group", "--reference-z", "0"), log)...)
		var got string
		for _, w := range doc.Warnings {
			if strings.Contains(w, "mains (") || strings.Contains(w, "of the 50 Hz mains") {
				got = w
			}
		}
		switch {
		case tc.want == "" && got != "":
			t.Errorf("%v: warning %q", tc.args, got)
		case tc.want != "" && !strings.Contains(got, tc.want):
			t.Errorf("%v: warnings %q, want one saying %q", tc.args, doc.Warnings, tc.want)
		}
	}
	if code, _, errOut := cli(t, "locate", "--mains", "50", log); code != 2 || !strings.Contains(errOut, "--mains needs --freq") {
		t.Errorf("--mains without --freq: exit %d, %q", code, errOut)
	}
	if code, _, errOut := cli(t, "locate", "--freq", "50", "--mains", "50", log); code != 2 || !strings.Contains(errOut, "the mains are the signal") {
		t.Errorf("--mains at --freq 50: exit %d, %q", code, errOut)
	}
	// A cable surveyed at its grid's frequency off nominal carries the mains
	// (within 1% of 50 Hz, calibrate.NearMains): the 50 Hz line is the
	// signal, not a mains field beside it (before, --freq 50.05 was told
	// to use 40 s windows to fit the mains apart).
	sc, grid := acWalkAt(t, t.TempDir(), "50.05", "")
	doc := locateDoc(t, "--freq", "50.05", "--group-by", "group", "--reference-z", "0", grid)
	for _, w := range doc.Warnings {
		if strings.Contains(w, "mains") {
			t.Errorf("--freq 50.05: warning %q", w)
		}
	}
	if len(doc.Signal.NuisanceHz) != 0 {
		t.Errorf("--freq 50.05: nuisance frequencies %v fitted, want none", doc.Signal.NuisanceHz)
	}
	checkOnly(t, doc, sc, 50.05, 0, 0.05)
	if code, _, errOut := cli(t, "locate", "--freq", "50.05", "--mains", "50", grid); code != 2 || !strings.Contains(errOut, "the mains are the signal") {
		t.Errorf("--mains at --freq 50.05: exit %d, %q", code, errOut)
	}
}

// TestLocateRailwayBesideMains: a 16.7 Hz traction return current beside
// the 50 Hz cable. The frequency check fits the signal's 3rd and 5th
// harmonics, and 3 x 16.7 = 50.1 Hz sits on the mains: that harmonic, not
// the mains line, is left out of the check's fit, so the check runs
// (before, the 50 Hz line was dropped from the nuisance and the cable's
// field swamped every window: "could not be checked").
func TestLocateRailwayBesideMains(t *testing.T) {
	extra := walkLine("traction return", -0.6, -1.2, 0.5, 16.7, 10)
	sc, log := acWalkAt(t, t.TempDir(), "50.0", extra)
	doc := locateDoc(t, "--freq", "16.7", "--group-by", "group", "--reference-z", "0", log)
	for _, w := range doc.Warnings {
		if strings.Contains(w, "could not be checked") {
			t.Errorf("warning: %s", w)
		}
	}
	checkOnly(t, doc, sc, 16.7, 0, 0.05)
}

// TestCheckStep: the frequency check fits every window up to
// freqCheckWindows and then every k-th, about that many.
func TestCheckStep(t *testing.T) {
	for _, tc := range []struct {
		n    int
		want float64
	}{{10, 0.1}, {1500, 0.1}, {1501, 0.2}, {6000, 0.4}, {6001, 0.5}} {
		if got := checkStep(tc.n, 0.1); math.Abs(got-tc.want) > 1e-12 {
			t.Errorf("checkStep(%d, 0.1) = %g, want %g", tc.n, got, tc.want)
		}
	}
}
