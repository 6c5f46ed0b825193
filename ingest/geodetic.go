package ingest

import "math"

// WGS84 defining parameters (NIMA TR8350.2, third edition, table 3.1).
const (
	wgs84A    = 6378137.0
	wgs84InvF = 298.257223563
	wgs84F    = 1 / wgs84InvF
	wgs84E2   = wgs84F * (2 - wgs84F)
)

// Geodetic is a WGS84 position: latitude and longitude in degrees, height
// above the ellipsoid in metres.
type Geodetic struct{ Lat, Lon, H float64 }

// ecef returns the Earth-centred Earth-fixed coordinates of g in metres.
func (g Geodetic) ecef() [3]float64 {
	phi, lam := g.Lat*math.Pi/180, g.Lon*math.Pi/180
	sp, cp := math.Sincos(phi)
	sl, cl := math.Sincos(lam)
	n := wgs84A / math.Sqrt(1-wgs84E2*sp*sp)
	return [3]float64{(n + g.H) * cp * cl, (n + g.H) * cp * sl, (n*(1-wgs84E2) + g.H) * sp}
}

// enuFrame holds what ToENU needs for one origin, so that converting many
// points costs one ecef each.
type enuFrame struct {
	o              [3]float64
	h              float64 // the origin's height above the ellipsoid, m
	sp, cp, sl, cl float64
}

func (o Geodetic) frame() enuFrame {
	sp, cp := math.Sincos(o.Lat * math.Pi / 180)
	sl, cl := math.Sincos(o.Lon * math.Pi / 180)
	return enuFrame{o: o.ecef(), h: o.H, sp: sp, cp: cp, sl: sl, cl: cl}
}

// toLocal returns p's local east, north and up about the frame's origin:
// east and north of the point at p's latitude and longitude on the
// origin's height (the tangent plane's ENU), and up p's height above the
// origin's height. Unlike the tangent plane's own up, which falls away
// from the ellipsoid by about d^2/(2R) at a distance d (0.08 m at 1 km,
// 0.31 m at 2 km), up here is a height in the log's datum: a level ground
// keeps one up over the whole survey, as in a projected log.
func (f *enuFrame) toLocal(p Geodetic) [3]float64 {
	h := p.H
	p.H = f.h
	e := f.toENU(p)
	return [3]float64{e[0], e[1], h - f.h}
}

func (f *enuFrame) toENU(p Geodetic) [3]float64 {
	r := p.ecef()
	dx, dy, dz := r[0]-f.o[0], r[1]-f.o[1], r[2]-f.o[2]
	return [3]float64{
		-f.sl*dx + f.cl*dy,
		-f.sp*f.cl*dx - f.sp*f.sl*dy + f.cp*dz,
		f.cp*f.cl*dx + f.cp*f.sl*dy + f.sp*dz,
	}
}

// ToENU returns the local east, north, up coordinates in metres of p about
// the origin o (see the package documentation for the formulas).
func (o Geodetic) ToENU(p Geodetic) [3]float64 {
	f := o.frame()
	return f.toENU(p)
}

// ToLocal returns the local east, north, up coordinates in metres of p
// about the origin o as the readers give a latitude/longitude/height log:
// east and north as ToENU gives them for the point at p's latitude and
// longitude on the origin's height, up the height of p above the origin's
// height (p.H - o.H).
func (o Geodetic) ToLocal(p Geodetic) [3]float64 {
	f := o.frame()
	return f.toLocal(p)
}

// FromLocal returns the geodetic position of the point at local east,
// north, up coordinates l (metres) about the origin o as ToLocal gives
// them; the inverse of ToLocal to well below a micrometre near the
// origin's height.
func (o Geodetic) FromLocal(l [3]float64) Geodetic {
	// The point on the origin's height at east, north l[0], l[1]: its
	// tangent-plane up, first taken as the sphere's -(e^2+n^2)/(2a), is
	// corrected by the height it misses (dH/du is 1 to 1e-6 within
	// tens of km).
	u := -(l[0]*l[0] + l[1]*l[1]) / (2 * wgs84A)
	var g Geodetic
	for i := 0; i < 20; i++ {
		g = o.FromENU([3]float64{l[0], l[1], u})
		d := o.H - g.H
		u += d
		if math.Abs(d) < 1e-10 {
			break
		}
	}
	g = o.FromENU([3]float64{l[0], l[1], u})
	g.H = o.H + l[2]
	return g
}

// FromENU returns the geodetic position of the point at local east, north,
// up coordinates enu (metres) about the origin o. The inverse of ToENU to
// well below a micrometre near the Earth's surface.
func (o Geodetic) FromENU(enu [3]float64) Geodetic {
	f := o.frame()
	e, n, u := enu[0], enu[1], enu[2]
	x := f.o[0] - f.sl*e - f.sp*f.cl*n + f.cp*f.cl*u
	y := f.o[1] + f.cl*e - f.sp*f.sl*n + f.cp*f.sl*u
	z := f.o[2] + f.cp*n + f.sp*u
	lon := math.Atan2(y, x)
	p := math.Hypot(x, y)
	lat := math.Atan2(z, p*(1-wgs84E2))
	var h float64
	for i := 0; i < 10; i++ {
		s, c := math.Sincos(lat)
		nn := wgs84A / math.Sqrt(1-wgs84E2*s*s)
		h = p*c + z*s - wgs84A*math.Sqrt(1-wgs84E2*s*s)
		next := math.Atan2(z, p*(1-wgs84E2*nn/(nn+h)))
		if math.Abs(next-lat) < 1e-15 {
			lat = next
			break
		}
		lat = next
	}
	s, c := math.Sincos(lat)
	h = p*c + z*s - wgs84A*math.Sqrt(1-wgs84E2*s*s)
	return Geodetic{Lat: lat * 180 / math.Pi, Lon: lon * 180 / math.Pi, H: h}
}
