package report

import (
	"encoding/csv"
	"fmt"
	"io"
	"strconv"
)

// csvHeader lists the columns of WriteCSV. lon_deg and lat_deg are empty
// when the document has no geodetic origin.
var csvHeader = []string{
	"chainage_m", "group", "source", "kind",
	"current_a", "current_sigma_a", "phase_deg", "phase_sigma_deg",
	"depth_m", "depth_sigma_m", "cover_m",
	"east_m", "north_m", "up_m", "lon_deg", "lat_deg",
	"azimuth_deg", "azimuth_sigma_deg", "dip_deg", "dip_sigma_deg",
	"offset_m", "offset_sigma_m",
	"points", "rms_nt", "ok", "problem",
}

// WriteCSV writes one row per group and source (a group without sources
// gets one row with empty source columns), in the order of d.Groups: route
// order when there is a route. Columns are named in the header row with
// their units; positions are those of the source's point_m (the group's
// centroid when it has no source). Numbers are plain decimals, positions to
// the millimetre and longitude and latitude to 1e-8 degree.
func WriteCSV(w io.Writer, d *Document) error {
	if err := d.Validate(); err != nil {
		return err
	}
	cw := csv.NewWriter(w)
	if err := cw.Write(csvHeader); err != nil {
		return fmt.Errorf("report: writing CSV: %w", err)
	}
	for _, g := range d.Groups {
		base := func(src string, kind string, p [3]float64) []string {
			row := make([]string, len(csvHeader))
			if g.Chainage != nil {
				row[0] = fix(*g.Chainage, 3)
			}
			row[1], row[2], row[3] = g.Key, src, kind
			row[11], row[12], row[13] = fix(p[0], 3), fix(p[1], 3), fix(p[2], 3)
			if lon, lat, ok := d.wgs84(p); ok {
				row[14], row[15] = fix(lon, 8), fix(lat, 8)
			}
			row[22] = strconv.Itoa(g.Points)
			row[23] = sig(g.RMS)
			row[24] = strconv.FormatBool(g.OK)
			row[25] = g.Problem
			return row
		}
		if len(g.Sources) == 0 {
			if err := cw.Write(base("", "", g.Centroid)); err != nil {
				return fmt.Errorf("report: writing CSV: %w", err)
			}
			continue
		}
		for i, s := range g.Sources {
			row := base(strconv.Itoa(i+1), s.Kind, s.Point)
			if s.Kind != KindDipole {
				row[4], row[5] = sig(s.Current), sig(s.CurrentSigma)
				if s.Phase != nil {
					row[6] = fix(*s.Phase, 2)
				}
				if s.PhaseSigma != nil {
					row[7] = fix(*s.PhaseSigma, 2)
				}
				row[16], row[17] = fix(s.Azimuth, 2), fix(s.AzimuthSigma, 2)
				row[18], row[19] = fix(s.Dip, 2), fix(s.DipSigma, 2)
				row[20], row[21] = fix(s.Offset, 3), fix(s.OffsetSigma, 3)
			}
			row[8], row[9] = fix(s.Depth, 3), fix(s.DepthSigma, 3)
			if c, ok := d.cover(s.Depth); ok {
				row[10] = fix(c, 3)
			}
			if err := cw.Write(row); err != nil {
				return fmt.Errorf("report: writing CSV: %w", err)
			}
		}
	}
	cw.Flush()
	if err := cw.Error(); err != nil {
		return fmt.Errorf("report: writing CSV: %w", err)
	}
	return nil
}

// cover returns the depth of cover for a depth below the reference, and
// false when the ground is not known.
func (d *Document) cover(depth float64) (float64, bool) {
	switch {
	case d.DepthReference.Kind == DepthBelowGround:
		return depth, true
	case d.DepthReference.SensorHeight > 0:
		return depth - d.DepthReference.SensorHeight, true
	}
	return 0, false
}

// fix formats v with prec decimals, without a negative zero.
func fix(v float64, prec int) string {
	s := strconv.FormatFloat(v, 'f', prec, 64)
	if z := strconv.FormatFloat(0, 'f', prec, 64); s == "-"+z {
		return z
	}
	return s
}

// sig formats v with six significant digits.
func sig(v float64) string { return strconv.FormatFloat(v, 'g', 6, 64) }
