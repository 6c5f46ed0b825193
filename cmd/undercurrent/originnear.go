package main

import (
	"fmt"
	"math"
	"os"
	"strconv"
	"strings"

	"undercurrent/ingest"
)

// checkOriginValues refuses an --origin LAT,LON[,HEIGHT] (o as given, v
// its numbers) that is not a place: a value that is not finite (NaN gave
// a log of NaN positions, or a run that failed only at its end), a
// latitude outside -90 to 90, or a longitude outside -180 to 180. A
// longitude east of 180 (the 0-360 convention) is refused rather than
// wrapped: the origin is recorded as given in results.json's settings
// and compared as given with a log's own origin, while the document's
// frame.origin and GeoJSON (RFC 7946, 3.1.1) take -180 to 180, so a
// wrapped origin would be recorded as two different numbers; the message
// gives the longitude less 360 to type instead.
func checkOriginValues(o string, v [3]float64) error {
	for i, name := range []string{"latitude", "longitude", "height"} {
		if math.IsNaN(v[i]) || math.IsInf(v[i], 0) {
			return usageErrorf("--origin %q: the %s is %v: want finite numbers, LAT,LON[,HEIGHT] in degrees and metres", o, name, v[i])
		}
	}
	if v[0] < -90 || v[0] > 90 {
		hint := ""
		if math.Abs(v[1]) <= 90 {
			hint = fmt.Sprintf(" (latitude comes first: --origin %s,%s?)", trimFixed(v[1], 9), trimFixed(v[0], 9))
		}
		return usageErrorf("--origin %q: latitude %v is outside -90 to 90%s", o, v[0], hint)
	}
	if v[1] > 180 && v[1] <= 360 {
		return usageErrorf("--origin %q: longitude %v is east of 180: give it less 360, %s (longitudes run from -180 to 180)", o, v[1], trimFixed(v[1]-360, 9))
	}
	if v[1] < -180 || v[1] > 180 {
		return usageErrorf("--origin %q: longitude %v is outside -180 to 180", o, v[1])
	}
	return nil
}

// An --origin LAT,LON far from a log's readings gives wrong results
// silently: positions are placed in the origin's tangent plane, while each
// reading's field stays in its own local level frame, turned from the
// origin's by the angle between them (about distance/R, and about the
// vertical by the meridian convergence). Measured on the walk-through
// survey (kestrel-moor-step, seed 250) moved to 52 N 0.1 E, whose depths
// carry a sigma of 0.5 %, with the origin moved east of the first reading
// (the worse direction, where the convergence turns the field about the
// vertical): 0.03 sigma of depth and current at 5 km, 0.06 at 10 km, 0.11
// at 20 km, 0.27 at 50 km, 0.5 at 100 km, 1.0 at 200 km, 1.6 at 445 km
// (north of it: 0.01 sigma at 50 km, 0.13 at 200 km); lat and lon typed
// the wrong way round (6400 km) made depths 41 % shallow (77 sigma). The
// effect grows as the sigmas shrink and, east or west, with the tangent
// of the latitude. So an origin more than originWarnKm from a log's
// first reading is warned of, and one more than originFarKm away (0.27
// sigma there, over a sigma for a survey with sigmas four times smaller
// or at 70 degrees) is refused before any work, exit 2: no legitimate
// survey needs one, and every typo of a degree or more (111 km of
// latitude) lands there.
const (
	originWarnKm = 5.0
	originFarKm  = 50.0
)

// earthMeanRadiusKm is the mean radius of the Earth (IUGG, R1 =
// 6371.0088 km), for distances between an origin and a reading.
const earthMeanRadiusKm = 6371.0088

// greatCircleKm is the distance between a and b along the sphere of
// mean radius (haversine formula), in km: good to 0.5 % on the ellipsoid,
// enough to say how far an origin is.
func greatCircleKm(a, b ingest.Geodetic) float64 {
	rad := math.Pi / 180
	dp, dl := (b.Lat-a.Lat)*rad, (b.Lon-a.Lon)*rad
	h := math.Sin(dp/2)*math.Sin(dp/2) + math.Cos(a.Lat*rad)*math.Cos(b.Lat*rad)*math.Sin(dl/2)*math.Sin(dl/2)
	return 2 * earthMeanRadiusKm * math.Asin(math.Sqrt(math.Min(1, h)))
}

// frameTurnDeg is the angle, in degrees, of the rotation that takes the
// local east-north-up frame at a to the one at b (geodetic latitudes:
// the ellipsoid's normals): from the trace of the product of the two
// frames' matrices, cos(angle) = (trace - 1) / 2.
func frameTurnDeg(a, b ingest.Geodetic) float64 {
	enu := func(g ingest.Geodetic) [3][3]float64 {
		sp, cp := math.Sincos(g.Lat * math.Pi / 180)
		sl, cl := math.Sincos(g.Lon * math.Pi / 180)
		return [3][3]float64{{-sl, cl, 0}, {-sp * cl, -sp * sl, cp}, {cp * cl, cp * sl, sp}}
	}
	fa, fb := enu(a), enu(b)
	var tr float64
	for i := range 3 {
		for j := range 3 {
			tr += fa[i][j] * fb[i][j]
		}
	}
	return math.Acos(math.Max(-1, math.Min(1, (tr-1)/2))) * 180 / math.Pi
}

