package inverse

import (
	"fmt"
	"math"
	"math/rand/v2"
	"reflect"
	"testing"
)

// kernLengths are the numbers of readings the kernel tests try: every length up to 20
// (each remainder mod 4 with and without whole groups of four) and a few long ones.
var kernLengths = func() []int {
	var ns []int
	for n := range 21 {
		ns = append(ns, n)
	}
	return append(ns, 63, 64, 501, 1209)
}()

// kernGeometry is a line for the kernel tests: an azimuth and a dip, which give its
// direction as the fits make it (dirOf), and a point on it.
type kernGeometry struct {
	name    string
	az, dip float64
	p0      [3]float64
}

var kernGeometries = []kernGeometry{
	{"horizontal", 0.3, 0, [3]float64{0.2, -0.4, -1.1}},
	{"horizontal along north", 0, 0, [3]float64{0, 0, -0.8}},
	{"dipping", -1.1, 0.35, [3]float64{-0.5, 0.3, -1.6}},
	{"steep", 2.4, -1.2, [3]float64{1.5, 2.5, -0.4}},
	{"general", 0.77, 0.61, [3]float64{3.3, -2.1, -2.7}},
}

// kernPoints returns n readings scattered over a few metres around the line, with a
// few of them exactly on it (where the basis is not finite: those values must match
// too) and some near it.
func kernPoints(rng *rand.Rand, n int, u, p0 [3]float64) [][3]float64 {
	pts := make([][3]float64, n)
	for i := range pts {
		switch {
		case i%11 == 5:
			pts[i] = p0
		case i%7 == 3:
			s := rng.NormFloat64() * 3
			pts[i] = add(p0, scale(u, s))
			pts[i][0] += rng.NormFloat64() * 1e-9
		default:
			for j := range 3 {
				pts[i][j] = rng.NormFloat64() * 4
			}
			pts[i][2] = 0.3 * rng.Float64()
		}
	}
	return pts
}

// sameBits reports the first index at which got and want differ in any bit, or -1.
func sameBits(got, want []float64) int {
	if len(got) != len(want) {
		return 0
	}
	for i := range got {
		if math.Float64bits(got[i]) != math.Float64bits(want[i]) {
			return i
		}
	}
	return -1
}

// withLineKern runs f with useLineKern set to on, then restores it.
func withLineKern(on bool, f func()) {
	saved := useLineKern
	useLineKern = on
	defer func() { useLineKern = saved }()
	f()
}

// TestLineColumnKernel checks that lineColumn with the assembly kernel gives bit for bit
// the values of its Go loop (the reference), and writes nothing past the readings'
// rows; and that both report the column finite exactly when every value is (readings
// on the line, every eleventh from the sixth, give infinities and NaNs).
func TestLineColumnKernel(t *testing.T) {
	if !useLineKern {
		t.Skip("no line kernel on this build or processor")
	}
	rng := rand.New(rand.NewPCG(41, 42))
	const guard = 3
	for _, g := range kernGeometries {
		for _, n := range kernLengths {
			t.Run(fmt.Sprintf("%s/n=%d", g.name, n), func(t *testing.T) {
				u := dirOf(g.az, g.dip)
				pts := kernPoints(rng, n, u, g.p0)
				want := make([]float64, 3*n+guard)
				got := make([]float64, 3*n+guard)
				for i := range got {
					want[i], got[i] = -7, -7
				}
				var finGo, finKern bool
				withLineKern(false, func() { finGo = lineColumn(want[:3*n], u, g.p0, pts) })
				withLineKern(true, func() { finKern = lineColumn(got[:3*n], u, g.p0, pts) })
				if i := sameBits(got, want); i >= 0 {
					t.Fatalf("entry %d: kernel %v (%#x), Go %v (%#x)", i, got[i], math.Float64bits(got[i]), want[i], math.Float64bits(want[i]))
				}
				fin := true
				for _, v := range want[:3*n] {
					fin = fin && !math.IsInf(v, 0) && !math.IsNaN(v)
				}
				if finGo != fin || finKern != fin {
					t.Errorf("finite reported %v by the Go loop, %v by the kernel; the values are finite: %v", finGo, finKern, fin)
				}
			})
		}
	}
}

