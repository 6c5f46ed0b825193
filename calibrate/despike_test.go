package calibrate

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"gonum.org/v1/gonum/mat"

	"undercurrent/ingest"
)

func TestDespikeRemovesInsertedSpikes(t *testing.T) {
	// A slowly varying field with 1 nT Gaussian noise and spikes of ±40 nT
	// (40 sigma) at known rows, including two adjacent ones and one at the
	// very start. The median/MAD (Hampel) filter must remove exactly those
	// rows, in every column, and few others: with the defaults (k = 5, a
	// 21-sample window) false alarms on Gaussian noise are under 0.1% per
	// axis, so under 0.5% of rows over three axes.
	const n = 5000
	rng := rand.New(rand.NewPCG(23, 24))
	s := &ingest.Samples{Source: "kestrel-moor.csv"}
	for i := 0; i < n; i++ {
		tt := float64(i) * 0.1
		s.Time = append(s.Time, tt)
		s.X = append(s.X, 0.05*float64(i))
		s.Bx = append(s.Bx, 1500+30*math.Sin(tt/20)+rng.NormFloat64())
		s.By = append(s.By, 20800+rng.NormFloat64())
		s.Bz = append(s.Bz, -47500+10*math.Cos(tt/7)+rng.NormFloat64())
		g := "A"
		if i >= n/2 {
			g = "B"
		}
		s.Group = append(s.Group, g)
	}
	spikes := []int{0, 400, 401, 1234, 2499, 2500, 4999}
	for j, i := range spikes {
		sign := 1.0
		if j%2 == 1 {
			sign = -1
		}
		switch j % 3 {
		case 0:
			s.Bx[i] += sign * 40
		case 1:
			s.By[i] += sign * 40
		default:
			s.Bz[i] += sign * 40
		}
	}
	s.Bz[3000] = math.NaN() // a missing reading
	rep, err := Despike(s, nil)
	if err != nil {
		t.Fatal(err)
	}
	for _, i := range append(spikes, 3000) {
		if !slices.Contains(rep.Rows, i) {
			t.Errorf("spike at row %d not removed", i)
		}
	}
	extra := rep.Removed - len(spikes) - 1
	if extra < 0 || extra > n/200 {
		t.Errorf("%d rows removed beyond the %d spikes, want 0..%d", extra, len(spikes)+1, n/200)
	}
	if rep.NonFinite != 1 {
		t.Errorf("non-finite %d, want 1", rep.NonFinite)
	}
	if rep.Kept != n-rep.Removed || s.Len() != rep.Kept || len(s.X) != rep.Kept || len(s.Group) != rep.Kept || len(s.Bz) != rep.Kept {
		t.Fatalf("columns not compacted together: kept %d, time %d, x %d, group %d", rep.Kept, s.Len(), len(s.X), len(s.Group))
	}
	// Rows stay aligned: x was 0.05 × original row.
	for i := range s.Time {
		if math.Abs(s.X[i]-0.5*s.Time[i]) > 1e-9 {
			t.Fatalf("row %d misaligned after removal", i)
		}
	}
	// Nothing left deviates by 20 sigma.
	for i := 1; i+1 < s.Len(); i++ {
		if math.Abs(s.By[i]-20800) > 20 {
			t.Fatalf("row %d: by = %g survived", i, s.By[i])
		}
	}
}