// degText writes an angle in degrees for a message: whole degrees from
// 10, else two significant digits.
func degText(deg float64) string {
	if deg >= 10 {
		return strconv.FormatFloat(deg, 'f', 0, 64)
	}
	return strconv.FormatFloat(deg, 'g', 2, 64)
}

// kmText writes a distance in km for a message.
func kmText(km float64) string {
	if km < 100 {
		return strconv.FormatFloat(km, 'f', 1, 64) + " km"
	}
	return strconv.FormatFloat(km, 'f', 0, 64) + " km"
}

// checkOriginNear compares --origin LAT,LON[,HEIGHT] with the first
// reading of each log in paths that has latitude and longitude columns
// (read with opts up to that reading: a CSV log's header and first data
// row, an Arrow IPC or Parquet log's first record batch): an origin
// more than originFarKm away is refused, exit 2, naming the distance and
// suggesting the first reading as origin, as locate does for several
// logs about different origins (sameOrigin); one more than originWarnKm
// away gets a warning, returned. A pipe is not looked at (its first
// bytes cannot be read twice), nor a log that cannot be opened (its read
// says why), nor one in local metres (--origin does not place it).
func (f *readFlags) checkOriginNear(paths []string, opts []ingest.Option) ([]string, error) {
	if f.fixedOrigin == nil {
		return nil, nil
	}
	o := *f.fixedOrigin
	flag := strings.TrimSpace(f.origin)
	var warns []string
	for _, path := range paths {
		first, ok := firstReading(path, opts)
		if !ok {
			continue
		}
		km := greatCircleKm(o, first)
		if km <= originWarnKm {
			continue
		}
		what := fmt.Sprintf("%s: --origin %s is %s from the log's first reading (%s), whose level frame is turned %s degrees from the origin's: positions are placed in the origin's level plane while each reading's field stays in its own",
			path, flag, kmText(km), originText(first), degText(frameTurnDeg(o, first)))
		if km > originFarKm {
			return warns, usageErrorf("%s, which past %g km moves depths, currents and positions by a good part of their uncertainty or more (0.27 sigma at 50 km in a survey measured at 52 degrees north)%s; give an origin within %g km of the readings, such as the log's first reading, --origin %s",
				what, originFarKm, originSlip(o, first), originFarKm, originArg(first))
		}
		warns = append(warns, fmt.Sprintf("%s, which moves depths and currents by up to about 0.1 times their uncertainty per 20 km (measured at 52 degrees north); an origin within %g km of the readings, such as the log's first reading (--origin %s), avoids that",
			what, originWarnKm, originArg(first)))
	}
	return warns, nil
}

// originSlip names a likely slip when o, with its latitude and longitude
// swapped or one sign changed, lies within originWarnKm of first.
func originSlip(o, first ingest.Geodetic) string {
	near := func(g ingest.Geodetic) bool { return greatCircleKm(g, first) <= originWarnKm }
	switch {
	case math.Abs(o.Lon) <= 90 && near(ingest.Geodetic{Lat: o.Lon, Lon: o.Lat}):
		return "; its latitude and longitude look the wrong way round (--origin takes LAT,LON; GeoJSON and many GIS tools write lon,lat)"
	case near(ingest.Geodetic{Lat: -o.Lat, Lon: o.Lon}) || near(ingest.Geodetic{Lat: o.Lat, Lon: -o.Lon}):
		return "; one of its signs looks the wrong way round"
	}
	return ""
}

// firstReading returns the first reading's latitude, longitude and
// height of the log at path, read with opts up to that reading (ingest
// places the default origin there, in every format); ok is false for a
// pipe, a log that cannot be opened, and one without latitude and
// longitude columns.
func firstReading(path string, opts []ingest.Option) (ingest.Geodetic, bool) {
	if fi, err := os.Stat(path); err != nil || !fi.Mode().IsRegular() {
		return ingest.Geodetic{}, false
	}
	r, err := ingest.Open(path, append(append([]ingest.Option(nil), opts...), ingest.WithOriginFirst())...)
	if err != nil {
		return ingest.Geodetic{}, false
	}
	defer r.Release()
	geo := false
	for _, m := range ingest.Mappings(r) {
		if m.Column == "x" && strings.HasPrefix(m.Source, "WGS84 ") {
			geo = true
		}
	}
	v, ok := r.Schema().Metadata().GetValue(ingest.MetaOrigin)
	if !geo || !ok {
		return ingest.Geodetic{}, false
	}
	var g ingest.Geodetic
	if _, err := fmt.Sscanf(v, "%g %g %g", &g.Lat, &g.Lon, &g.H); err != nil {
		return ingest.Geodetic{}, false
	}
	if g == (ingest.Geodetic{}) {
		// The reader's stand-in when no row has a usable position
		// (its read reports the log).
		return ingest.Geodetic{}, false
	}
	return g, true
}