// TestDLineLevelKernel checks that dLineLevel with the assembly kernel gives bit for bit
// the values of its Go loop (the reference) in every column, for 2, 3 and 4 columns
// (offset and height; and azimuth; and dip), and writes nothing past the readings'
// rows.
func TestDLineLevelKernel(t *testing.T) {
	if !useLineKern {
		t.Skip("no line kernel on this build or processor")
	}
	rng := rand.New(rand.NewPCG(43, 44))
	const guard = 3
	var sp separable
	for _, g := range kernGeometries {
		u := dirOf(g.az, g.dip)
		sa, ca := math.Sincos(g.az)
		sd, cd := math.Sincos(g.dip)
		// The directions dPhiCAt gives dLineLevel: n0 horizontal and perpendicular to
		// u, up, du/daz and du/ddip.
		h := math.Hypot(u[0], u[1])
		dirs := [][3]float64{{u[1] / h, -u[0] / h, 0}, {0, 0, 1}, {ca * cd, -sa * cd, 0}, {-sa * sd, -ca * sd, -cd}}
		uxv := make([][3]float64, 4)
		for k := range dirs {
			uxv[k] = cross(u, dirs[k])
		}
		for nd := 2; nd <= 4; nd++ {
			for _, n := range kernLengths {
				t.Run(fmt.Sprintf("%s/nd=%d/n=%d", g.name, nd, n), func(t *testing.T) {
					pts := kernPoints(rng, n, u, g.p0)
					c := rng.NormFloat64() * 10
					cols := func() ([][2][]float64, [][]float64) {
						out := make([][2][]float64, nd)
						full := make([][]float64, nd)
						for k := range out {
							full[k] = make([]float64, 3*n+guard)
							for i := range full[k] {
								full[k][i] = -7
							}
							out[k][0] = full[k][:3*n]
						}
						return out, full
					}
					wantOut, want := cols()
					gotOut, got := cols()
					withLineKern(false, func() { sp.dLineLevel(wantOut, dirs[:nd], uxv[:nd], u, g.p0, c, pts) })
					withLineKern(true, func() { sp.dLineLevel(gotOut, dirs[:nd], uxv[:nd], u, g.p0, c, pts) })
					for k := range nd {
						if i := sameBits(got[k], want[k]); i >= 0 {
							t.Fatalf("column %d entry %d: kernel %v (%#x), Go %v (%#x)", k, i, got[k][i], math.Float64bits(got[k][i]), want[k][i], math.Float64bits(want[k][i]))
						}
					}
				})
			}
		}
	}
}

// BenchmarkLineColumn times lineColumn on 40 and 500 readings (the sizes of the
// single traverse and of the two-line survey of BenchmarkScipyMirror), with the Go loop
// ("go") and with the kernel where the build has it ("kernel").
func BenchmarkLineColumn(b *testing.B) {
	u := dirOf(0.4, 0.2)
	p0 := [3]float64{0.3, -0.2, -1.2}
	for _, n := range []int{40, 500} {
		pts := kernPoints(rand.New(rand.NewPCG(1, 2)), n, u, p0)
		col := make([]float64, 3*n)
		benchKernWays(b, n, func() { lineColumn(col, u, p0, pts) })
	}
}

// benchKernWays runs f as the sub-benchmarks "n=N/go" (the Go loop) and "n=N/kernel"
// (skipped where the build or processor has no kernel).
func benchKernWays(b *testing.B, n int, f func()) {
	for _, on := range []bool{false, true} {
		b.Run(fmt.Sprintf("n=%d/%s", n, kernName(on)), func(b *testing.B) {
			if on && !useLineKern {
				b.Skip("no line kernel on this build or processor")
			}
			withLineKern(on, func() {
				for b.Loop() {
					f()
				}
			})
		})
	}
}

// BenchmarkDLineLevel times dLineLevel with four columns on 40 and 500 readings, with
// the Go loop ("go") and with the kernel where the build has it ("kernel").
func BenchmarkDLineLevel(b *testing.B) {
	g := kernGeometries[2]
	u := dirOf(g.az, g.dip)
	dirs := [][3]float64{{0.3, -0.9, 0}, {0, 0, 1}, {0.5, -0.2, 0}, {-0.1, -0.3, -0.9}}
	uxv := make([][3]float64, len(dirs))
	for k := range dirs {
		uxv[k] = cross(u, dirs[k])
	}
	var sp separable
	for _, n := range []int{40, 500} {
		pts := kernPoints(rand.New(rand.NewPCG(1, 2)), n, u, g.p0)
		out := make([][2][]float64, len(dirs))
		for k := range out {
			out[k][0] = make([]float64, 3*n)
		}
		benchKernWays(b, n, func() { sp.dLineLevel(out, dirs, uxv, u, g.p0, 1.5, pts) })
	}
}

func kernName(on bool) string {
	if on {
		return "kernel"
	}
	return "go"
}

