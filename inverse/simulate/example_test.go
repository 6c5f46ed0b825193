package simulate_test

import (
	"fmt"
	"log"

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
