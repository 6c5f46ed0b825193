package report

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"undercurrent/inverse"
)

// Two parallel cables of the fictional Harrow Fen substation run east
// under seven traverses 10 m apart: cable 1 carries 40 A, 1.0 m below the
// sensors at north 0; cable 2 -15 A, 1.2 m below them at north 2.5 m. A
// steel object lies beside cable 2 at the fourth traverse. Readings every
// 0.25 m from north -6 m to 9 m at height 0, the field of the infinite
// lines and the point dipole (DOMAIN.md; the dipole as in Jackson,
// Classical Electrodynamics, eq. 5.56), a uniform Earth field and 1 nT of
// noise; each traverse fitted by inverse.FitLines with the count chosen
// automatically, as locate does.
var splitCables = [2]struct {
	north, depth, current float64
}{{0, 1.0, 40}, {2.5, 1.2, -15}}

// With the object at (30.4, 4.5, -0.8) m and a moment of (0.25, 0.15,
// -0.525) A m^2 the fourth traverse's fit takes four lines: 40 A, a pair of
// -19 A and +3 A about 0.3 m apart at cable 2 (absorbing the object's field)
// and a weak line at the object. A search that holds the pair placed the
// object 1.43 m deep and was rejected; with twice the moment the fit does
// not split.
var (
	splitObject = [3]float64{30.4, 4.5, -0.8}
	splitMoment = [3]float64{0.25, 0.15, -0.525}
)

func splitFits(t testing.TB, obj [3]float64, moment [3]float64) []Fit {
	rng := rand.New(rand.NewPCG(7, 77))
	earth := [3]float64{-150, 19200, -45100}
	var fits []Fit
	for i := range 7 {
		x := 10 * float64(i)
		prob := &inverse.Problem{Sigma: drumNoise}
		for k := -24; k <= 36; k++ {
			r := [3]float64{x, 0.25 * float64(k), 0}
			var b [3]float64
			for _, c := range splitCables {
				f := inverse.Line{Point: [3]float64{0, c.north, -c.depth}, Dir: [3]float64{1, 0, 0}}.Field(r, c.current)
				for a := range b {
					b[a] += f[a]
				}
			}
			if i == 3 {
				d := inverse.Dipole{Pos: obj}.Field(r, moment)
				for a := range b {
					b[a] += d[a]
				}
			}
			var m [3]float64
			for a := range m {
				m[a] = b[a]*1e9 + earth[a] + drumNoise*rng.NormFloat64()
			}
			prob.Points = append(prob.Points, r)
			prob.Fields = append(prob.Fields, m)
		}
		set := &inverse.Settings{}
		res, err := inverse.FitLines(prob, set)
		if err != nil {
			t.Fatalf("traverse %d: %v", i+1, err)
		}
		fits = append(fits, Fit{Key: fmt.Sprintf("H%d", i+1), Problem: prob, Result: res, Settings: set})
	}
	return fits
}

