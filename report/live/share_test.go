package live

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"

	"undercurrent/ingest/ingesttest"
)

// shareAlarmsOf returns the share alarms of one window's alarms.
func shareAlarmsOf(als []Alarm) []Alarm {
	var out []Alarm
	for _, al := range als {
		if al.Kind == AlarmShare {
			out = append(out, al)
		}
	}
	return out
}

// TestConductorShareAlarm: a pipe's max_share of a tram's return current
// is raised when its share triples (rv20b finding 4: a return cable of
// 320 A at full traction beside a pipe taking 5% of the tram's current,
// 20 A, that goes to 15%, 60 A), once for the fault however many trams
// come and go: the windows between trams (no current) and the braking
// (the currents reversed, the share the same by |I|) neither clear nor
// raise it again, and it is cleared in the third window in a row under
// its deadband once the share is back; while held it is listed as
// ongoing also in the windows between trams. The pipe's own max_current
// (100 A) and the asset's (450 A) are never crossed: no over-current
// alarm tells the fault. The share is Kirchhoff's current
// law's division of one current between parallel paths: 60 A of the
// cable's 320 A is 0.1875, of both paths' 380 A 0.158. Before, no key
// max_share was known (the site file is refused; the test fails).
func TestConductorShareAlarm(t *testing.T) {
	// rv20b's duty cycle in one-second windows, normal then faulty.
	normal, idle, fault, braking := [2]float64{320, 20}, [2]float64{0, 0}, [2]float64{320, 60}, [2]float64{-120, -22.5}
	seq := [][2]float64{normal, idle, normal, fault, idle, braking, idle, fault, normal, normal, normal, idle}
	for _, c := range []struct {
		name, extra  string
		share, denom float64
		of           string
	}{
		{"of the cable", "  max_current = 100.0\n  max_share = 0.1\n  share_of = \"cable\"", 60.0 / 320, 320, "cable"},
		{"of both", "  max_current = 100.0\n  max_share = 0.1", 60.0 / 380, 380, "cable+pipe"},
	} {
		t.Run(c.name, func(t *testing.T) {
			a := tractionSite(t, c.extra, "  max_current = 450.0")
			es, als := runEstimates(t, a, seq)
			var onsets, cleared []int
			for k, w := range als {
				for _, al := range w {
					if al.Kind == AlarmOverCurrent {
						t.Errorf("window %d: %s", k, al.Message)
					}
				}
				held := false
				for _, o := range es[k].Ongoing {
					held = held || o.Kind == AlarmShare && o.Subject == "pipe"
				}
				if want := k >= 3 && k < 10; held != want {
					t.Errorf("window %d: share listed as ongoing %v, want %v", k, held, want)
				}
				for _, al := range shareAlarmsOf(w) {
					if al.Subject != "pipe" {
						t.Errorf("window %d: share alarm on %s: %s", k, al.Subject, al.Message)
					}
					if al.Cleared {
						cleared = append(cleared, k)
					} else {
						onsets = append(onsets, k)
					}
				}
			}
			// Raised in the first fault window (3); cleared in the third
			// normal window after the fault (10): 8 and 9 are under the
			// deadband but fewer than clearAfter in a row.
			if len(onsets) != 1 || onsets[0] != 3 || len(cleared) != 1 || cleared[0] != 10 {
				t.Fatalf("share onsets in windows %v, cleared in %v; want [3] and [10]", onsets, cleared)
			}
			al := shareAlarmsOf(als[3])[0]
			// 5 sigma of the share: the sigma is checked against the
			// scatter in TestShareSigmaMatchesScatter.
			if math.Abs(al.Value-c.share) > 5*al.Sigma || !(al.Sigma > 0) || al.Sigma > 1e-3 {
				t.Errorf("share %.6g ± %.2g, want %.6g", al.Value, al.Sigma, c.share)
			}
			if al.Threshold != 0.1 || al.ShareOf != c.of || math.Abs(al.ShareOfCurrent-c.denom) > 0.05 {
				t.Errorf("alarm %+v: want threshold 0.1 of %s, %g A", al, c.of, c.denom)
			}
			for _, s := range []string{"conductor pipe", "max_share 0.1", c.of, strconv.FormatFloat(c.denom, 'g', 3, 64)} {
				if !strings.Contains(al.Message, s) {
					t.Errorf("message %q does not say %q", al.Message, s)
				}
			}
			// Held in the judged windows 3, 5, 7, 8 and 9 (the idle
			// windows are not judged and not counted).
			if cl := shareAlarmsOf(als[10])[0]; cl.Windows != 5 || math.Abs(cl.Peak-c.share) > 1e-3 || cl.Value > 0.1 {
				t.Errorf("cleared record %+v: want 5 windows, peak %.4g", cl, c.share)
			}
		})
	}
}

