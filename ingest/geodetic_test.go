package ingest

import (
	"math"
	"testing"
)

func TestGeodeticECEF(t *testing.T) {
	// DOMAIN.md (verified, WGS84 per NIMA TR8350.2): (45 N, 0 E, 0 m) ->
	// (4517590.878849, 0, 4487348.408866) m.
	const tol = 1e-6 // m; the check values are given to the micrometre
	got := Geodetic{Lat: 45}.ecef()
	want := [3]float64{4517590.878849, 0, 4487348.408866}
	for i := range got {
		if math.Abs(got[i]-want[i]) > tol {
			t.Errorf("ecef[%d] = %.6f, want %.6f", i, got[i], want[i])
		}
	}
}

func TestGeodeticToENU(t *testing.T) {
	// DOMAIN.md (verified): about (40.137 N, -105.236 E, 1682 m), +0.001 deg
	// latitude is (0, 111.066633, -0.000969) m ENU and +0.001 deg longitude
	// is (85.245398, 0.00048, -0.000569) m.
	const tol = 2e-6 // m; the check values carry six decimals (0.00048 five)
	o := Geodetic{Lat: 40.137, Lon: -105.236, H: 1682}
	cases := []struct {
		name string
		p    Geodetic
		want [3]float64
		tol  [3]float64
	}{
		{"north", Geodetic{40.138, -105.236, 1682}, [3]float64{0, 111.066633, -0.000969}, [3]float64{tol, tol, tol}},
		{"east", Geodetic{40.137, -105.235, 1682}, [3]float64{85.245398, 0.00048, -0.000569}, [3]float64{tol, 1e-5, tol}},
		{"origin", o, [3]float64{}, [3]float64{1e-9, 1e-9, 1e-9}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			got := o.ToENU(tc.p)
			for i := range got {
				if math.Abs(got[i]-tc.want[i]) > tc.tol[i] {
					t.Errorf("enu[%d] = %.7f, want %.7f", i, got[i], tc.want[i])
				}
			}
		})
	}
}

func TestGeodeticFromENURoundTrip(t *testing.T) {
	// FromENU must invert ToENU; 1e-9 deg is about 0.1 mm.
	const degTol, hTol = 1e-9, 1e-6
	origins := []Geodetic{{40.137, -105.236, 1682}, {52.6, 0.1, 3}, {-33.9, 151.2, 40}, {89.9, 10, 0}}
	for _, o := range origins {
		for _, enu := range [][3]float64{{0, 0, 0}, {120.5, -80.25, 1.5}, {-3000, 2500, -20}} {
			p := o.FromENU(enu)
			back := o.ToENU(p)
			for i := range enu {
				if math.Abs(back[i]-enu[i]) > 1e-6 {
					t.Errorf("origin %v enu %v: round trip %v", o, enu, back)
				}
			}
			if enu == [3]float64{} && (math.Abs(p.Lat-o.Lat) > degTol || math.Abs(p.Lon-o.Lon) > degTol || math.Abs(p.H-o.H) > hTol) {
				t.Errorf("origin %v: FromENU(0) = %v", o, p)
			}
		}
	}
}

// TestGeodeticLocalUpIsHeight checks ToLocal: up is the height above the
// origin's height at any distance (a point 5 km off at the origin's height
// has up 0, where the tangent plane's up is about -d^2/(2R) = -1.96 m, R
// from memory), east and north are ToENU's on the origin's height, and
// FromLocal inverts it.
func TestGeodeticLocalUpIsHeight(t *testing.T) {
	origins := []Geodetic{{52.0, 0.5, 10}, {-33.9, 151.2, 40}, {40.137, -105.236, 1682}}
	for _, o := range origins {
		for _, enu := range [][3]float64{{0, 0, 0}, {120.5, -80.25, 1.5}, {-3000, 2500, -20}, {4000, 3000, 0}} {
			p := o.FromENU(enu)
			p.H = o.H + 0.3 // level ground 0.3 m below the reading
			l := o.ToLocal(p)
			if math.Abs(l[2]-0.3) > 1e-9 {
				t.Errorf("origin %v enu %v: up %.9f, want the height above the origin's, 0.3", o, enu, l[2])
			}
			on := o.ToENU(Geodetic{p.Lat, p.Lon, o.H})
			if math.Abs(l[0]-on[0]) > 1e-9 || math.Abs(l[1]-on[1]) > 1e-9 {
				t.Errorf("origin %v enu %v: east, north %v, want ToENU's on the origin's height %v", o, enu, l, on)
			}
			if d := math.Hypot(enu[0], enu[1]); d > 4000 && on[2] > -1 {
				t.Errorf("origin %v: the tangent plane's up %.3f m at %.0f m, want about -d^2/2R", o, on[2], d)
			}
			back := o.FromLocal(l)
			if math.Abs(back.Lat-p.Lat) > 1e-11 || math.Abs(back.Lon-p.Lon) > 1e-11 || math.Abs(back.H-p.H) > 1e-7 {
				t.Errorf("origin %v enu %v: FromLocal(ToLocal) = %v, want %v", o, enu, back, p)
			}
		}
	}
}