// TestBuildFindsObjectBesideSplitConductor builds the Harrow Fen document
// and checks that the object is found at the fourth traverse, its position
// and moment within 4 of their reported sigmas of the truth (the sigmas the
// Monte Carlo of dipole_coverage_test.go finds calibrated), that no current
// anomaly is reported, and that the refitted cable 2 there carries -15 A
// within 4 sigma. Besides the object above, the same object 1 m from
// cable 2 (north 3.5 m) with half, the same and twice the moment, whose
// fits split cable 2 too (a like pair, or a shallow weak line beside it),
// and the case with twice the moment at north 4.5 m, whose fit does not
// split. Before the merged search the four split cases found no object.
// One more needs the weak lines as starts (poorSearch): at 0.4 times the
// moment the pair's weaker member is under weakShare and left out from the
// start; without those starts it reports no object. The same object 0.5 m
// from cable 2 with four times the moment needed them too while a single
// traverse's azimuth was searched only 60 degrees either side of square:
// the fit then did not split, and the first search placed the object where
// it made up for a misplaced cable 2. Searched 80 degrees either side, the
// fit of three lines splits cable 2 (chi-square 147992 against 212677), and
// the merged search finds the object.
func TestBuildFindsObjectBesideSplitConductor(t *testing.T) {
	scaled := func(k float64) [3]float64 {
		return [3]float64{k * splitMoment[0], k * splitMoment[1], k * splitMoment[2]}
	}
	for _, c := range []struct {
		name   string
		obj    [3]float64
		moment [3]float64
		split  bool
	}{
		{"split fit", splitObject, splitMoment, true},
		{"twice the moment", splitObject, scaled(2), false},
		{"1 m from cable 2, like pair", [3]float64{30.4, 3.5, -0.8}, splitMoment, true},
		{"1 m from cable 2, twice the moment", [3]float64{30.4, 3.5, -0.8}, scaled(2), true},
		{"1 m from cable 2, four times the moment", [3]float64{30.4, 3.5, -0.8}, scaled(4), true},
		// The weak member of the pair, under weakShare of cable 1, is
		// left out from the start; the search then needs the weak lines
		// as starts (poorSearch).
		{"weak member of the pair", splitObject, scaled(0.4), true},
		{"0.5 m from cable 2, four times the moment", [3]float64{30.4, 3, -0.8}, scaled(4), true},
	} {
		t.Run(c.name, func(t *testing.T) {
			fits := splitFits(t, c.obj, c.moment)
			// The fixture is what it says: the fourth traverse's fit has
			// a close pair at cable 2 or not.
			f := &fits[3]
			var lines []*inverse.SourceEstimate
			for k := range f.Result.Sources {
				lines = append(lines, &f.Result.Sources[k])
			}
			if split := len(closeLines(f.Problem, lines)) < len(lines); split != c.split {
				t.Fatalf("H4 fit has a close pair: %v, want %v (%d lines)", split, c.split, len(lines))
			}
			d, err := Build(Document{}, fits, &BuildSettings{Noise: drumNoise})
			if err != nil {
				t.Fatal(err)
			}
			obj, m := c.obj, c.moment
			found := 0
			for _, f := range d.Findings {
				if f.Kind == "current-anomaly" {
					t.Errorf("current anomaly reported: %s", f.Message)
				}
				if f.Kind != "dipole-anomaly" {
					continue
				}
				found++
				if len(f.Groups) != 1 || f.Groups[0] != "H4" {
					t.Errorf("object found at %v, want H4", f.Groups)
				}
				checkObject(t, f, obj, m)
			}
			if found != 1 {
				t.Fatalf("%d magnetised objects reported, want 1", found)
			}
			for _, g := range d.Groups {
				if g.Key != "H4" {
					continue
				}
				// Two cables and the object: the pair is merged.
				var cable2 *Source
				n := 0
				for k := range g.Sources {
					s := &g.Sources[k]
					if s.Kind == KindDipole {
						continue
					}
					n++
					if cable2 == nil || math.Abs(s.Point[1]-splitCables[1].north) < math.Abs(cable2.Point[1]-splitCables[1].north) {
						cable2 = s
					}
				}
				if n != 2 {
					t.Errorf("H4 has %d conductors, want 2", n)
				}
				if cable2 == nil || math.Abs(cable2.Current-splitCables[1].current) > 4*cable2.CurrentSigma {
					t.Errorf("H4 cable 2 %+v, want %g A within 4 sigma", cable2, splitCables[1].current)
				}
			}
		})
	}
}

// TestCloseLines checks which lines closeLines keeps: the Harrow Fen
// cables, 2.5 m apart at 1.0 and 1.2 m, stay two; a weaker line within the
// depth of the deeper of the two of a stronger one, of either sign, goes;
// one just beyond stays.
func TestCloseLines(t *testing.T) {
	p := &inverse.Problem{Points: [][3]float64{{0, -6, 0}, {0, 9, 0}}}
	line := func(north, depth, current float64) *inverse.SourceEstimate {
		return &inverse.SourceEstimate{Point: [3]float64{0, north, -depth}, Dir: [3]float64{1, 0, 0}, Current: current}
	}
	for _, c := range []struct {
		name  string
		lines []*inverse.SourceEstimate
		keep  []float64 // currents kept
	}{
		{"two cables", []*inverse.SourceEstimate{line(0, 1, 40), line(2.5, 1.2, -15)}, []float64{40, -15}},
		{"opposite pair", []*inverse.SourceEstimate{line(0, 1, 40), line(2.62, 1.22, -19), line(2.91, 0.8, 3)}, []float64{40, -19}},
		{"like pair, weaker first", []*inverse.SourceEstimate{line(2.9, 0.8, 3), line(2.62, 1.22, 19)}, []float64{19}},
		{"within the deeper's depth", []*inverse.SourceEstimate{line(0, 1, 40), line(0.9, 0.5, 5)}, []float64{40}},
		{"just beyond both depths", []*inverse.SourceEstimate{line(0, 1, 40), line(1.05, 0.8, 5)}, []float64{40, 5}},
		{"the weaker deeper", []*inverse.SourceEstimate{line(0, 0.5, 40), line(0.9, 1, -5)}, []float64{40}},
	} {
		t.Run(c.name, func(t *testing.T) {
			got := closeLines(p, c.lines)
			var cur []float64
			for _, s := range got {
				cur = append(cur, s.Current)
			}
			if fmt.Sprint(cur) != fmt.Sprint(c.keep) {
				t.Errorf("kept %v, want %v", cur, c.keep)
			}
		})
	}
}

// BenchmarkBuildSplitConductor builds the Harrow Fen document, whose
// fourth traverse is searched twice (as fitted, then with the close pair
// merged).
func BenchmarkBuildSplitConductor(b *testing.B) {
	fits := splitFits(b, splitObject, splitMoment)
	for b.Loop() {
		if _, err := Build(Document{}, fits, &BuildSettings{Noise: drumNoise}); err != nil {
			b.Fatal(err)
		}
	}
}
