package inverse

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// TestStrengthsScanMatchesRSS checks the block-QR shortcut against StrengthsRSS (the
// full fit, whose linear algebra TestFitStrengthsAgainstGonum checks against gonum) for
// dipoles at random positions beside held lines: DC and AC, point and path-averaged
// readings, every background model, with and without fixed sources.
func TestStrengthsScanMatchesRSS(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	pts := grid(3, 30, 2, 0.8, 0)
	lines := []Line{
		{Point: [3]float64{0.3, 0, -0.9}, Dir: [3]float64{0.1, 1, 0}},
		{Point: [3]float64{-0.6, 0, -1.2}, Dir: [3]float64{0.05, 1, 0.02}},
	}
	dc := &Problem{Points: pts, Fields: simulate(pts, lines, []float64{25, -18}, [3]float64{17000, 1500, -44000}, 3, rng)}
	ac := &Problem{Points: pts, Phasors: make([][3]complex128, len(pts))}
	for i, f := range dc.Fields {
		for a := range 3 {
			ac.Phasors[i][a] = complex(f[a]-[3]float64{17000, 1500, -44000}[a], 0.3*f[a]*rng.NormFloat64()/50)
		}
	}
	travel := &Problem{Points: pts, Fields: dc.Fields, Travel: make([][3]float64, len(pts))}
	for i := range travel.Travel {
		travel.Travel[i] = [3]float64{0.05, 0, 0}
	}
	cases := []struct {
		name  string
		p     *Problem
		fixed []Source
		bg    BackgroundModel
	}{
		{"DC, two lines, uniform", dc, []Source{lines[0], lines[1]}, BackgroundUniform},
		{"DC, one line, gradient", dc, []Source{lines[0]}, BackgroundGradient},
		{"DC, no fixed source, uniform", dc, nil, BackgroundUniform},
		{"DC, one line, no background", dc, []Source{lines[0]}, BackgroundNone},
		{"AC, two lines, uniform", ac, []Source{lines[0], lines[1]}, BackgroundUniform},
		{"path-averaged, two lines", travel, []Source{lines[0], lines[1]}, BackgroundUniform},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			set := &Settings{Background: c.bg}
			sc, err := NewStrengthsScan(c.p, c.fixed, set)
			if err != nil {
				t.Fatal(err)
			}
			for range 25 {
				d := Dipole{Pos: [3]float64{4*rng.Float64() - 2, 3*rng.Float64() - 1.5, -0.3 - 2*rng.Float64()}}
				got, err := sc.RSS(d)
				if err != nil {
					t.Fatal(err)
				}
				want, err := StrengthsRSS(c.p, append(append([]Source(nil), c.fixed...), d), set)
				if err != nil {
					t.Fatal(err)
				}
				if math.Abs(got-want) > 1e-9*want {
					t.Fatalf("dipole at %.3f: scan %.12g, StrengthsRSS %.12g", d.Pos, got, want)
				}
			}
			// A line as the extra source too (one strength).
			l := Line{Point: [3]float64{1.1, 0, -0.7}, Dir: [3]float64{0, 1, 0}}
			got, err := sc.RSS(l)
			if err != nil {
				t.Fatal(err)
			}
			want, err := StrengthsRSS(c.p, append(append([]Source(nil), c.fixed...), l), set)
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(got-want) > 1e-9*want {
				t.Fatalf("extra line: scan %.12g, StrengthsRSS %.12g", got, want)
			}
		})
	}
}

// TestStrengthsScanErrors: an extra source that duplicates a fixed one is refused as
// StrengthsRSS refuses it, and a source through a reading is named.
func TestStrengthsScanErrors(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	pts := traverse(41, -2, 2, 0, 0)
	l := Line{Point: [3]float64{0.2, 0, -1}, Dir: [3]float64{0, 1, 0}}
	p := &Problem{Points: pts, Fields: simulate(pts, []Line{l}, []float64{10}, [3]float64{}, 5, rng)}
	sc, err := NewStrengthsScan(p, []Source{l}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := StrengthsRSS(p, []Source{l, l}, nil); err == nil {
		t.Fatal("StrengthsRSS accepted a duplicated line")
	}
	if _, err := sc.RSS(l); err == nil || !strings.Contains(err.Error(), "cannot be separated") {
		t.Fatalf("duplicated line: %v", err)
	}
	if _, err := sc.RSS(Dipole{Pos: pts[7]}); err == nil || !strings.Contains(err.Error(), "reading 7") {
		t.Fatalf("dipole on a reading: %v", err)
	}
	if _, err := NewStrengthsScan(p, []Source{l, l}, nil); err == nil {
		t.Fatal("NewStrengthsScan accepted duplicated fixed lines")
	}
}

// BenchmarkStrengthsScan compares a dipole trial by the scan with StrengthsRSS, on one
// 41-point traverse with one line held (the magnetised-object search's inner loop).
func BenchmarkStrengthsScan(b *testing.B) {
	rng := rand.New(rand.NewPCG(1, 2))
	pts := traverse(41, -2, 2, 0, 0)
	l := Line{Point: [3]float64{0.2, 0, -1}, Dir: [3]float64{0, 1, 0}}
	p := &Problem{Points: pts, Fields: simulate(pts, []Line{l}, []float64{10}, [3]float64{17000, 1500, -44000}, 5, rng)}
	d := Dipole{Pos: [3]float64{0.5, 0.3, -1.2}}
	b.Run("scan", func(b *testing.B) {
		sc, err := NewStrengthsScan(p, []Source{l}, nil)
		if err != nil {
			b.Fatal(err)
		}
		b.ReportAllocs()
		for b.Loop() {
			if _, err := sc.RSS(d); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("StrengthsRSS", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			if _, err := StrengthsRSS(p, []Source{l, d}, nil); err != nil {
				b.Fatal(err)
			}
		}
	})
}

// TestReadingBasis: the field per unit moment of a dipole at every reading equals
// Dipole.Basis at the points for point readings, and a fine numerical mean along each
// path (2000 points, fineMean) for path-averaged ones, to the quadrature's accuracy
// (three-point Gauss-Legendre on a path a tenth of the distance: 1e-6 relative).
func TestReadingBasis(t *testing.T) {
	d := Dipole{Pos: [3]float64{0.3, 0.2, -1}}
	var pts, trav [][3]float64
	for k := range 15 {
		pts = append(pts, [3]float64{-1.4 + 0.2*float64(k), 0, 0})
		trav = append(trav, [3]float64{0.08, 0.03, 0.01})
	}
	for _, withTravel := range []bool{false, true} {
		p := &Problem{Points: pts, Fields: make([][3]float64, len(pts))}
		if withTravel {
			p.Travel = trav
		}
		got, err := ReadingBasis(p, d)
		if err != nil {
			t.Fatal(err)
		}
		for i, r := range pts {
			for c := range 3 {
				var m [3]float64
				m[c] = 1
				var want [3]float64
				if withTravel {
					want = scale(fineMean(r, trav[i], 2000, func(q [3]float64) [3]float64 { return d.Field(q, m) }), nT)
				} else {
					want = scale(d.Field(r, m), nT)
				}
				for j := range 3 {
					if math.Abs(got[i][c][j]-want[j]) > 1e-6*norm(want)+1e-12 {
						t.Fatalf("travel %v, reading %d, moment axis %d: %v, want %v", withTravel, i, c, got[i][c], want)
					}
				}
			}
		}
	}
	if _, err := ReadingBasis(&Problem{Points: pts, Fields: make([][3]float64, len(pts))}, Dipole{Pos: pts[3]}); err == nil {
		t.Error("a dipole on a reading gave a basis")
	}
}
