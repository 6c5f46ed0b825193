package inverse

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// FitStrengths and its kin word a bad source, a reading on a source and a
// strength the readings cannot separate in the caller's terms: the source
// by its index in the caller's list and its kind, the reading by its index
// and position, a background column by its name. Readings: a 41-reading
// traverse east-west over a 10 A line 1.2 m down (simulated: Biot-Savart
// field, uniform background, 1 nT noise). Before, a reading on a segment
// was "reading 20 lies on source 0", a Line with Dir zero "reading 0 lies
// on source 0", a second copy of a line "strength 1 cannot be separated"
// and the gradient a single traverse cannot see "strength 6", a column the
// caller never listed; an empty Polyline was accepted and fitted nothing.
func TestFitStrengthsErrorsInCallersTerms(t *testing.T) {
	pts := traverse(41, -4, 4, 0, 0)
	cable := Line{Point: [3]float64{0.2, 0, -1.2}, Dir: [3]float64{0, 1, 0}}
	rng := rand.New(rand.NewPCG(19, 4))
	p := &Problem{Points: pts, Fields: simulate(pts, []Line{cable}, []float64{10}, [3]float64{120, 18650, -45200}, 1, rng), Sigma: 1}
	grad := &Settings{Background: BackgroundGradient}
	// Reading 20 of traverse(41, -4, 4, ...) is at the origin, 0.2 m from
	// its neighbours.
	through := Segment{A: [3]float64{-0.1, 0, 0}, B: [3]float64{0.1, 0, 0}}
	cases := []struct {
		name    string
		sources []Source
		set     *Settings
		want    []string
	}{
		{"reading on a segment", []Source{cable, through}, nil, []string{"reading 20 at (0, 0, 0) m lies on sources[1] (Segment)"}},
		{"line without direction", []Source{cable, Line{Point: cable.Point}}, nil, []string{"sources[1] (Line) has no direction"}},
		{"segment without length", []Source{Segment{A: cable.Point, B: cable.Point}}, nil, []string{"sources[0] (Segment) has no length"}},
		{"empty polyline", []Source{cable, Polyline{}}, nil, []string{"sources[1] (Polyline) has 0 vertices"}},
		{"one-vertex polyline", []Source{cable, &Polyline{Vertices: [][3]float64{{0, 0, -1}}}}, nil, []string{"sources[1] (*Polyline) has 1 vertices"}},
		{"polyline leg of no length", []Source{Polyline{Vertices: [][3]float64{{0, -5, -1}, {0, 0, -1}, {0, 0, -1}}}}, nil, []string{"sources[0] (Polyline) has vertices 1 and 2 in one place"}},
		{"dipole not finite", []Source{cable, Dipole{Pos: [3]float64{math.NaN(), 0, -1}}}, nil, []string{"sources[1] (Dipole) has a position that is not finite"}},
		{"same line twice", []Source{cable, &cable}, nil, []string{"the current of sources[1] (*Line) cannot be separated"}},
		{"background source beside the background", []Source{cable, Background{}}, nil, []string{"the background term bg.e (Settings.Background) cannot be separated"}},
		// One traverse at one height along east: the gradient's terms
		// across it (north-north) leave no trace in the readings.
		{"gradient across a single traverse", []Source{cable}, grad, []string{"the background term grad.nn (Settings.Background) cannot be separated"}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			var errs []error
			_, err := FitStrengths(p, c.sources, c.set)
			errs = append(errs, err)
			_, err = StrengthsRSS(p, c.sources, c.set)
			errs = append(errs, err)
			for i, err := range errs {
				fn := []string{"FitStrengths", "StrengthsRSS"}[i]
				if err == nil {
					t.Errorf("%s: no error", fn)
					continue
				}
				for _, w := range c.want {
					if !strings.Contains(err.Error(), w) {
						t.Errorf("%s: %q, want it to say %q", fn, err, w)
					}
				}
			}
		})
	}
	// ReadingBasis and StrengthsScan refuse an empty Polyline too (before:
	// an empty basis, and an index out of range in StrengthsScan.RSS).
	if _, err := ReadingBasis(p, Polyline{}); err == nil || !strings.Contains(err.Error(), "the source (Polyline) has 0 vertices") {
		t.Errorf("ReadingBasis(Polyline{}): %v, want an error naming the empty Polyline", err)
	}
	if _, err := NewStrengthsScan(p, []Source{cable, Polyline{}}, nil); err == nil || !strings.Contains(err.Error(), "fixed[1] (Polyline) has 0 vertices") {
		t.Errorf("NewStrengthsScan: %v, want an error naming fixed[1]", err)
	}
	sc, err := NewStrengthsScan(p, []Source{cable}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := sc.RSS(Polyline{}); err == nil || !strings.Contains(err.Error(), "the source (Polyline) has 0 vertices") {
		t.Errorf("StrengthsScan.RSS(Polyline{}): %v, want an error naming the empty Polyline", err)
	}
	if _, err := sc.RSS(through); err == nil || !strings.Contains(err.Error(), "reading 20 at (0, 0, 0) m lies on the source (Segment)") {
		t.Errorf("StrengthsScan.RSS(segment through a reading): %v, want an error naming the reading and the source", err)
	}
}

