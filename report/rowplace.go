package report

import "math"

// summedPart reports whether source i of g is one of the two lines of a
// same-way split whose sum the route takes (Group.SummedSources).
func (g *Group) summedPart(i int) bool {
	return g.SummedSources != nil && (i == g.SummedSources[0] || i == g.SummedSources[1])
}

// summedStation is the route's station of group g when it takes the sum
// of a same-way split (Group.SummedSources) and estimated it, else nil.
func (d *Document) summedStation(g *Group) *Station {
	if g.SummedSources == nil || len(g.Sources) == 0 || g.Sources[0].Kind == KindDipole {
		return nil
	}
	if st := d.stationOf(g, 0, &g.Sources[0]); st != nil && st.estimated() {
		return st
	}
	return nil
}

// rowPlace is the position, depth and depth sigma that results.csv's row,
// route.geojson's Point and the tables' entry give for source i of group
// g: those of the route station the source is, where the station lies
// elsewhere than the source's own point, so that every output quotes one
// point, depth and cover for a station (the summaries' least cover among
// them); else the source's own point_m and depth. The station lies
// elsewhere for
//
//   - the two lines of a same-way split whose sum the route takes
//     (Group.SummedSources): the lines' centre, where conductor 1's route
//     passes, and its depth;
//   - a line followed as a further conductor whose fitted point is not
//     where it crosses its traverse: where that conductor's route passes,
//     the point where the line meets conductor 1's cross section
//     (trackStation), not the line's point nearest the readings' centre,
//     and the line's depth there (at a traverse's crossing the station is
//     the source's own point).
//
// An unresolved pair's lines (Group.Pair) are not placed here: their rows
// give the pair's centre depth as before. st is the station when the row
// takes its place, else nil.
func (d *Document) rowPlace(g *Group, i int, s *Source) (p [3]float64, depth, depthSigma float64, st *Station) {
	p, depth, depthSigma = s.Point, s.Depth, s.DepthSigma
	if s.Kind == KindDipole || (g.Pair != nil && (i == g.Pair.Sources[0] || i == g.Pair.Sources[1])) {
		return p, depth, depthSigma, nil
	}
	switch {
	case g.summedPart(i):
		st = d.summedStation(g)
	case s.Conductor > 0:
		st = d.stationOf(g, i, s)
		if st != nil && !st.estimated() {
			st = nil
		}
	}
	if st == nil {
		return p, depth, depthSigma, nil
	}
	return st.Point, st.Depth, st.DepthSigma, st
}

// SourcePlace is where the outputs place source i of group g: its
// position, depth and depth sigma as results.csv, route.geojson and the
// crew report give them (rowPlace), for the terminal's table. Zeros for a
// nil d or g, or an i that is not one of g's sources.
func (d *Document) SourcePlace(g *Group, i int) (p [3]float64, depth, depthSigma float64) {
	if d == nil || g == nil || i < 0 || i >= len(g.Sources) {
		return p, 0, 0
	}
	p, depth, depthSigma, _ = d.rowPlace(g, i, &g.Sources[i])
	return p, depth, depthSigma
}

// SummedColumns words the current and depth entries of source i of group
// g in the tables of groups (the terminal's and report.html's) when it is
// one of the two lines of a same-way split whose sum the route takes
// (Group.SummedSources): the first line's entry the sum the route takes,
// "sum 1.7204 ± 0.0031" (with its phase for AC), at the lines' centre,
// whose depth it gives; the second's the two shares, "of 0.9209 ± 0.0755
// + 0.7995 ± 0.0755", and "(centre)" for the depth. ok is false for any
// other source, and for a nil d or g.
func (d *Document) SummedColumns(g *Group, i int) (current, depth string, ok bool) {
	if d == nil || g == nil {
		return "", "", false
	}
	st := d.summedStation(g)
	if st == nil || !g.summedPart(i) {
		return "", "", false
	}
	if i == g.SummedSources[0] {
		current = "sum " + PlusMinus(st.Current, st.CurrentSigma)
		if st.Phase != nil && st.PhaseSigma != nil {
			current += " ∠" + PlusMinus(*st.Phase, *st.PhaseSigma) + "°"
		}
		return current, PlusMinus(st.Depth, st.DepthSigma), true
	}
	a, b := g.Sources[g.SummedSources[0]], g.Sources[g.SummedSources[1]]
	return "of " + PlusMinus(a.Current, a.CurrentSigma) + " + " + PlusMinus(b.Current, b.CurrentSigma), "(centre)", true
}

// rowOffset is the offset, m, and its sigma that results.csv gives for
// source i of group g, placed at p (rowPlace; st the station when the row
// takes its place, else nil): the signed horizontal distance from the
// group's centroid to the line through p along the source's own
// direction, positive to the right looking along it, so that the row's
// east/north, azimuth and offset name one line. For a further
// conductor's row p lies on the source's own line and the offset is the
// source's. The lines of a same-way split whose sum the route takes are
// placed at their centre (splitSumCentre): the row had kept line 1's own
// offset (-0.348 m) beside the centre's east/north, which lay 0.4-0.7 m
// from that line (found in review); its sigma is the centre's
// (splitPlanSigma).
func (g *Group) rowOffset(i int, s *Source, p [3]float64, st *Station) (off, sigma float64) {
	off, sigma = s.Offset, s.OffsetSigma
	if st == nil || !g.summedPart(i) {
		return off, sigma
	}
	de, dn := s.Direction[0], s.Direction[1]
	h := math.Hypot(de, dn)
	if !(h > 0) {
		return off, sigma
	}
	// Right of (de, dn) in plan is (dn, -de).
	off = ((p[0]-g.Centroid[0])*dn - (p[1]-g.Centroid[1])*de) / h
	a, b := &g.Sources[g.SummedSources[0]], &g.Sources[g.SummedSources[1]]
	sigma = splitPlanSigma(math.Abs(a.Current), a.OffsetSigma, math.Abs(b.Current), b.OffsetSigma,
		splitParallel(a.Azimuth, a.AzimuthSigma, b.Azimuth, b.AzimuthSigma))
	return off, sigma
}
