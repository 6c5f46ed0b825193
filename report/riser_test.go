package report

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"undercurrent/inverse"
)

// A vertical conductor (a riser or down-lead) beside the traverses is not
// fitted (lines dip at most 80 degrees); a traverse near it was fitted as
// a shallow buried line at the dip's bound, called sound, and its cover
// raised a shallow-cover warning (found in review: -16 A at 0.045 m of
// cover, 80.0 degrees). Five traverses (invented fixtures, DC at 2 nT;
// readings by Biot-Savart, inverse.Line.Field) 4 m apart, the riser of
// 25 A standing 1 m past the third one: a line fitted at the bound is not
// sound, carries the note, and gives no cover finding. Before, such a
// group was sound and its cover checked.
func TestRiserBesideTraverseNotSound(t *testing.T) {
	const noise = 2.0
	rng := rand.New(rand.NewPCG(11, 12))
	riser := []inverse.Line{{Point: [3]float64{0.5, 9, 0}, Dir: [3]float64{0, 0, 1}}}
	var fits []Fit
	for i, k := range []string{"T01", "T02", "T03", "T04", "T05"} {
		p := linesAcross(rng, riser, []float64{25}, 4*float64(i), noise)
		res, err := inverse.FitLines(p, nil)
		fits = append(fits, Fit{Key: k, Problem: p, Result: res, Err: err, MeasuredNoise: noise})
	}
	d, err := Build(Document{}, fits, &BuildSettings{SensorHeight: 0.3, MinCover: 0.6})
	if err != nil {
		t.Fatal(err)
	}
	atBound := 0
	for i, f := range fits {
		if f.Result == nil || len(f.Result.Sources) == 0 {
			continue
		}
		s := f.Result.Sources[0]
		if !(math.Abs(s.Dip) >= 79) {
			continue
		}
		atBound++
		noted := false
		for _, n := range s.Notes {
			noted = noted || n == inverse.DipAtBoundNote
		}
		g := d.Groups[i]
		if !noted || g.OK && g.Problem == "" {
			t.Errorf("%s: line at dip %.1f deg (notes %q) and group sound (OK %v, problem %q)", f.Key, s.Dip, s.Notes, g.OK, g.Problem)
		}
	}
	if atBound == 0 {
		t.Fatal("no traverse fitted at the dip's bound: the fixture does not reproduce the riser's fit")
	}
	for _, fd := range d.Findings {
		if strings.Contains(fd.Message, "cover may be less") {
			t.Errorf("cover finding from a riser: %s", fd.Message)
		}
	}
}