// TestShareFloor: between trams a stray current of a few amperes, split
// unlike the traction current, has a share over the limit; share_floor
// keeps such windows from being judged, and without it the share is
// judged in any window whose denominator is ten times its own sigma
// (README). At no current (noise about zero) it is never judged.
func TestShareFloor(t *testing.T) {
	stray := [][2]float64{{2, 1}}
	als := runWindows(t, tractionSite(t, "  max_share = 0.1\n  share_of = \"cable\"", ""), stray)
	if len(shareAlarmsOf(als[0])) != 1 {
		t.Errorf("without share_floor a stray 1 A of 2 A (share 0.5) raised %v", als[0])
	}
	als = runWindows(t, tractionSite(t, "  max_share = 0.1\n  share_of = \"cable\"\n  share_floor = 50.0", ""), append(stray, [2]float64{320, 60}))
	if len(shareAlarmsOf(als[0])) != 0 {
		t.Errorf("share_floor 50 A: the stray window of 2 A raised %v", als[0])
	}
	if len(shareAlarmsOf(als[1])) != 1 {
		t.Errorf("share_floor 50 A: the fault at 320 A raised %v", als[1])
	}
	// Noise alone (0 A) in many windows: never judged.
	var zeros [][2]float64
	for range 50 {
		zeros = append(zeros, [2]float64{0, 0})
	}
	for k, w := range runWindows(t, tractionSite(t, "  max_share = 0.1", ""), zeros) {
		if len(shareAlarmsOf(w)) > 0 {
			t.Errorf("window %d at 0 A raised %v", k, w)
		}
	}
}