func TestFindSpikesFalseAlarms(t *testing.T) {
	// The documented false-alarm rate of the defaults on white Gaussian
	// noise: below 0.1% per axis.
	rng := rand.New(rand.NewPCG(25, 26))
	x := make([]float64, 100000)
	for i := range x {
		x[i] = 3 * rng.NormFloat64()
	}
	_, per, _, err := FindSpikes([][]float64{x}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if rate := float64(per[0]) / float64(len(x)); rate > 1e-3 {
		t.Errorf("false-alarm rate %.4f%%, want below 0.1%%", 100*rate)
	}
}

func TestFindSpikesFloor(t *testing.T) {
	// Quantised quiet data (MAD = 0): steps of 0.1 nT are not spikes because
	// of the 0.5 nT floor, a 5 nT jump on one sample is.
	x := []float64{10, 10, 10, 10.1, 10, 10, 10, 15, 10, 10, 10, 10.1, 10}
	sp, per, _, err := FindSpikes([][]float64{x}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if per[0] != 1 || !sp[7] {
		t.Errorf("spikes %v, want only row 7", sp)
	}
	if _, _, _, err := FindSpikes([][]float64{x}, &DespikeSettings{Threshold: -1}); err == nil {
		t.Error("negative threshold: want an error")
	}
}

func BenchmarkDespike(b *testing.B) {
	const n = 100000
	rng := rand.New(rand.NewPCG(1, 1))
	cols := [][]float64{make([]float64, n), make([]float64, n), make([]float64, n)}
	for k := range cols {
		for i := range cols[k] {
			cols[k][i] = rng.NormFloat64()
		}
	}
	for b.Loop() {
		FindSpikes(cols, nil)
	}
	b.ReportMetric(float64(n)*float64(b.N)/b.Elapsed().Seconds()/1e6, "Mrows/s")
}

// BenchmarkDespikeSpikes: the spike filter on 100,000 readings of white
// noise (1 nT) with spikes on 2% of them, 6 to 60 noise sigmas, either
// sign, on one axis each, at --despike's cut-off of 5 scales and at the
// spike warning's 10. The line-shape second look once cost 0.5 to 0.9 ms
// for each reading the quadratic flagged, ten times the whole filter on
// such a log.
func BenchmarkDespikeSpikes(b *testing.B) {
	const n = 100000
	rng := rand.New(rand.NewPCG(2, 2))
	cols := [][]float64{make([]float64, n), make([]float64, n), make([]float64, n)}
	for k := range cols {
		for i := range cols[k] {
			cols[k][i] = rng.NormFloat64()
		}
	}
	for range n / 50 {
		size := 6 + 54*rng.Float64()
		if rng.IntN(2) == 0 {
			size = -size
		}
		cols[rng.IntN(3)][rng.IntN(n)] += size
	}
	for _, k := range []float64{5, 10} {
		b.Run(fmt.Sprintf("threshold %g", k), func(b *testing.B) {
			for b.Loop() {
				FindSpikes(cols, &DespikeSettings{Threshold: k})
			}
			b.ReportMetric(float64(n)*float64(b.N)/b.Elapsed().Seconds()/1e6, "Mrows/s")
		})
	}
}

func TestTrendSpikesMatchesDirect(t *testing.T) {
	// The moment sums and cofactor solve of trendSpikes must decide as a
	// direct computation does: each window's quadratic fitted by gonum's
	// QR least squares (mat.Dense.Solve), refitted without the neighbours
	// beyond k scales, on data with a trend, ties, spikes and NaNs; in a
	// lopsided window (next to an end) the cubic's and quartic's too; and the median
	// test where the settings' window holds under minTrendPoints readings.
	rng := rand.New(rand.NewPCG(27, 28))
	x := make([]float64, 3000)
	for i := range x {
		x[i] = 0.01*float64(i) + math.Round(4*rng.NormFloat64())/2 // ties
		if rng.IntN(50) == 0 {
			x[i] += 40
		}
		if rng.IntN(300) == 0 {
			x[i] = math.NaN()
		}
	}
	scaleOf := func(r []float64, keep []bool, g00 float64, p int) float64 {
		var a []float64
		for j, v := range r {
			if keep[j] {
				a = append(a, math.Abs(v))
			}
		}
		m := float64(len(a))
		return 1.4826 * median(a, nil) * math.Sqrt(m/(m-float64(p))*(1+g00))
	}
	fit := func(u, y []float64, keep []bool, p int) (b0, g00 float64, r []float64) {
		var rows []float64
		var ys []float64
		for j := range u {
			if keep[j] {
				for k, uk := 0, 1.0; k < p; k, uk = k+1, uk*u[j] {
					rows = append(rows, uk)
				}
				ys = append(ys, y[j])
			}
		}
		A := mat.NewDense(len(ys), p, rows)
		var b mat.VecDense
		if err := b.SolveVec(A, mat.NewVecDense(len(ys), ys)); err != nil {
			t.Fatal(err)
		}
		var ata, inv mat.Dense
		ata.Mul(A.T(), A)
		if err := inv.Inverse(&ata); err != nil {
			t.Fatal(err)
		}
		for j := range u {
			v := y[j]
			for k, uk := 0, 1.0; k < p; k, uk = k+1, uk*u[j] {
				v -= b.AtVec(k) * uk
			}
			r = append(r, v)
		}
		return b.AtVec(0), inv.At(0, 0), r
	}
	for _, K := range []int{2, 3, 5, 10} {
		ds := DespikeSettings{HalfWidth: K, Threshold: 3, Floor: 0.1}
		got := make([]bool, len(x))
		trendSpikes(x, ds, got, nil)
		for i, xi := range x {
			if !finite(xi) {
				if got[i] {
					t.Fatalf("K=%d: NaN row %d marked", K, i)
				}
				continue
			}
			// The window of 2K+1 rows moved inwards at an end, where the
			// reading's own neighbours are taken too.
			lo, hi, skip := i-K, i+K+1, 1
			if lo < 0 {
				lo, hi, skip = 0, hi-lo, 0
			}
			if hi > len(x) {
				lo, hi, skip = max(0, lo-(hi-len(x))), len(x), 0
			}
			var u, y []float64
			left := 0
			for j := lo; j < hi; j++ {
				if (j < i-skip || j > i+skip) && finite(x[j]) {
					u = append(u, float64(j-i))
					y = append(y, x[j]-xi)
					if j < i {
						left++
					}
				}
			}
			trend := func(p int) (dev, sc float64) {
				keep := make([]bool, len(u))
				for j := range keep {
					keep[j] = true
				}
				b0, g00, r := fit(u, y, keep, p)
				dev, sc = -b0, scaleOf(r, keep, g00, p)
				drop := 0
				for j := range r {
					if math.Abs(r[j]) > ds.Threshold*sc {
						keep[j] = false
						drop++
					}
				}
				if drop > 0 && len(u)-drop >= minTrendPoints+p-3 {
					b0, g00, r = fit(u, y, keep, p)
					dev, sc = -b0, scaleOf(r, keep, g00, p)
				}
				return dev, sc
			}
			var dev, sc float64
			switch {
			case 2*K-2 < minTrendPoints:
				w := append(append([]float64(nil), y...), 0)
				med := median(w, nil)
				var d []float64
				for _, v := range w {
					d = append(d, math.Abs(v-med))
				}
				dev, sc = -med, 1.4826*median(d, nil)
			case left != len(u)-left:
				if len(u) < minTrendPoints+1 {
					continue
				}
				for p := 3; p <= 5 && len(u) >= minTrendPoints+p-3; p++ {
					dev, sc = trend(p)
					if math.Abs(dev) <= ds.Threshold*math.Max(sc, ds.Floor) {
						break
					}
				}
			case len(u) < minTrendPoints:
				continue
			default:
				dev, sc = trend(3)
			}
			want := math.Abs(dev) > ds.Threshold*math.Max(sc, ds.Floor)
			// A departure within a part in 1e9 of the cut may fall
			// either way.
			if got[i] != want && math.Abs(math.Abs(dev)-ds.Threshold*math.Max(sc, ds.Floor)) > 1e-9*math.Abs(dev) {
				t.Fatalf("K=%d row %d: trendSpikes %v, direct %v (departure %g, scale %g)", K, i, got[i], want, dev, sc)
			}
		}
	}
}
func TestHampelMatchesDirect(t *testing.T) {
	// The sliding sorted window and merged MAD must equal a direct
	// computation (sort every window) on data with ties and NaNs.
	rng := rand.New(rand.NewPCG(27, 28))
	x := make([]float64, 3000)
	for i := range x {
		x[i] = math.Round(4*rng.NormFloat64()) / 2 // ties
		if rng.IntN(50) == 0 {
			x[i] += 40
		}
		if rng.IntN(300) == 0 {
			x[i] = math.NaN()
		}
	}
	for _, K := range []int{1, 2, 5, 10} {
		ds := DespikeSettings{HalfWidth: K, Threshold: 3, Floor: 0.1}
		got := make([]bool, len(x))
		hampel(x, ds, got)
		for i, xi := range x {
			if !finite(xi) {
				if got[i] {
					t.Fatalf("K=%d: NaN row %d marked by hampel", K, i)
				}
				continue
			}
			var win []float64
			for j := max(0, i-K); j < min(len(x), i+K+1); j++ {
				if finite(x[j]) {
					win = append(win, x[j])
				}
			}
			med := median(win, nil)
			var dev []float64
			for _, v := range win {
				dev = append(dev, math.Abs(v-med))
			}
			sc := math.Max(1.4826*median(dev, nil), ds.Floor)
			if want := math.Abs(xi-med) > ds.Threshold*sc; got[i] != want {
				t.Fatalf("K=%d row %d: hampel %v, direct %v", K, i, got[i], want)
			}
		}
	}
}
