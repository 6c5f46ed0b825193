package report

import "math"

// wgs84 returns the WGS84 longitude and latitude in degrees of the local
// position enu, and false when the document has no geodetic origin.
//
// TEMPORARY: a local conversion until ingest.Geodetic.FromENU is committed;
// then this calls it.
func (d *Document) wgs84(enu [3]float64) (lon, lat float64, ok bool) {
	o := d.Frame.Origin
	if o == nil {
		return 0, 0, false
	}
	const a, invF = 6378137.0, 298.257223563 // WGS84, NIMA TR8350.2
	f := 1 / invF
	e2 := f * (2 - f)
	sp, cp := math.Sincos(o.Lat * math.Pi / 180)
	sl, cl := math.Sincos(o.Lon * math.Pi / 180)
	n := a / math.Sqrt(1-e2*sp*sp)
	x0, y0, z0 := (n+o.H)*cp*cl, (n+o.H)*cp*sl, (n*(1-e2)+o.H)*sp
	e, no, u := enu[0], enu[1], enu[2]
	x := x0 - sl*e - sp*cl*no + cp*cl*u
	y := y0 + cl*e - sp*sl*no + cp*sl*u
	z := z0 + cp*no + sp*u
	p := math.Hypot(x, y)
	phi := math.Atan2(z, p*(1-e2))
	for i := 0; i < 10; i++ {
		s := math.Sin(phi)
		nn := a / math.Sqrt(1-e2*s*s)
		h := p/math.Cos(phi) - nn
		next := math.Atan2(z, p*(1-e2*nn/(nn+h)))
		if math.Abs(next-phi) < 1e-15 {
			phi = next
			break
		}
		phi = next
	}
	return math.Atan2(y, x) * 180 / math.Pi, phi * 180 / math.Pi, true
}