// TestShareSigmaMatchesScatter: the share's sigma by first-order
// propagation through the current covariance (the delta method; the
// ratio's variance formula as in H. H. Ku, "Notes on the use of
// propagation of error formulas", J. Res. Natl. Bur. Stand. 70C(4), 1966, from memory)
// matches the scatter of the share over windows with independent noise,
// within 5 standard errors of a standard deviation, sqrt(1/(2N)) of
// itself; and the mean share is the true division of the current
// (Kirchhoff: 20 A of 320 A, of 340 A). The tram depot's two currents are
// correlated about -0.3, so the sigma without the covariance differs.
// Also AC, where the shares are of RMS magnitudes: the Fenwick Lane go
// (120 A) and return (100 A), harrow-fen.toml.
func TestShareSigmaMatchesScatter(t *testing.T) {
	draws := func(t *testing.T, a *AssetConfig, names []string, truth []complex128, n, samples int, rate, noise float64) []*Estimate {
		p := solvingProcessor(t, a, names)
		rng := rand.New(rand.NewPCG(20, 17))
		bg := [3]float64{}
		if a.Mode == "dc" {
			bg = [3]float64{18000, 2000, -44000}
		}
		var out []*Estimate
		for k := range n {
			w := synthWindow(a, truth, bg, 1764650000+float64(k*samples)/rate, rate, samples, noise, rng)
			e, _ := p.solve(w, p.reduce(w))
			if e.Quality != "good" {
				t.Fatalf("window %d: quality %s", k, e.Quality)
			}
			out = append(out, e)
		}
		return out
	}
	check := func(t *testing.T, es []*Estimate, cc *ConductorConfig, want float64) {
		t.Helper()
		var sum, sum2, sig float64
		for _, e := range es {
			v, ok := shareOf(e, cc)
			if !ok {
				t.Fatalf("no share of %s", cc.Name)
			}
			sum += v.share
			sum2 += v.share * v.share
			sig += v.sigma
		}
		n := float64(len(es))
		mean := sum / n
		sd := math.Sqrt((sum2 - n*mean*mean) / (n - 1))
		sig /= n
		tol := 5 * math.Sqrt(1/(2*n))
		t.Logf("%s of %q: mean %.7g (truth %.7g), scatter %.4g, sigma %.4g", cc.Name, cc.ShareOf, mean, want, sd, sig)
		if math.Abs(sd/sig-1) > tol {
			t.Errorf("sigma %.4g, scatter %.4g: off by more than %.2g", sig, sd, tol)
		}
		if se := sd / math.Sqrt(n); math.Abs(mean-want) > 5*se {
			t.Errorf("mean share %.7g, truth %.7g (5 standard errors %.2g)", mean, want, 5*se)
		}
	}
	t.Run("dc", func(t *testing.T) {
		a := tractionSite(t, "", "")
		es := draws(t, a, []string{"cable", "pipe"}, []complex128{320, 20}, 1500, 20, 10, 0.5)
		check(t, es, &ConductorConfig{Name: "pipe", ShareOf: "cable"}, 20.0/320)
		check(t, es, &ConductorConfig{Name: "pipe"}, 20.0/340)
		check(t, es, &ConductorConfig{Name: "cable"}, 320.0/340)
		// At 320 A against 20 A the correlation barely moves the share's
		// sigma (1.5%); with the pipe carrying as much as the cable (a
		// fault) it does: the share's sigma without the covariance term
		// is off by more than the tolerance, so the case tests the term.
		es = draws(t, a, []string{"cable", "pipe"}, []complex128{160, 160}, 1500, 20, 10, 0.5)
		check(t, es, &ConductorConfig{Name: "pipe", ShareOf: "cable"}, 1)
		check(t, es, &ConductorConfig{Name: "pipe"}, 0.5)
		e := *es[0]
		with, _ := shareOf(&e, &ConductorConfig{Name: "pipe"})
		e.CurrentCovariance = nil
		without, _ := shareOf(&e, &ConductorConfig{Name: "pipe"})
		t.Logf("equal currents: the share's sigma %.4g with the covariance, %.4g without", with.sigma, without.sigma)
		if math.Abs(without.sigma/with.sigma-1) < 5*math.Sqrt(1/3000.0) {
			t.Errorf("sigma with the covariance %.4g, without %.4g: the case does not test it", with.sigma, without.sigma)
		}
	})
	t.Run("ac", func(t *testing.T) {
		a := harrowFen(t).Asset("fenwick-lane")
		truth := []complex128{cmplx.Rect(120, 0.3), cmplx.Rect(100, 0.3+2)}
		es := draws(t, a, []string{"go", "return"}, truth, 400, 200, 1000, 2)
		check(t, es, &ConductorConfig{Name: "return", ShareOf: "go"}, 100.0/120)
		check(t, es, &ConductorConfig{Name: "return"}, 100.0/220)
	})
}

