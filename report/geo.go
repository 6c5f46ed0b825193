package report

import "undercurrent/ingest"

// wgs84 returns the WGS84 longitude and latitude in degrees of the local
// position enu (ingest.Geodetic.FromLocal about the document's origin), and
// false when the document has no geodetic origin.
func (d *Document) wgs84(enu [3]float64) (lon, lat float64, ok bool) {
	o := d.Frame.Origin
	if o == nil {
		return 0, 0, false
	}
	g := ingest.Geodetic{Lat: o.Lat, Lon: o.Lon, H: o.H}.FromLocal(enu)
	return g.Lon, g.Lat, true
}
