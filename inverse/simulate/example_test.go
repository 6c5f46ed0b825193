package simulate_test

import (
	"fmt"
	"log"
	"math"

	"undercurrent/inverse/simulate"
)

// A 10 A cable 1 m below a sensor walked across it: the reading straight
// above it is the infinite-wire field mu0 I / (2 pi d) = 2,000 nT
// (DOMAIN.md: 1 A at 1 m gives 1.9999999997e-7 T).
func Example() {
	sc, err := simulate.Parse([]byte(`
name = "example"
[sensor]
height_m = 0.3
sample_rate_hz = 10          # at the default 1 m/s: a reading every 0.1 m
[survey]
route = [[0, -5], [0, 5]]    # traverses cross this north-running line
count = 2
spacing_m = 4
first_at_m = 3
length_m = 2
zigzag = false
[[conductor]]
kind = "line"
point = [0, 0, -0.7]
direction = [0, 1, 0]
current_a = 10
`), "example.toml")
	if err != nil {
		log.Fatal(err)
	}
	s, err := simulate.Simulate(sc)
	if err != nil {
		log.Fatal(err)
	}
	fmt.Println(s.Len(), "readings")
	for i := range s.Len() {
		if s.X[i] == 0 {
			fmt.Printf("%s: above the cable %.3f nT east, %.3f nT up\n", s.Group[i], s.Bx[i], s.Bz[i])
		}
	}
	for _, c := range sc.Crossings() {
		fmt.Printf("%s crosses the cable at north %.0f m, depth %.1f m, %.0f A\n", c.Line, c.Point[1], c.Depth, c.Current)
	}
	// Output:
	// 42 readings
	// T01: above the cable 2000.000 nT east, 0.000 nT up
	// T02: above the cable 2000.000 nT east, 0.000 nT up
	// T01 crosses the cable at north -2 m, depth 0.7 m, 10 A
	// T02 crosses the cable at north 2 m, depth 0.7 m, 10 A
}

// A calibration spin: a sensor with a hard-iron offset and soft iron turned
// through every orientation in a 50,000 nT field. The raw magnitudes spread
// over the soft iron's few percent; once the distortion is undone they are
// all the field's 50,000 nT (a rotation keeps lengths).
func Example_spin() {
	sc, err := simulate.Parse([]byte(`
name = "spin"
[earth]
field_nt = [0, 30000, -40000]     # |E| = 50,000 nT
[sensor]
sample_rate_hz = 10
offset_nt = [300, -200, 100]
matrix = [[1.04, 0, 0], [0, 0.98, 0], [0, 0, 1]]
[survey]
pattern = "spin"
duration_s = 120
turns = 12
`), "spin.toml")
	if err != nil {
		log.Fatal(err)
	}
	s, err := simulate.Simulate(sc)
	if err != nil {
		log.Fatal(err)
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	loC, hiC := math.Inf(1), math.Inf(-1)
	for i := range s.Len() {
		raw := math.Sqrt(s.Bx[i]*s.Bx[i] + s.By[i]*s.By[i] + s.Bz[i]*s.Bz[i])
		x, y, z := (s.Bx[i]-300)/1.04, (s.By[i]+200)/0.98, s.Bz[i]-100
		c := math.Sqrt(x*x + y*y + z*z)
		lo, hi = math.Min(lo, raw), math.Max(hi, raw)
		loC, hiC = math.Min(loC, c), math.Max(hiC, c)
	}
	fmt.Println(s.Len(), "readings in the", s.Frame, "frame, group", s.Group[0])
	fmt.Printf("raw |B| %.0f to %.0f nT\n", lo, hi)
	fmt.Printf("corrected |B| %.3f to %.3f nT\n", loC, hiC)
	// Output:
	// 1201 readings in the sensor frame, group S01
	// raw |B| 48791 to 52300 nT
	// corrected |B| 50000.000 to 50000.000 nT
}