// TestConductorShareErrorLine: a max_share, share_of or share_floor that
// cannot be judged is refused at its line and column, naming the
// conductor, in the first asset and in the second (whose one commissioned
// pipe has no other conductor to take a share of).
func TestConductorShareErrorLine(t *testing.T) {
	for _, c := range []struct{ old, new, want string }{
		{"  name = \"return\"\n", "  name = \"return\"\n  max_share = -0.1\n", `conductor "return": max_share -0.1`},
		{"  name = \"return\"\n", "  name = \"return\"\n  max_share = 1.5\n", `conductor "return": max_share 1.5`},
		{"  name = \"return\"\n", "  name = \"return\"\n  share_of = \"cable\"\n  max_share = 0.5\n", `share_of names conductor "cable", which is not listed`},
		{"  name = \"return\"\n", "  name = \"return\"\n  share_of = \"return\"\n  max_share = 0.5\n", `share_of names the conductor itself`},
		{"  name = \"return\"\n", "  name = \"return\"\n  share_of = \"go\"\n", `share_of "go" without max_share`},
		{"  name = \"return\"\n", "  name = \"return\"\n  max_share = 0.5\n  share_floor = -3.0\n", `share_floor -3`},
		{"  name = \"pipe\"\n\n", "  name = \"pipe\"\n  max_share = 0.5\n\n", `asset lists one conductor`},
		{"  name = \"return\"\n", "  name = \"return\"\n  min_share = -0.1\n", `conductor "return": min_share -0.1`},
		{"  name = \"return\"\n", "  name = \"return\"\n  min_share = 1.5\n", `conductor "return": min_share 1.5`},
		{"  name = \"return\"\n", "  name = \"return\"\n  min_share = 1.0\n", `conductor "return": min_share 1`},
		{"  name = \"return\"\n", "  name = \"return\"\n  max_share = 0.5\n  min_share = 0.5\n", `min_share 0.5 is not below max_share 0.5`},
		{"  name = \"return\"\n", "  name = \"return\"\n  min_share = 0.3\n  share_floor = -3.0\n", `share_floor -3`},
		{"  name = \"pipe\"\n\n", "  name = \"pipe\"\n  min_share = 0.5\n\n", `asset lists one conductor`},
	} {
		text, line := harrowFenText(t, c.old, c.new)
		// The key is on the line after the name, or the one after that.
		_, err := ParseSite("site.toml", []byte(text))
		if err == nil {
			t.Fatalf("%q accepted", c.new)
		}
		msg := err.Error()
		if !strings.Contains(msg, c.want) {
			t.Errorf("%q: want %q", msg, c.want)
		}
		at := []string{"site.toml:" + strconv.Itoa(line+1) + ":", "site.toml:" + strconv.Itoa(line+2) + ":"}
		if !strings.Contains(msg, at[0]) && !strings.Contains(msg, at[1]) {
			t.Errorf("%q: want it at line %d or %d", msg, line+1, line+2)
		}
	}
	// The line and column exactly: the bad value's own.
	text, line := harrowFenText(t, "  name = \"return\"\n", "  name = \"return\"\n  max_share = 0.5\n  share_floor = -3.0\n")
	if _, err := ParseSite("site.toml", []byte(text)); err == nil || !strings.Contains(err.Error(), "site.toml:"+strconv.Itoa(line+2)+":17:") {
		t.Errorf("share_floor's error %v: want site.toml:%d:17 (the value)", err, line+2)
	}
	// min_share not below max_share: at min_share's value.
	text, line = harrowFenText(t, "  name = \"return\"\n", "  name = \"return\"\n  max_share = 0.4\n  min_share = 0.6\n")
	if _, err := ParseSite("site.toml", []byte(text)); err == nil || !strings.Contains(err.Error(), "site.toml:"+strconv.Itoa(line+2)+":15:") {
		t.Errorf("min_share's error %v: want site.toml:%d:15 (the value)", err, line+2)
	}
	// Either share gives share_of and share_floor a meaning.
	text, _ = harrowFenText(t, "  name = \"return\"\n", "  name = \"return\"\n  min_share = 0.5\n  share_of = \"go\"\n  share_floor = 10.0\n")
	if _, err := ParseSite("site.toml", []byte(text)); err != nil {
		t.Errorf("min_share with share_of and share_floor: %v", err)
	}
}