// The exported entry points of the package given nil or zero values
// return an error (or, without an error to return, a documented zero),
// never panic.
func TestZeroValueEntryPoints(t *testing.T) {
	var sc *StrengthsScan
	var nilLine *Line
	p := &Problem{Points: traverse(9, -1, 1, 0, 0), Fields: make([][3]float64, 9)}
	errs := map[string]func() error{
		"FitLines(nil)":                func() error { _, err := FitLines(nil, nil); return err },
		"FitLines(&Problem{})":         func() error { _, err := FitLines(&Problem{}, nil); return err },
		"FitLines(Dipoles: 5)":         func() error { _, err := FitLines(p, &Settings{Dipoles: 5}); return err },
		"FitStrengths(nil)":            func() error { _, err := FitStrengths(nil, nil, nil); return err },
		"FitStrengths(no sources)":     func() error { _, err := FitStrengths(p, nil, nil); return err },
		"StrengthsRSS(nil)":            func() error { _, err := StrengthsRSS(nil, nil, nil); return err },
		"ReadingBasis(nil)":            func() error { _, err := ReadingBasis(nil, nil); return err },
		"ReadingBasis(Line{})":         func() error { _, err := ReadingBasis(p, Line{}); return err },
		"NewStrengthsScan(nil)":        func() error { _, err := NewStrengthsScan(nil, nil, nil); return err },
		"NewStrengthsScan(nil source)": func() error { _, err := NewStrengthsScan(p, []Source{nil}, nil); return err },
		"(*StrengthsScan)(nil).RSS":    func() error { _, err := sc.RSS(Line{}); return err },
		"StrengthsScan.RSS(nil *Line)": func() error {
			s, err := NewStrengthsScan(p, nil, nil)
			if err != nil {
				return nil // the test wants an error from RSS
			}
			_, err = s.RSS(nilLine)
			return err
		},
	}
	for name, f := range errs {
		func() {
			defer func() {
				if v := recover(); v != nil {
					t.Errorf("%s: panic %v", name, v)
				}
			}()
			if err := f(); err == nil {
				t.Errorf("%s: no error", name)
			}
		}()
	}
	func() {
		defer func() {
			if v := recover(); v != nil {
				t.Errorf("panic %v", v)
			}
		}()
		if v := ResidualAR1(nil); v != 0 {
			t.Errorf("ResidualAR1(nil) = %v, want 0", v)
		}
		if f := Fields(nil, p.Points, nil, nil); len(f) != len(p.Points) || f[0] != [3]float64{} {
			t.Errorf("Fields(nil source) = %v, want zeros at every point", f)
		}
		if b := (Polyline{}).Field([3]float64{1, 2, 3}, nil); b != [3]float64{} {
			t.Errorf("Polyline{}.Field = %v, want zero", b)
		}
	}()
}
