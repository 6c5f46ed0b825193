package ingest

import (
	"fmt"
	"math"
	"strconv"
)

// Latitude and longitude ranges, checked where they become local metres.
//
// A latitude outside -90 to 90 degrees, or a longitude outside -180 to 360
// degrees, is no position in degrees: latitude and longitude swapped (a
// site at 120 E read as latitude 120), or NMEA degrees and minutes
// (ddmm.mmmm: 5227.0744 for 52 degrees 27.0744 minutes). Before, such a
// log was read, placed and fitted, and failed only when the result
// document was checked ("internal error: ... frame.origin (5227.074407,
// 10.427764) is not a latitude and longitude in degrees"), or, for an
// origin line, not at all (inspect showed "origin lat 5227.07441"; convert
// wrote the origin line on). Found in review. Now the read refuses the
// first such value, naming the file, its line (or batch and row), the
// column and the value, with a hint.
//
// Longitudes from 180 to 360 degrees (east, all the way round: 357.3 for
// 2.7 W) are the same places as -180 to 0 (the WGS84 Earth-centred
// coordinates are periodic in longitude), so readings are taken as they
// are; an origin given that way (an origin line, or the first reading) is
// brought to -180 to 180, with a warning, so that the results and a
// converted log's origin line give longitude as GeoJSON (RFC 7946 section
// 4) and results.json expect it.

// latLonProblem returns why lat, lon (degrees) are not a position in
// degrees, with a hint, or "" when they are (a NaN, a missing value, is
// left to the checks for missing values). which names the value at fault:
// "latitude" or "longitude"; swapFix is what to do about a swap.
func latLonProblem(lat, lon float64, swapFix string) (which, msg string) {
	if math.IsNaN(lat) || math.IsNaN(lon) {
		return "", ""
	}
	if math.Abs(lat) > 90 {
		return "latitude", fmt.Sprintf("latitude %s is outside -90 to 90 degrees%s", num(lat), latHint(lat, lon, swapFix))
	}
	if lon < -180 || lon > 360 {
		return "longitude", fmt.Sprintf("longitude %s is outside -180 to 180 degrees (or 0 to 360)%s", num(lon), minutesHint(lon, 180))
	}
	return "", ""
}

// colSwapFix and originSwapFix say how to give latitude and longitude the
// right way round: in columns, and in an origin.
const (
	colSwapFix    = "map each to its own column (on the command line --column lat=NAME,lon=NAME)"
	originSwapFix = "an origin is written latitude first: LAT LON HEIGHT"
)

func num(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

// latHint guesses why a latitude is out of range.
func latHint(lat, lon float64, swapFix string) string {
	if math.Abs(lat) <= 180 && math.Abs(lon) <= 90 {
		return fmt.Sprintf(": latitude and longitude swapped? (longitude %s would be a latitude); %s", num(lon), swapFix)
	}
	if h := minutesHint(lat, 90); h != "" {
		return h
	}
	return ": give latitude in decimal degrees"
}

// minutesHint reads v as NMEA degrees and minutes (ddmm.mmmm, dddmm.mmmm)
// and, when that gives whole degrees up to limit and minutes under 60,
// says so; "" otherwise.
func minutesHint(v float64, limit float64) string {
	a := math.Abs(v)
	deg := math.Floor(a / 100)
	min := a - 100*deg
	if a < 100 || deg > limit || min >= 60 {
		return ""
	}
	d := deg + min/60
	if v < 0 {
		d = -d
	}
	return fmt.Sprintf(": degrees and minutes (NMEA ddmm.mmmm)? %s would be %g degrees %s minutes, %.7f degrees; give decimal degrees (convert the column: degrees + minutes/60)",
		num(v), deg, num(math.Round(min*1e6)/1e6), d)
}

// wrapOrigin brings an origin's longitude from 180-360 to -180-0 and says
// so; o unchanged and "" otherwise. what names where the origin came from.
func (p *plan) wrapOrigin(o Geodetic, what string) Geodetic {
	if o.Lon > 180 && o.Lon <= 360 {
		// Rounded to 1e-10 degree (10 micrometres), so that 357.3 reads
		// -2.7, not -2.7000000000000455.
		w := math.Round((o.Lon-360)*1e10) / 1e10
		p.warn("%s: longitudes are given from 0 to 360 degrees east: the origin's (%s) %s is read as %s (%s degrees west), the same place; results give longitude from -180 to 180",
			p.file, what, num(o.Lon), num(w), num(-w))
		o.Lon = w
	}
	return o
}

// checkLatLon returns the first row of rb whose latitude or longitude is
// out of range, the column at fault and why; row -1 when there is none.
// It is called before transform, on the rows as parsed.
func (p *plan) checkLatLon(rb *rawBatch) (row int, col, msg string) {
	if !p.geodetic {
		return -1, "", ""
	}
	lat, lon := rb.f[cLat], rb.f[cLon]
	for i := 0; i < rb.n && i < len(lat) && i < len(lon); i++ {
		if which, m := latLonProblem(lat[i], lon[i], colSwapFix); m != "" {
			c := cLat
			if which == "longitude" {
				c = cLon
			}
			return i, p.header[p.src[c]], m
		}
	}
	return -1, "", ""
}

// originLineErr refuses a CSV log's origin line (line, key k, value v)
// whose latitude or longitude is out of range, naming the line; nil for
// any other line, and for an origin line that does not parse (newPlan's).
func originLineErr(file string, line int, k, v string) error {
	if k != MetaOrigin {
		return nil
	}
	var g Geodetic
	if _, err := fmt.Sscanf(v, "%g %g %g", &g.Lat, &g.Lon, &g.H); err != nil {
		return nil
	}
	if m := originProblem(g); m != "" {
		return lineErr(file, line, "", "", "the origin line \"# %s: %s\": %s", MetaOrigin, v, m)
	}
	return nil
}

// maxOriginHeight bounds an origin's height, m.
const maxOriginHeight = 1e5

// originProblem says what is wrong with an origin read from a file ("" if
// nothing): a latitude or longitude out of range, or a value that is not
// finite or a height beyond +-100 km. Before, "nan nan nan" was taken, and
// locate failed after its fits with "internal error: the result document
// is not valid: frame.origin.lat_deg is NaN".
func originProblem(g Geodetic) string {
	for _, c := range []struct {
		what string
		v    float64
	}{{"latitude", g.Lat}, {"longitude", g.Lon}, {"height", g.H}} {
		if math.IsNaN(c.v) || math.IsInf(c.v, 0) {
			return fmt.Sprintf("%s %s is not a number: give latitude and longitude in decimal degrees and the height in metres (LAT LON HEIGHT)", c.what, num(c.v))
		}
	}
	if _, m := latLonProblem(g.Lat, g.Lon, originSwapFix); m != "" {
		return m
	}
	if math.Abs(g.H) > maxOriginHeight {
		return fmt.Sprintf("height %s m is beyond +-%g m of the ellipsoid: give the height in metres", num(g.H), maxOriginHeight)
	}
	return ""
}