// TestShareSigmaMonteCarlo: the share's sigma (shareOf, the delta method:
// first-order propagation, H. H. Ku, "Notes on the use of propagation of
// error formulas", J. Res. Natl. Bur. Stand. 70C(4), 1966, from memory; its ratio
// formula README quotes) against a Monte Carlo of the ratio itself:
// currents drawn from a normal law with a given covariance (three
// conductors, correlated as a fit's are), the share computed from each
// draw, its scatter compared with the sigma. Far from zero the two agree
// within the draws' own error; at the edge of what is judged (the
// denominator shareMinSigmas times its own sigma) the first-order sigma
// is a few percent low (the terms it drops), which the test bounds.
func TestShareSigmaMonteCarlo(t *testing.T) {
	names := []string{"cable", "rails", "pipe"}
	// chol returns L with L L' = C (C symmetric positive definite).
	chol := func(C [][]float64) [][]float64 {
		n := len(C)
		L := make([][]float64, n)
		for i := range n {
			L[i] = make([]float64, n)
			for j := 0; j <= i; j++ {
				s := C[i][j]
				for k := range j {
					s -= L[i][k] * L[j][k]
				}
				if i == j {
					L[i][i] = math.Sqrt(s)
				} else {
					L[i][j] = s / L[j][j]
				}
			}
		}
		return L
	}
	cov := func(sig []float64, rho [3][3]float64) [][]float64 {
		C := make([][]float64, 3)
		for i := range 3 {
			C[i] = make([]float64, 3)
			for j := range 3 {
				r := rho[i][j]
				if i == j {
					r = 1
				}
				C[i][j] = r * sig[i] * sig[j]
			}
		}
		return C
	}
	rho := [3][3]float64{{1, -0.3, 0.2}, {-0.3, 1, -0.4}, {0.2, -0.4, 1}}
	const n = 40000
	se := math.Sqrt(1 / (2.0 * n)) // a standard deviation's relative standard error
	for _, c := range []struct {
		name    string
		cur     []float64
		sig     []float64
		cc      ConductorConfig
		lo, hi  float64 // bounds on the scatter over the sigma
		atLimit bool    // the denominator at shareMinSigmas times its sigma
		// corr: the correlations move the sigma beyond the bounds (for
		// the pipe's share of all three they nearly cancel: 0.8%).
		corr bool
	}{
		// A tram's 400 A returning 320 A by the cable, 60 A by the rails,
		// 20 A by the pipe, each fitted to 1-2 A.
		{"pipe of the cable", []float64{320, 60, 20}, []float64{2, 1.5, 1}, ConductorConfig{Name: "pipe", ShareOf: "cable"}, 1 - 5*se, 1 + 5*se, false, true},
		{"pipe of all", []float64{320, 60, 20}, []float64{2, 1.5, 1}, ConductorConfig{Name: "pipe"}, 1 - 5*se, 1 + 5*se, false, false},
		{"rails of all, braking", []float64{-120, -22.5, -7.5}, []float64{2, 1.5, 1}, ConductorConfig{Name: "rails"}, 1 - 5*se, 1 + 5*se, false, true},
		// A small current whose cable denominator is 10 sigma: the
		// first-order sigma is low by a few percent, not more than 8.
		{"pipe of the cable at the limit", []float64{20, 4, 5}, []float64{2, 1.5, 1}, ConductorConfig{Name: "pipe", ShareOf: "cable"}, 1, 1.08, true, true},
	} {
		t.Run(c.name, func(t *testing.T) {
			C := cov(c.sig, rho)
			L := chol(C)
			e := &Estimate{CurrentCovariance: C}
			for k, nm := range names {
				e.Conductors = append(e.Conductors, ConductorEstimate{Name: nm, Current: c.cur[k], CurrentSigma: c.sig[k]})
			}
			v, ok := shareOf(e, &c.cc)
			if !ok || !(v.sigma > 0) {
				t.Fatalf("share %+v, ok %v", v, ok)
			}
			if at := v.denom / v.denomSigma; c.atLimit != (math.Abs(at-shareMinSigmas) < 0.5) {
				t.Fatalf("denominator %.4g A is %.3g of its sigmas", v.denom, at)
			}
			rng := rand.New(rand.NewPCG(7, uint64(len(c.name))))
			d := &Estimate{Conductors: make([]ConductorEstimate, 3)}
			copy(d.Conductors, e.Conductors)
			var sum, sum2 float64
			for range n {
				z := [3]float64{rng.NormFloat64(), rng.NormFloat64(), rng.NormFloat64()}
				for i := range 3 {
					x := c.cur[i]
					for j := 0; j <= i; j++ {
						x += L[i][j] * z[j]
					}
					d.Conductors[i].Current = x
				}
				// The draw's share by the same code (its sigma unused).
				w, _ := shareOf(d, &c.cc)
				sum += w.share
				sum2 += w.share * w.share
			}
			mean := sum / n
			sd := math.Sqrt((sum2 - n*mean*mean) / (n - 1))
			t.Logf("share %.6g: Monte Carlo scatter %.5g, delta-method sigma %.5g (ratio %.4f); denominator %.3g sigma", v.share, sd, v.sigma, sd/v.sigma, v.denom/v.denomSigma)
			if r := sd / v.sigma; r < c.lo || r > c.hi {
				t.Errorf("scatter over sigma %.4f, want in [%.4f, %.4f]", r, c.lo, c.hi)
			}
			// Where the covariance's off-diagonal terms matter, the sigma
			// from the diagonal alone is outside the bounds.
			if !c.corr {
				return
			}
			e.CurrentCovariance = nil
			u, _ := shareOf(e, &c.cc)
			t.Logf("without the correlations: sigma %.5g (scatter over it %.4f)", u.sigma, sd/u.sigma)
			if r := sd / u.sigma; r >= c.lo && r <= c.hi {
				t.Errorf("the sigma without the correlations, %.5g, is also within the bounds: the case does not test them", u.sigma)
			}
		})
	}
}

