package inverse

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// linesMissNoteOf returns the fit's LinesMissNote, or "".
func linesMissNoteOf(r *Result) string {
	for _, n := range r.Notes {
		if strings.HasPrefix(n, LinesMissNote) {
			return n
		}
	}
	return ""
}

// teeReadings simulates the case of review rv18c: 81 readings 0.1 m apart
// at 0.3 m height across a 30 A cable 0.8 m down (along y, 0.25 m east),
// with a tee, a segment carrying 8 A 0.6 m down from under the traverse at
// x = 0.5 m to 30 m south of it, and 1 nT of white noise per axis (seed 1):
// DC fields over a uniform background, or AC phasors (the currents at 37
// degrees) when ac. The fields are the Biot-Savart fields of an infinite
// line and of a finite segment (DOMAIN.md; Hanson & Hirshman 2002 for the
// segment).
func teeReadings(ac bool) *Problem {
	rng := rand.New(rand.NewPCG(1, 1))
	cable := Line{Point: [3]float64{0.25, 0, -0.8}, Dir: [3]float64{0, 1, 0}}
	tee := Segment{A: [3]float64{0.5, 0, -0.6}, B: [3]float64{0.5, -30, -0.6}}
	ph := complex(math.Cos(37*math.Pi/180), math.Sin(37*math.Pi/180))
	var p Problem
	for i := range 81 {
		r := [3]float64{-4 + 0.1*float64(i), 0, 0.3}
		b, c := cable.Field(r, 30), tee.Field(r, 8)
		p.Points = append(p.Points, r)
		if ac {
			var v [3]complex128
			for j := range 3 {
				v[j] = complex((b[j]+c[j])*nT, 0)*ph + complex(rng.NormFloat64(), rng.NormFloat64())
			}
			p.Phasors = append(p.Phasors, v)
			continue
		}
		bg := [3]float64{0, 19000, -45000}
		p.Fields = append(p.Fields, [3]float64{bg[0] + (b[0]+c[0])*nT + rng.NormFloat64(), bg[1] + (b[1]+c[1])*nT + rng.NormFloat64(), bg[2] + (b[2]+c[2])*nT + rng.NormFloat64()})
	}
	return &p
}

// floorOf is the readings' noise floor as FitLines takes it with
// Problem.Sigma zero (diffNoise).
func floorOf(p *Problem) float64 {
	var y []float64
	nr := 1
	if p.Phasors != nil {
		nr = 2
		for _, v := range p.Phasors {
			for j := range 3 {
				y = append(y, real(v[j]), imag(v[j]))
			}
		}
	} else {
		for _, v := range p.Fields {
			y = append(y, v[:]...)
		}
	}
	return diffNoise(y, nr, make([]float64, len(y)))
}

// TestFitLinesMissNote: with Problem.Sigma zero, FitLines estimates the
// noise from its own residual, so chi-square per degree of freedom is 1
// however badly the lines fit. One cable fitted as one line beside an
// unmodelled 8 A tee (rv18c) missed its 1 nT readings by 9.19 nT RMS with a
// 0.024 A current sigma and no note; a cable beside a magnetised object (a
// point dipole, DOMAIN.md) the same. Both now carry LinesMissNote, DC and AC
// (the residual per degree of freedom is 10.4 and 4.4 times the readings'
// noise floor for the DC and AC tee, 21 and 8.6 times for the object of
// 1 A m^2). Given the noise (Problem.Sigma),
// the chi-square note says it instead, and LinesMissNote is not added.
// Before this note, the notes of these fits were empty.
func TestFitLinesMissNote(t *testing.T) {
	for _, ac := range []bool{false, true} {
		p := teeReadings(ac)
		r, err := FitLines(p, &Settings{Count: 1})
		if err != nil {
			t.Fatal(err)
		}
		t.Logf("AC %v tee: residual %.3g times the floor", ac, r.Sigma/floorOf(p))
		if linesMissNoteOf(r) == "" {
			t.Errorf("AC %v: one line beside an unmodelled tee, RMS %.3g nT for 1 nT noise, current %.4g ± %.2g A, notes %q: want %q", ac, r.RMS, r.Sources[0].Current, r.Sources[0].CurrentSigma, r.Notes, LinesMissNote)
		}
		p.Sigma = 1
		r, err = FitLines(p, &Settings{Count: 1})
		if err != nil {
			t.Fatal(err)
		}
		if n := linesMissNoteOf(r); n != "" || !strings.Contains(strings.Join(r.Notes, "\n"), "chi-square") {
			t.Errorf("AC %v, Sigma given: notes %q, want the chi-square note and not %q", ac, r.Notes, LinesMissNote)
		}
	}
	// A 20 A cable 1 m down and a magnetised object of 1 A m^2 (mostly
	// vertical) 0.8 m down, 1.2 m east of it, 1 nT of noise.
	for _, ac := range []bool{false, true} {
		rng := rand.New(rand.NewPCG(3, 1))
		pts := traverse(61, -3, 3, 0, 0.3)
		line := Line{Point: [3]float64{0, 0, -1}, Dir: [3]float64{0, 1, 0}}
		obj, mom := Dipole{Pos: [3]float64{1.2, 0.3, -0.8}}, [3]float64{0.3, -0.2, 1}
		p := &Problem{Points: pts}
		if ac {
			p.Phasors = phasorReadings(pts, []Line{line}, []complex128{complex(16, 12)}, 1, rng)
		} else {
			p.Fields = simulate(pts, []Line{line}, []float64{20}, [3]float64{150, 19200, -45100}, 1, rng)
		}
		for i, r := range pts {
			b := obj.Field(r, mom)
			for j := range 3 {
				if ac {
					p.Phasors[i][j] += complex(b[j]*nT, 0)
				} else {
					p.Fields[i][j] += b[j] * nT
				}
			}
		}
		r, err := FitLines(p, &Settings{Count: 1})
		if err != nil {
			t.Fatal(err)
		}
		t.Logf("AC %v object: residual %.3g times the floor", ac, r.Sigma/floorOf(p))
		if linesMissNoteOf(r) == "" {
			t.Errorf("AC %v: one line beside a magnetised object, RMS %.3g nT for 1 nT noise, notes %q: want %q", ac, r.RMS, r.Notes, LinesMissNote)
		}
	}
}