// TestLineKernelFits checks that whole fits (the three benchmark surveys, fitted as
// BenchmarkScipyMirror fits them, and the nine traverses with the line count chosen
// automatically) give the same Result bit for bit with the kernels and with the Go
// loops (the reference).
func TestLineKernelFits(t *testing.T) {
	if !useLineKern {
		t.Skip("no line kernel on this build or processor")
	}
	type fitCase struct {
		name string
		p    *Problem
		set  *Settings
	}
	var cases []fitCase
	for _, c := range benchCases {
		cases = append(cases, fitCase{c.file, c.problem(), mirrorSettings(c)})
	}
	cases = append(cases, fitCase{"automatic count", benchCases[1].problem(), nil})
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			fit := func(on bool) []uint64 {
				var res *Result
				var err error
				withLineKern(on, func() { res, err = FitLines(c.p, c.set) })
				if err != nil {
					t.Fatal(err)
				}
				return appendBits(nil, reflect.ValueOf(res))
			}
			want, got := fit(false), fit(true)
			if len(got) != len(want) {
				t.Fatalf("results of %d and %d words", len(got), len(want))
			}
			for i := range got {
				if got[i] != want[i] {
					t.Fatalf("word %d of the results: kernel %#x, Go %#x", i, got[i], want[i])
				}
			}
		})
	}
}

// appendBits appends every number in v (floats by their bits, integers, the bytes of
// strings, lengths of slices and whether pointers are nil), walking structs, arrays,
// slices and pointers, unexported fields included.
func appendBits(dst []uint64, v reflect.Value) []uint64 {
	switch v.Kind() {
	case reflect.Float32, reflect.Float64:
		return append(dst, math.Float64bits(v.Float()))
	case reflect.Complex64, reflect.Complex128:
		z := v.Complex()
		return append(dst, math.Float64bits(real(z)), math.Float64bits(imag(z)))
	case reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64:
		return append(dst, uint64(v.Int()))
	case reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64:
		return append(dst, v.Uint())
	case reflect.Bool:
		if v.Bool() {
			return append(dst, 1)
		}
		return append(dst, 0)
	case reflect.String:
		dst = append(dst, uint64(v.Len()))
		for _, b := range []byte(v.String()) {
			dst = append(dst, uint64(b))
		}
		return dst
	case reflect.Pointer, reflect.Interface:
		if v.IsNil() {
			return append(dst, 0)
		}
		return appendBits(append(dst, 1), v.Elem())
	case reflect.Slice, reflect.Array:
		dst = append(dst, uint64(v.Len()))
		for i := range v.Len() {
			dst = appendBits(dst, v.Index(i))
		}
		return dst
	case reflect.Struct:
		for i := range v.NumField() {
			dst = appendBits(dst, v.Field(i))
		}
		return dst
	}
	panic("appendBits: unexpected kind " + v.Kind().String())
}

// TestConductorThroughSensorRefused: a trial line through a reading makes the basis
// infinite there (Biot-Savart's 1/distance), which the separable must refuse
// (weightCheck) whether the line kernel or the Go loop wrote the column and whatever
// the reading's place among the kernel's blocks of four; a line clear of the
// readings is accepted.
func TestConductorThroughSensorRefused(t *testing.T) {
	for _, kern := range []bool{false, true} {
		if kern && !useLineKern {
			continue
		}
		for _, n := range []int{5, 8, 13} {
			for on := range n {
				pts := make([][3]float64, n)
				for i := range pts {
					pts[i] = [3]float64{float64(i) - 6, 0.5, 0.3}
				}
				// The line runs north through (0, 0, -1); reading on is moved onto it.
				pts[on] = [3]float64{0, 2, -1}
				y := make([]float64, 3*n)
				for i := range y {
					y[i] = float64(i%5) - 2
				}
				geom := []lineGeom{{n0: [3]float64{1, 0, 0}, z: -1, sLo: -10, sHi: 10, zLo: -20, zHi: 0.2, holdAz: true, holdDip: true}}
				sp := newSeparable(pts, y, 1, BackgroundUniform, [3]float64{}, geom, nil)
				x, _, _ := sp.pack()
				var err error
				withLineKern(kern, func() { err = sp.evaluate(x) })
				if err == nil {
					t.Errorf("kernel %v, %d readings, reading %d on the line: evaluate accepted it", kern, n, on)
				}
				// Moved a little off the line: accepted.
				pts[on][0] = 0.5
				sp = newSeparable(pts, y, 1, BackgroundUniform, [3]float64{}, geom, nil)
				withLineKern(kern, func() { err = sp.evaluate(x) })
				if err != nil {
					t.Errorf("kernel %v, %d readings, reading %d off the line: %v", kern, n, on, err)
				}
			}
		}
	}
}