// TestConductorMinShareAlarm: a return cable's min_share is raised when
// its share of the tram's return current falls (a leak to earth beside
// it grows: of 400 A, the cable's 320 A and the pipe's 80 A become 160 A
// and 240 A, the cable's share of both going from 0.8 to 0.4, its share
// of the pipe's current from 4 to 0.667), once for the fault however
// many trams come and go, and cleared in the third judged window in a
// row once the share is back; the windows between trams neither clear
// nor raise it, the braking (the currents reversed) judges it as
// traction does, and while held it is listed as ongoing. The cable's
// current falls, so no over-current tells the fault. Before, no key
// min_share was known (the site file is refused; the test fails).
func TestConductorMinShareAlarm(t *testing.T) {
	normal, idle, fault, braking := [2]float64{320, 80}, [2]float64{0, 0}, [2]float64{160, 240}, [2]float64{-60, -90}
	seq := [][2]float64{normal, idle, normal, fault, idle, braking, idle, fault, normal, normal, normal, idle}
	for _, c := range []struct {
		name, cable  string
		limit        float64
		share, denom float64
		of           string
	}{
		{"of both", "  min_share = 0.6", 0.6, 160.0 / 400, 400, "cable+pipe"},
		{"of the pipe", "  min_share = 0.9\n  share_of = \"pipe\"", 0.9, 160.0 / 240, 240, "pipe"},
	} {
		t.Run(c.name, func(t *testing.T) {
			a := depotSite(t, c.cable+"\n  max_current = 450.0", "", "")
			es, als := runEstimates(t, a, seq)
			var onsets, cleared []int
			for k, w := range als {
				held := false
				for _, o := range es[k].Ongoing {
					held = held || o.Kind == AlarmLowShare && o.Subject == "cable"
				}
				if want := k >= 3 && k < 10; held != want {
					t.Errorf("window %d: low share listed as ongoing %v, want %v", k, held, want)
				}
				for _, al := range w {
					switch {
					case al.Kind == AlarmShare || al.Kind == AlarmOverCurrent:
						t.Errorf("window %d: %s", k, al.Message)
					case al.Kind != AlarmLowShare:
					case al.Subject != "cable":
						t.Errorf("window %d: low share alarm on %s: %s", k, al.Subject, al.Message)
					case al.Cleared:
						cleared = append(cleared, k)
					default:
						onsets = append(onsets, k)
					}
				}
			}
			// Raised in the first fault window (3); cleared in the third
			// normal window after the fault (10).
			if len(onsets) != 1 || onsets[0] != 3 || len(cleared) != 1 || cleared[0] != 10 {
				t.Fatalf("low share onsets in windows %v, cleared in %v; want [3] and [10]", onsets, cleared)
			}
			al, _ := alarmFor(als[3], AlarmLowShare, "cable")
			t.Logf("onset: %s", al.Message)
			if math.Abs(al.Value-c.share) > 5*al.Sigma || !(al.Sigma > 0) || al.Sigma > 1e-2 {
				t.Errorf("share %.6g ± %.2g, want %.6g", al.Value, al.Sigma, c.share)
			}
			if al.Threshold != c.limit || al.ShareOf != c.of || math.Abs(al.ShareOfCurrent-c.denom) > 0.1 {
				t.Errorf("alarm %+v: want threshold %g of %s, %g A", al, c.limit, c.of, c.denom)
			}
			for _, s := range []string{"conductor cable", "below its min_share " + strconv.FormatFloat(c.limit, 'g', -1, 64), c.of, strconv.FormatFloat(c.denom, 'g', 3, 64)} {
				if !strings.Contains(al.Message, s) {
					t.Errorf("message %q does not say %q", al.Message, s)
				}
			}
			if m := operatorJargon.FindString(ingesttest.OutsideParentheses(al.Message)); m != "" {
				t.Errorf("the message says %q outside parentheses: %s", m, al.Message)
			}
			// Held in the judged windows 3, 5, 7, 8 and 9; the peak is
			// the lowest share, the cleared window's value above the limit.
			cl, _ := alarmFor(als[10], AlarmLowShare, "cable")
			t.Logf("cleared: %s", cl.Message)
			if cl.Windows != 5 || math.Abs(cl.Peak-c.share) > 1e-2 || !(cl.Value > c.limit) {
				t.Errorf("cleared record %+v: want 5 windows, peak %.4g", cl, c.share)
			}
		})
	}
}

