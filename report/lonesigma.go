package report

// addLoneAzimuthSigmas gives the azimuth of each finding about a further
// line no track follows (Finding.Lone, from route.LoneCover through
// addLoneCover) the one-sigma uncertainty of that line's fitted azimuth,
// Source.AzimuthSigma, which the fit found by propagating its covariance
// (inverse) and which results.json and results.csv give beside it: the
// route package's Line carries no direction sigma, so LoneCover leaves the
// value without one. The finding's line is the source of its group at the
// finding's position. An azimuth with a sigma already, or of a line whose
// azimuth was held (sigma 0), is left as it is.
func (d *Document) addLoneAzimuthSigmas() {
	for i := range d.Findings {
		f := &d.Findings[i]
		if !f.Lone || len(f.Groups) != 1 {
			continue
		}
		s := d.lineAt(f.Groups[0], f.Position)
		if s == nil || !(s.AzimuthSigma > 0) {
			continue
		}
		for k := range f.Values {
			if v := &f.Values[k]; v.Name == "azimuth" && v.Unit == "deg" && v.Sigma == 0 {
				v.Sigma = s.AzimuthSigma
			}
		}
	}
}

// lineAt is the line source of group key whose point is p, or nil.
func (d *Document) lineAt(key string, p [3]float64) *Source {
	for i := range d.Groups {
		g := &d.Groups[i]
		if g.Key != key {
			continue
		}
		for j := range g.Sources {
			if s := &g.Sources[j]; s.Kind != KindDipole && s.Point == p {
				return s
			}
		}
	}
	return nil
}
