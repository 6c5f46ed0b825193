package inverse_test

import (
	"fmt"
	"log"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"strings"

	"undercurrent/inverse"
)

// A traverse across the Fenwick Lane cable at Harrow Fen substation: 41 three-axis
// readings every 0.1 m, sensor 0.3 m above the ground, from raw positions and fields to
// the current and the depth of cover.
func ExampleFitLines() {
	var p inverse.Problem
	for i := range 41 {
		p.Points = append(p.Points, [3]float64{-2 + 0.1*float64(i), 0, 0.3})
	}
	// The readings: the Earth's field plus the cable's (35 A northwards, 0.6 m deep,
	// 0.25 m east of the marker), computed here with the forward model.
	cable := inverse.Line{Point: [3]float64{0.25, 0, -0.6}, Dir: [3]float64{0, 1, 0}}
	for _, r := range p.Points {
		b := cable.Field(r, 35)
		p.Fields = append(p.Fields, [3]float64{1200 + 1e9*b[0], 17500 + 1e9*b[1], -46000 + 1e9*b[2]})
	}
	p.Sigma = 5 // nT, the sensor's noise

	ground := 0.0
	res, err := inverse.FitLines(&p, &inverse.Settings{ReferenceZ: &ground})
	if err != nil {
		log.Fatal(err)
	}
	s := res.Sources[0]
	fmt.Printf("conductors: %d\n", len(res.Sources))
	fmt.Printf("current: %.2f A (one sigma %.3f A)\n", s.Current, s.CurrentSigma)
	fmt.Printf("depth of cover: %.3f m (one sigma %.1f mm) below %s\n", s.Depth, 1000*s.DepthSigma, res.DepthReference)
	fmt.Printf("offset: %.3f m east of the marker\n", s.Offset)
	fmt.Printf("azimuth identifiable: %v\n", s.Identifiable.Azimuth)
	// Output:
	// conductors: 1
	// current: 35.00 A (one sigma 0.017 A)
	// depth of cover: 0.600 m (one sigma 0.4 mm) below ReferenceZ
	// offset: 0.250 m east of the marker
	// azimuth identifiable: true
}

// The live pipeline knows where the Fenwick Lane cable and its return run and only
// wants their currents in each demodulated window.
func ExampleFitStrengths() {
	out := inverse.Line{Point: [3]float64{-0.15, 0, -0.8}, Dir: [3]float64{0, 1, 0}}
	ret := inverse.Line{Point: [3]float64{0.15, 0, -0.8}, Dir: [3]float64{0, 1, 0}}
	var p inverse.Problem
	for i := range 5 {
		r := [3]float64{-1 + 0.5*float64(i), 0, 0}
		a, b := out.Field(r, 1e9), ret.Field(r, 1e9) // nT per ampere
		var ph [3]complex128
		for j := range 3 {
			ph[j] = complex(a[j], 0)*cmplx.Rect(120, 0.2) + complex(b[j], 0)*cmplx.Rect(118, 0.2+3.1)
		}
		p.Points = append(p.Points, r)
		p.Phasors = append(p.Phasors, ph)
	}
	p.Sigma = 0.5
	res, err := inverse.FitStrengths(&p, []inverse.Source{out, ret}, &inverse.Settings{Background: inverse.BackgroundNone})
	if err != nil {
		log.Fatal(err)
	}
	for i, s := range res.Sources {
		fmt.Printf("line %d: %.2f A RMS at %.2f deg\n", i+1, s.Current, s.Phase)
	}
	// Output:
	// line 1: 120.00 A RMS at 11.46 deg
	// line 2: 118.00 A RMS at -170.92 deg
}

// A traverse across the Fenwick Lane cable where an unmodelled tee leaves it
// (a branch carrying 8 A from under the readings), fitted as one line with the
// noise left for the fit to estimate (Problem.Sigma zero). Chi-square per degree
// of freedom is then 1 however badly the line fits, and the current's sigma is
// a few hundredths of an ampere; the note beginning with inverse.LinesMissNote
// says the residual is far over the readings' own noise floor: the model does
// not explain the readings, the current (30 A simulated) is biased far beyond
// its sigma, and a fit of two lines is called for.
func ExampleFitLines_missNote() {
	cable := inverse.Line{Point: [3]float64{0.25, 0, -0.8}, Dir: [3]float64{0, 1, 0}}
	tee := inverse.Segment{A: [3]float64{0.5, 0, -0.6}, B: [3]float64{0.5, -30, -0.6}}
	rng := rand.New(rand.NewPCG(1, 1)) // 1 nT of sensor noise per axis
	var p inverse.Problem
	for i := range 81 {
		r := [3]float64{-4 + 0.1*float64(i), 0, 0.3}
		b, c := cable.Field(r, 30), tee.Field(r, 8)
		p.Points = append(p.Points, r)
		p.Fields = append(p.Fields, [3]float64{1e9*(b[0]+c[0]) + rng.NormFloat64(), 19000 + 1e9*(b[1]+c[1]) + rng.NormFloat64(), -45000 + 1e9*(b[2]+c[2]) + rng.NormFloat64()})
	}
	res, err := inverse.FitLines(&p, &inverse.Settings{Count: 1})
	if err != nil {
		log.Fatal(err)
	}
	for _, n := range res.Notes {
		if strings.HasPrefix(n, inverse.LinesMissNote) {
			fmt.Println("note:", inverse.LinesMissNote)
		}
	}
	s := res.Sources[0]
	fmt.Printf("current: %.1f A (one sigma %.2f A), residual %.0f nT RMS\n", math.Abs(s.Current), s.CurrentSigma, res.RMS)
	// Output:
	// note: the lines fitted miss the readings
	// current: 25.8 A (one sigma 0.02 A), residual 9 nT RMS
}