// TestFitLinesMissNoteClean: fits that the model explains carry no
// LinesMissNote. Seeded simulations (simulated truth) of one line and of
// two parallel lines 1.5-2.5 m apart (the second carrying 0.3-1 times the
// first's current, either way), 2-30 A, 0.5-2 m down, up to 40 degrees off
// square to the readings, at 0.3, 1 or 3 nT of white noise, DC fields and
// AC phasors, fitted with the automatic count and Problem.Sigma zero, on
// four layouts: a 10 m traverse of 101 readings 0.1 m apart; one walked
// (along-track jitter of ±3 cm, 5 cm across, 2 cm in height); one unevenly
// spaced (0.05-0.25 m); and three parallel traverses 1 m apart. The
// allowed count of notes is zero: under white noise alone the residual
// exceeded 3 times the floor in 2 of 200000 draws at 20 readings (see
// lineMissFactor), and the fits here reached 1.41 times (the largest of
// 960 while the threshold was chosen).
func TestFitLinesMissNoteClean(t *testing.T) {
	const allowed = 0
	seeds := 13 // 4 layouts x 2 x 2 x 13 = 208 fits
	if testing.Short() {
		seeds = 3
	}
	layouts := []string{"even", "walked", "uneven", "parallel"}
	var fits, notes int
	var worst float64
	for _, lay := range layouts {
		for _, ac := range []bool{false, true} {
			for nl := 1; nl <= 2; nl++ {
				for s := range seeds {
					rng := rand.New(rand.NewPCG(uint64(s)+1, 99))
					noise := []float64{0.3, 1, 3}[s%3]
					var pts [][3]float64
					switch lay {
					case "even":
						pts = traverse(101, -5, 5, 0, 0.3)
					case "walked":
						for i := range 101 {
							pts = append(pts, [3]float64{-5 + 0.1*float64(i) + 0.03*(2*rng.Float64()-1), 0.05 * rng.NormFloat64(), 0.3 + 0.02*rng.NormFloat64()})
						}
					case "uneven":
						for x := -5.0; x < 5; x += 0.05 + 0.2*rng.Float64() {
							pts = append(pts, [3]float64{x, 0, 0.3})
						}
					case "parallel":
						for k := range 3 {
							for i := range 67 {
								pts = append(pts, [3]float64{-5 + 0.15*float64(i) + 0.02*rng.NormFloat64(), float64(k) - 1 + 0.03*rng.NormFloat64(), 0.3})
							}
						}
					}
					az := (rng.Float64()*80 - 40) * math.Pi / 180
					dir := [3]float64{math.Sin(az), math.Cos(az), 0}
					lines := []Line{{Point: [3]float64{rng.Float64() - 0.5, 0, -0.5 - 1.5*rng.Float64()}, Dir: dir}}
					cur := []float64{2 + 28*rng.Float64()}
					if nl == 2 {
						lines = append(lines, Line{Point: [3]float64{lines[0].Point[0] + 1.5 + rng.Float64(), 0, -0.5 - 1.5*rng.Float64()}, Dir: dir})
						cur = append(cur, (0.3+0.7*rng.Float64())*cur[0]*[]float64{1, -1}[s%2])
					}
					p := &Problem{Points: pts}
					if ac {
						cc := make([]complex128, nl)
						for k := range cur {
							cc[k] = complex(0.8*cur[k], 0.6*cur[k])
						}
						p.Phasors = phasorReadings(pts, lines, cc, noise, rng)
					} else {
						p.Fields = simulate(pts, lines, cur, [3]float64{150, 19200, -45100}, noise, rng)
					}
					r, err := FitLines(p, nil)
					if err != nil {
						t.Fatalf("%s AC %v %d lines seed %d: %v", lay, ac, nl, s+1, err)
					}
					fits++
					if n := linesMissNoteOf(r); n != "" {
						notes++
						t.Logf("%s AC %v %d lines seed %d, noise %g nT: %s", lay, ac, nl, s+1, noise, n)
					}
					worst = math.Max(worst, r.Sigma/floorOf(p))
				}
			}
		}
	}
	t.Logf("%d fits, %d with %q; the largest residual per degree of freedom %.3g times the noise floor", fits, notes, LinesMissNote, worst)
	if notes > allowed {
		t.Errorf("%d of %d clean fits noted as missing the readings, want at most %d", notes, fits, allowed)
	}
}
