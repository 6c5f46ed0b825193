package main

import (
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"undercurrent/inverse"
)

// TestPositionSigmaDepthPulls checks --position-sigma against the
// simulated truth: the single-line scenario (25 A, 1.1 m below the
// ground) with Gaussian scatter of 0.2 m added to each reading's logged x
// and y and 0.15 m to its z (jitterHeights; the field stays that of the
// true place, as with satellite positioning jitter), several noise and
// scatter draws. The
// depth below the ground (--reference-z 0) of each fit is compared with
// the truth in units of its sigma: an estimate whose sigma is right has
// pulls of RMS 1. Without the flag the scatter biases the depths deep and
// the sigmas count no position error (RMS over 1.5); with
// --position-sigma 0.2,0.15 it is counted and its mean effect corrected (RMS
// within 0.6-1.5), and every group's notes say so. Before the flag existed
// locate refused it.
func TestPositionSigmaDepthPulls(t *testing.T) {
	dir := t.TempDir()
	seeds := 3
	if testing.Short() {
		seeds = 2
	}
	type doc struct {
		Groups []struct {
			Key     string `json:"key"`
			Sources []struct {
				Kind       string  `json:"kind"`
				Current    float64 `json:"current_a"`
				Depth      float64 `json:"depth_m"`
				DepthSigma float64 `json:"depth_sigma_m"`
			} `json:"sources"`
			Notes []string `json:"notes"`
		} `json:"groups"`
	}
	const trueDepth = 1.1 // testdata/scenarios/single-line.toml
	var plain, with []float64
	for s := 1; s <= seeds; s++ {
		clean := filepath.Join(dir, "line"+strconv.Itoa(s)+".csv")
		mustCLI(t, "simulate", "--seed", strconv.Itoa(s), filepath.Join("..", "..", "testdata", "scenarios", "single-line.toml"), "-o", clean)
		log := filepath.Join(dir, "jit"+strconv.Itoa(s)+".csv")
		jitterHeights(t, clean, log, 0.2, 0.15, uint64(100+s))
		for _, flag := range []bool{false, true} {
			args := []string{"--group-by", "group", "--reference-z", "0", "--count", "1", log}
			if flag {
				args = append([]string{"--position-sigma", "0.2,0.15"}, args...)
			}
			d := locateInto[doc](t, args...)
			for _, g := range d.Groups {
				if len(g.Sources) != 1 || !(g.Sources[0].DepthSigma > 0) {
					t.Fatalf("seed %d group %s: sources %+v", s, g.Key, g.Sources)
				}
				noted := false
				for _, n := range g.Notes {
					noted = noted || strings.HasPrefix(n, inverse.PositionSigmaNote)
				}
				if noted != flag {
					t.Errorf("seed %d group %s, --position-sigma given %v: notes %q", s, g.Key, flag, g.Notes)
				}
				p := (g.Sources[0].Depth - trueDepth) / g.Sources[0].DepthSigma
				if flag {
					with = append(with, p)
				} else {
					plain = append(plain, p)
				}
			}
		}
	}
	rms := func(v []float64) float64 {
		var s float64
		for _, x := range v {
			s += x * x
		}
		return math.Sqrt(s / float64(len(v)))
	}
	t.Logf("%d fits: depth pulls RMS %.2f plain, %.2f with --position-sigma", len(with), rms(plain), rms(with))
	if r := rms(plain); !(r > 1.5) {
		t.Errorf("without --position-sigma: depth pulls RMS %.2f, want over 1.5 (the scatter ignored)", r)
	}
	if r := rms(with); !(r >= 0.6 && r <= 1.5) {
		t.Errorf("with --position-sigma 0.2,0: depth pulls RMS %.2f, want 0.6-1.5", r)
	}
}

// jitterHeights writes a copy of the simulated CSV log src with Gaussian
// scatter of sd plan metres added to each reading's x and y and of up
// metres to its z (the field stays that of the true position).
func jitterHeights(t *testing.T, src, dst string, plan, up float64, seed uint64) {
	t.Helper()
	tmp := dst + ".xy"
	jitterLog(t, src, tmp, plan, seed)
	raw, err := os.ReadFile(tmp)
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(seed, 29))
	lines := strings.Split(string(raw), "\n")
	header := true
	for i, l := range lines {
		if l == "" || strings.HasPrefix(l, "#") {
			continue
		}
		if header { // time,x,y,z,... (checked by jitterLog)
			header = false
			continue
		}
		c := strings.Split(l, ",")
		v, err := strconv.ParseFloat(c[3], 64)
		if err != nil {
			t.Fatal(err)
		}
		c[3] = strconv.FormatFloat(v+up*rng.NormFloat64(), 'g', -1, 64)
		lines[i] = strings.Join(c, ",")
	}
	if err := os.WriteFile(dst, []byte(strings.Join(lines, "\n")), 0o644); err != nil {
		t.Fatal(err)
	}
}

// TestPositionSigmaFlagChecked checks --position-sigma's values: one
// value for both, two for the plan and the height, and refusals of
// lengths that are not, of more than two, of both zero and of --robust.
func TestPositionSigmaFlagChecked(t *testing.T) {
	for _, c := range []struct {
		text     string
		robust   bool
		plan, up float64
		err      string
	}{
		{"0.2", false, 0.2, 0.2, ""},
		{"0.2,0.15", false, 0.2, 0.15, ""},
		{" 0 , 0.15 ", false, 0, 0.15, ""},
		{"-0.1", false, 0, 0, "want H or H,V"},
		{"0.1,NaN", false, 0, 0, "want H or H,V"},
		{"0.1,inf", false, 0, 0, "want H or H,V"},
		{"0.1,0.1,0.1", false, 0, 0, "want H or H,V"},
		{"a", false, 0, 0, "want H or H,V"},
		{"0,0", false, 0, 0, "both zero"},
		{"0.2", true, 0, 0, "--robust"},
	} {
		o := &locateOptions{positionSigma: c.text, robust: c.robust}
		err := o.parsePositionSigma()
		if c.err == "" {
			if err != nil || o.posPlan != c.plan || o.posUp != c.up {
				t.Errorf("%q: %v, %v, %v; want %v, %v", c.text, o.posPlan, o.posUp, err, c.plan, c.up)
			}
			if s := o.fitSettings(); s.PositionSigmaPlan != c.plan || s.PositionSigmaUp != c.up {
				t.Errorf("%q: fit settings %v, %v", c.text, s.PositionSigmaPlan, s.PositionSigmaUp)
			}
			continue
		}
		if err == nil || !strings.Contains(err.Error(), c.err) {
			t.Errorf("%q robust %v: error %v, want one with %q", c.text, c.robust, err, c.err)
		}
	}
}
