package main

import (
	"math"
	"sort"
	"testing"

	"undercurrent/ingest"
)

// TestPositionScatterOneAxisRounded: a latitude rounded to a 32-bit float
// (IEEE 754 binary32, 24-bit significand: steps of 2^-18 degree between
// 32 and 64 degrees, 0.42 m of north) scatters north while the longitude
// near 0.17 E keeps millimetres (steps of 2^-26 degree between 0.125 and
// 0.25 degree). The plan's scatter is the larger axis's, so the rounded
// north speaks; pooled with east's clean differences, the median was
// east's and the scatter read 0.25 mm (found in review: no warning,
// the misfit taken for the sensor's noise). Positions from latitude and
// longitude go through the ingest package's WGS84 conversion.
func TestPositionScatterOneAxisRounded(t *testing.T) {
	// A traverse at 150 degrees, 0.1 m between readings, as in review.
	o := ingest.Geodetic{Lat: 52.4512, Lon: 0.1738, H: 1.5}
	az := 150 * math.Pi / 180
	var pts [][3]float64
	for i := range 300 {
		d := 0.1 * float64(i)
		g := o.FromLocal([3]float64{d * math.Sin(az), d * math.Cos(az), 0})
		g.Lat, g.Lon = float64(float32(g.Lat)), float64(float32(g.Lon))
		pts = append(pts, o.ToLocal(g))
	}
	// Each axis's robust scale of its fourth differences, as the package
	// documentation words it (variance 70 sigma^2; the normal's MAD
	// 0.6745 sigma).
	axis := func(k int) float64 {
		var d []float64
		for i := 2; i+2 < len(pts); i++ {
			d = append(d, math.Abs(pts[i-2][k]-4*pts[i-1][k]+6*pts[i][k]-4*pts[i+1][k]+pts[i+2][k]))
		}
		sort.Float64s(d)
		return d[len(d)/2] / (0.6745 * math.Sqrt(70))
	}
	east, north := axis(0), axis(1)
	if north < 0.02 || east > 0.002 {
		t.Fatalf("fixture: north scatters %.4f m, east %.4f m; want north over 2 cm and east under 2 mm", north, east)
	}
	// Along the one track (sensorTracks' split is not at issue here).
	all := make([]int, len(pts))
	for i := range all {
		all[i] = i
	}
	plan, _, _ := trackScatter(pts, [][]int{all})
	if math.Abs(plan-north) > 0.05*north {
		t.Errorf("plan scatter %.4f m with the latitude rounded to float32, want north's own %.4f m (east's %.4f m)", plan, north, east)
	}
	// And as the warning measures it, split or not: not east's.
	if p, _, _ := positionScatter(pts); p < 0.5*north {
		t.Errorf("positionScatter %.4f m, want at least half north's %.4f m", p, north)
	}
}
