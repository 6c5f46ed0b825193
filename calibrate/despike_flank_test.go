package calibrate

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"undercurrent/ingest"
)

// mu0over2pi is μ0/2π in nT·m/A: the field of a long straight current I
// at distance r is μ0 I/(2π r) (Biot-Savart law; μ0 = 4π×10⁻⁷ T·m/A to the
// precision used here, CODATA 2018 gives 1.00000000055 times that).
const mu0over2pi = 200.0

// lineTraverse is a traverse of n readings d m apart across a long line
// current of I A along north, h m below the sensor, over it at reading
// n/2: the field's east and up components by Biot-Savart (east h/r², up -x/r²
// times μ0 I/2π) on a constant Earth's field, with Gaussian noise.
func lineTraverse(rng *rand.Rand, n int, d, h, I, noise float64) *ingest.Samples {
	s := &ingest.Samples{Source: "fenwick-lane.csv"}
	for i := range n {
		x := float64(i-n/2) * d
		r2 := x*x + h*h
		c := mu0over2pi * I / r2
		s.Time = append(s.Time, 0.1*float64(i))
		s.X = append(s.X, x)
		s.Y = append(s.Y, 0)
		s.Z = append(s.Z, 0)
		s.Bx = append(s.Bx, 1500+c*h+noise*rng.NormFloat64())
		s.By = append(s.By, 20000+noise*rng.NormFloat64())
		s.Bz = append(s.Bz, -47000-c*x+noise*rng.NormFloat64())
	}
	return s
}

// TestDespikeSpikeOnTheFlank: the Fenwick Lane traverse of the review, a
// 10 A line 1.5 m below the sensor (a peak of 1333 nT), 400 readings
// 0.05 m apart with 0.2 nT noise, and one +800 nT spike on bz 0.5 m from
// the peak, where bz changes by 44 nT a reading. The median filter's
// scale there, from 21 raw readings spanning hundreds of nT, let it pass;
// judged against the local trend it is removed, and nothing else is.
// Two and three spikes in a row (a passing vehicle) are removed too.
func TestDespikeSpikeOnTheFlank(t *testing.T) {
	for _, run := range []int{1, 2, 3} {
		rng := rand.New(rand.NewPCG(61, 62))
		s := lineTraverse(rng, 400, 0.05, 1.5, 10, 0.2)
		at := slices.IndexFunc(s.X, func(x float64) bool { return math.Abs(x-0.5) < 0.01 })
		var want []int
		for k := range run {
			s.Bz[at+k] += 800
			want = append(want, at+k)
		}
		rep, err := Despike(s, nil)
		if err != nil {
			t.Fatal(err)
		}
		if !slices.Equal(rep.Rows, want) {
			t.Errorf("%d spike(s) at x = 0.5 m (rows %v): removed rows %v", run, want, rep.Rows)
		}
		// The check that suggests --despike, at 10 scales, sees them too.
		s = lineTraverse(rand.New(rand.NewPCG(61, 62)), 400, 0.05, 1.5, 10, 0.2)
		for k := range run {
			s.Bz[at+k] += 800
		}
		flag, _, _, err := FindSpikes([][]float64{s.Bx, s.By, s.Bz}, &DespikeSettings{Threshold: 10})
		if err != nil {
			t.Fatal(err)
		}
		var got []int
		for i, f := range flag {
			if f {
				got = append(got, i)
			}
		}
		if !slices.Equal(got, want) {
			t.Errorf("%d spike(s): at 10 scales rows %v flagged, want %v", run, got, want)
		}
	}
}

// TestDespikeKeepsSharpAnomalies: no reading of a real anomaly, however
// strong, is taken for a spike when it spans enough readings: the field
// of a line current (Biot-Savart) at 2.5 reading spacings or more, and of
// a point dipole (B = μ0/4π (3(m·r̂)r̂ - m)/r³, vertical and horizontal
// moments along the traverse) at 5 spacings or more, both components,
// and a sine of 4 readings a cycle or more (an AC log's raw field), all
// 1e6 nT at the peak with no noise, so that only the shape decides. (The
// median filter, DespikeSettings.Median, cut readings of the line at 2.5
// spacings and of the dipoles at 5 to 6.)
func TestDespikeKeepsSharpAnomalies(t *testing.T) {
	shapes := map[string]func(x, h float64) [2]float64{
		"line": func(x, h float64) [2]float64 {
			r2 := x*x + h*h
			return [2]float64{h * h / r2, -x * h / r2} // east, up; 1 at the peak
		},
		"vertical dipole": func(x, h float64) [2]float64 {
			// m up at depth h below the sensor: r = (x, h) from the dipole.
			r := math.Hypot(x, h)
			mr := h / r // m·r̂
			return [2]float64{h * h * h * 3 * mr * (x / r) / (r * r * r), h * h * h * (3*mr*(h/r) - 1) / (r * r * r)}
		},
		"horizontal dipole": func(x, h float64) [2]float64 {
			r := math.Hypot(x, h)
			mr := x / r
			return [2]float64{h * h * h * (3*mr*(x/r) - 1) / (r * r * r), h * h * h * 3 * mr * (h / r) / (r * r * r)}
		},
	}
	for name, f := range shapes {
		least := 2.5
		if name != "line" {
			least = 5
		}
		for _, h := range []float64{least, least + 0.5, 6, 10, 30} {
			for _, off := range []float64{0, 0.25, 0.5} { // the peak between readings too
				var e, u []float64
				for i := range 401 {
					b := f(float64(i-200)+off, h)
					e = append(e, 1e6*b[0])
					u = append(u, 1e6*b[1])
				}
				_, per, _, err := FindSpikes([][]float64{e, u}, nil)
				if err != nil {
					t.Fatal(err)
				}
				if per[0]+per[1] > 0 {
					t.Errorf("%s at %g spacings (peak %g of a spacing off a reading): %v readings taken for spikes", name, h, off, per)
				}
			}
		}
	}
	// A sine of 4 readings a cycle or more (the raw field of an AC log).
	for _, per := range []float64{4, 4.5, 5, 7.3, 16, 100} {
		x := make([]float64, 2000)
		for i := range x {
			x[i] = 1e6 * math.Sin(2*math.Pi*float64(i)/per+0.3)
		}
		if _, n, _, _ := FindSpikes([][]float64{x}, nil); n[0] > 0 {
			t.Errorf("a sine of %g readings a cycle: %d readings taken for spikes", per, n[0])
		}
	}
}
