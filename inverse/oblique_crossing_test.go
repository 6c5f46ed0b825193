package inverse

import (
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"
)

// A line crossing a single traverse obliquely. The three-axis field of an infinite
// line is perpendicular to it everywhere (Biot-Savart, DOMAIN.md), so a traverse that
// passes over the line fixes its azimuth at any crossing angle, as long as the field
// varies along the traverse; only a line nearly along the traverse is out of reach.
// The fixture is a 30 m traverse running east (301 readings 0.1 m apart, as in a
// walked survey at Brackenmoor, an invented site) over a level 5 A line 1.5 m below
// the sensors, crossing it 0.4 m east of the middle; the truth is the simulation's.

// obliqueCase returns the traverse and the line, off degrees from square to the
// traverse (its azimuth: the traverse's square is north).
func obliqueCase(off float64) ([][3]float64, Line) {
	pts := traverse(301, -15, 15, 0, 0)
	return pts, Line{Point: [3]float64{0.4, 0, -1.5}, Dir: dirOf(off*math.Pi/180, 0)}
}

// heldNote reports whether a result holds the angles of a single traverse square to
// it (the fallback of FitLines), and returns its notes joined.
func heldNote(res *Result) (bool, string) {
	all := slices.Clone(res.Notes)
	for _, e := range res.Sources {
		all = append(all, e.Notes...)
	}
	held := slices.ContainsFunc(res.Notes, func(n string) bool { return strings.Contains(n, "held perpendicular to it and horizontal") })
	return held, strings.Join(all, " | ")
}

// TestSingleTraverseObliqueCrossing: lines crossing the traverse at 35, 30 and 25
// degrees (55, 60 and 65 degrees from square) have their azimuth and dip fitted, on
// every one of 10 seeds each, for DC readings (5 nT noise) and for AC phasors (2 nT,
// with the phase); current, depth, azimuth and dip (and phase) come out within 4
// sigma of the truth on every fit (about 150 values a kind), and their pulls (error
// over sigma) have an RMS between 0.7 and 1.3 over the 30 fits (an RMS of 30 unit
// normal values lies within 0.13 of 1 at one sigma). Before, the fit's
// azimuth was bounded 60 degrees either side of square and a fit reaching the bound
// was taken as "azimuth not resolved by the data": the angles were held square, the
// readings rejected them, and the fit failed, on about half the traverses at 30
// degrees and nearly all at 25, although the readings fix the azimuth to a tenth of
// a degree.
func TestSingleTraverseObliqueCrossing(t *testing.T) {
	const seeds = 10
	bg := [3]float64{-300, 18500, -46000}
	for _, ac := range []bool{false, true} {
		var pulls = map[string][]float64{}
		for _, off := range []float64{55, 60, 65} {
			pts, line := obliqueCase(off)
			for seed := range uint64(seeds) {
				name := fmt.Sprintf("DC/off%g/seed%d", off, seed)
				if ac {
					name = "AC" + name[2:]
				}
				t.Run(name, func(t *testing.T) {
					rng := rand.New(rand.NewPCG(seed, 31+uint64(off)))
					p := &Problem{Points: pts}
					cur := cmplx.Rect(5, 35*math.Pi/180)
					if ac {
						p.Phasors = phasorReadings(pts, []Line{line}, []complex128{cur}, 2, rng)
					} else {
						p.Fields = simulate(pts, []Line{line}, []float64{5}, bg, 5, rng)
					}
					res, err := FitLines(p, nil)
					if err != nil {
						t.Fatal(err)
					}
					if len(res.Sources) != 1 {
						t.Fatalf("%d sources, want 1", len(res.Sources))
					}
					e := res.Sources[0]
					held, notes := heldNote(res)
					if held || !e.Identifiable.Azimuth || !e.Identifiable.Dip {
						t.Fatalf("angles not fitted (identifiable %+v): %s", e.Identifiable, notes)
					}
					// The reported direction may be either way along the line.
					flip := dot(e.Dir, line.Dir) < 0
					az := math.Remainder(e.Azimuth-off, 180)
					dip := e.Dip
					if flip {
						dip = -dip
					}
					checks := []struct {
						name       string
						err, sigma float64
					}{
						{"azimuth", az, e.AzimuthSigma},
						{"dip", dip, e.DipSigma},
						{"depth", e.Depth - 1.5, e.DepthSigma},
					}
					if ac {
						ph := cmplx.Phase(cur) * 180 / math.Pi
						if flip {
							ph += 180
						}
						checks = append(checks,
							struct {
								name       string
								err, sigma float64
							}{"current", e.Current - cmplx.Abs(cur), e.CurrentSigma},
							struct {
								name       string
								err, sigma float64
							}{"phase", math.Remainder(e.Phase-ph, 360), e.PhaseSigma})
					} else {
						c := e.Current
						if flip {
							c = -c
						}
						checks = append(checks, struct {
							name       string
							err, sigma float64
						}{"current", c - 5, e.CurrentSigma})
					}
					for _, c := range checks {
						if !(c.sigma > 0) || math.Abs(c.err) > 4*c.sigma {
							t.Errorf("%s off by %.4g ± %.3g, want within 4 sigma", c.name, c.err, c.sigma)
						}
						pulls[c.name] = append(pulls[c.name], c.err/c.sigma)
					}
					// The readings fix the azimuth to well under a degree.
					if e.AzimuthSigma > 0.5 {
						t.Errorf("azimuth sigma %.3g deg: expected well under a degree", e.AzimuthSigma)
					}
				})
			}
		}
		for q, p := range pulls {
			var s2 float64
			for _, x := range p {
				s2 += x * x
			}
			rms := math.Sqrt(s2 / float64(len(p)))
			t.Logf("ac %v: %s pulls RMS %.2f over %d fits", ac, q, rms, len(p))
			if len(p) < 3*seeds || rms < 0.7 || rms > 1.3 {
				t.Errorf("ac %v: %s pulls RMS %.2f over %d fits, want %d fits with RMS 0.7 to 1.3", ac, q, rms, len(p), 3*seeds)
			}
		}
	}
}

