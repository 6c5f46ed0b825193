package route_test

import (
	"fmt"

	"undercurrent/inverse/route"
)

// Six traverses over the fictional Kestrel Moor gas spur, 25 m apart; about
// 0.8 A leaves the pipe between the third and the fourth, and the cover is
// thin at the fifth.
func ExampleBuild() {
	currents := []float64{4.02, 3.99, 4.01, 3.18, 3.20, 3.19}
	depths := []float64{1.31, 1.28, 1.30, 1.27, 0.84, 1.29} // below the sensors
	var st []route.Station
	for i, c := range currents {
		st = append(st, route.Station{
			Key:          fmt.Sprintf("T%02d", i+1),
			Point:        [3]float64{0, 25 * float64(i), -depths[i]},
			Dir:          [3]float64{0, 1, 0},
			Current:      c,
			CurrentSigma: 0.03,
			Depth:        depths[i],
			DepthSigma:   0.02,
			OK:           true,
		})
	}
	r, err := route.Build(st, &route.Settings{MinCover: 0.6, CoverCode: "NEC Table 300.5", SensorHeight: 0.3})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("route length %.0f m\n", r.Length)
	for _, f := range r.Findings {
		fmt.Printf("%s %s %.0f-%.0f m: %s\n", f.Severity, f.Kind, f.From, f.To, f.Message)
	}
	// Output:
	// route length 125 m
	// warning current-step 50-75 m: current falls by 0.817 ± 0.051 A between T03 (chainage 50.0 m) and T04 (75.0 m): current leaving the conductor there (to earth at a coating defect, a leak or a fault, or along a branch: a tee or a bond), or the supply's current changed from the walk of one traverse to the other's (walk one again to tell); levels either side 4.007 A and 3.190 A (3 and 3 stations); only 6 usable stations, too few to estimate scatter between stations beyond the fits' own uncertainties, so the uncertainty may be too small
	// warning shallow-cover 75-125 m: cover at T05 (chainage 100.0 m) is 0.540 ± 0.020 m: it is less than the 0.60 m minimum (NEC Table 300.5); the shallow stretch may reach back to T04 (chainage 75.0 m) and on to T06 (chainage 125.0 m), the nearest stations either side with enough cover
}