// TestMinShareNotRaised: a return cable whose share falls but stays
// above its min_share (0.8, 0.75, 0.7, 0.65 of 400 A against 0.6) is not
// alarmed, nor is a stray current between trams split unlike the
// traction current (the cable's 2 A of 10 A, a share of 0.2) in windows
// below share_floor; without share_floor that stray window is judged and
// raised, so the floor is what keeps it quiet.
func TestMinShareNotRaised(t *testing.T) {
	lows := func(als [][]Alarm) (n int) {
		for _, w := range als {
			for _, al := range w {
				if al.Kind == AlarmLowShare {
					n++
				}
			}
		}
		return n
	}
	falling := [][2]float64{{320, 80}, {300, 100}, {280, 120}, {260, 140}, {0, 0}, {260, 140}}
	if n := lows(runWindows(t, depotSite(t, "  min_share = 0.6", "", ""), falling)); n != 0 {
		t.Errorf("a share falling from 0.8 to 0.65 against min_share 0.6 raised %d low share alarm(s)", n)
	}
	stray := [][2]float64{{320, 80}, {2, 8}, {0, 0}, {2, 8}, {320, 80}}
	if n := lows(runWindows(t, depotSite(t, "  min_share = 0.6\n  share_floor = 50.0", "", ""), stray)); n != 0 {
		t.Errorf("share_floor 50 A: the stray windows of 10 A raised %d low share alarm(s)", n)
	}
	if n := lows(runWindows(t, depotSite(t, "  min_share = 0.6", "", ""), stray)); n == 0 {
		t.Errorf("without share_floor the stray 2 A of 10 A (share 0.2) raised nothing: the case does not test the floor")
	}
}

// TestMinShareWorsensAndDeadband: a held low share is raised again,
// marked worsened, when it falls to two thirds of the share alarmed
// (0.4 then 0.25 of 400 A), and is held, not cleared, while it is back
// over min_share 0.6 but within the deadband (0.62 against the 0.64 that
// clears it: the other path's share 0.38 is not under 0.9 of its 0.4);
// it clears in the third window in a row past it (0.8), its smallest
// share kept as the peak.
func TestMinShareWorsensAndDeadband(t *testing.T) {
	normal, fault, worse, near := [2]float64{320, 80}, [2]float64{160, 240}, [2]float64{100, 300}, [2]float64{248, 152}
	seq := [][2]float64{normal, fault, worse, near, near, near, near, normal, normal, normal}
	als := runWindows(t, depotSite(t, "  min_share = 0.6", "", ""), seq)
	for k, w := range als {
		al, ok := alarmFor(w, AlarmLowShare, "cable")
		switch {
		case k == 1 && (!ok || al.Worsened || al.Cleared):
			t.Errorf("window %d: want the onset, got %+v", k, al)
		case k == 2 && (!ok || !al.Worsened || math.Abs(al.Previous-0.4) > 1e-3 || !strings.Contains(al.Message, "fallen from 0.4")):
			t.Errorf("window %d: want a worsening from 0.4, got %+v", k, al)
		case k == 9 && (!ok || !al.Cleared || al.Windows != 8 || math.Abs(al.Peak-0.25) > 1e-3):
			t.Errorf("window %d: want the clearing after 8 windows held, peak 0.25, got %+v", k, al)
		case k != 1 && k != 2 && k != 9 && ok:
			t.Errorf("window %d: %s", k, al.Message)
		}
	}
}