// TestSingleTraverseNearlyAlong: a line crossing the traverse at 6 or 3 degrees lies
// beyond the 80 degrees either side of square that a single traverse's azimuth is
// searched over. No fit may report its angles as fitted and miss the truth beyond 3
// sigma (with the bound at 80 degrees and nothing more, fits pressed against it were
// reported 1 to 10 sigma short, their currents 30 to 120% high), and where the angles
// are held square for the bound, the notes name the bound (AzimuthAtBoundNote, "80 deg
// either side of square", "under 10 deg"), not "azimuth not resolved by the data",
// which misstates why.
func TestSingleTraverseNearlyAlong(t *testing.T) {
	bg := [3]float64{-300, 18500, -46000}
	for _, off := range []float64{84, 87} {
		pts, line := obliqueCase(off)
		for seed := range uint64(6) {
			t.Run(fmt.Sprintf("off%g/seed%d", off, seed), func(t *testing.T) {
				rng := rand.New(rand.NewPCG(seed, 37))
				f := simulate(pts, []Line{line}, []float64{5}, bg, 5, rng)
				res, err := FitLines(&Problem{Points: pts, Fields: f}, nil)
				if err != nil {
					t.Fatal(err)
				}
				held, notes := heldNote(res)
				if strings.Contains(notes, "azimuth not resolved by the data") {
					t.Errorf("notes say the data do not resolve the angles: %s", notes)
				}
				if held && strings.Contains(notes, AzimuthAtBoundNote) &&
					(!strings.Contains(notes, "80 deg either side of square") || !strings.Contains(notes, "under 10 deg")) {
					t.Errorf("the bound note does not say where the bound lies: %s", notes)
				}
				e := res.Sources[0]
				if held || !e.Identifiable.Azimuth || !(math.Abs(e.Current) > 3*e.CurrentSigma) ||
					slices.Contains(e.Notes, EdgeOfSearchNote) {
					t.Logf("not fitted (as it may not be): %s", notes)
					return
				}
				c := e.Current
				if dot(e.Dir, line.Dir) < 0 {
					c = -c
				}
				az := math.Remainder(e.Azimuth-off, 180)
				t.Logf("fitted: %.3f ± %.3f A, azimuth off by %.3f ± %.3f deg", c, e.CurrentSigma, az, e.AzimuthSigma)
				if !within3ok(c, 5, e.CurrentSigma) || !within3ok(az, 0, e.AzimuthSigma) {
					t.Errorf("angles reported as fitted, but current %.3f ± %.3f A (truth 5) and azimuth off by %.3f ± %.3f deg: %s",
						c, e.CurrentSigma, az, e.AzimuthSigma, notes)
				}
			})
		}
	}
}
