package inverse

import "math"

// runAbove fits Settings.Count lines below the sensors with the lines of
// Settings.Above held above them: the lines below are fitted as a fit of
// Count lines is, then polished together with those above started where
// the caller put them. Each line above has its height bound flipped
// (lineGeom.above): at least MinDepth above the highest sensor, at most
// as far above it as the lines below may lie beneath the lowest.
//
// A field whose lines below were fitted with a line above left out is
// biased (an overhead line 11.7 m above a 25 A cable 1.3 m down read 29 A
// at 1.45 m, 13 sigma off), so a second start has the line below where
// the first, polished alone against the readings less the lines above at
// their seeds' currents, would put it; the better of the two polished
// fits is reported.
func (f *fitter) runAbove() (*Result, error) {
	s := f.set
	var prev *candidate
	var err error
	for k := 1; k <= s.Count; k++ {
		f.rough = k < s.Count
		if prev, err = f.fitK(k, prev); err != nil {
			return nil, err
		}
	}
	f.rough = false
	top := math.Inf(-1)
	for i, r := range f.sv.pts {
		h := r[2]
		if f.sv.trav != nil {
			h += math.Abs(f.sv.trav[i][2])
		}
		top = math.Max(top, h)
	}
	ups := make([]lineGeom, 0, len(s.Above))
	for _, l := range s.Above {
		ups = append(ups, f.aboveGeom(l, top))
	}
	below := prev.sp.geom
	starts := []start{{lines: append(append([]lineGeom(nil), below...), ups...)}}
	// The lines below re-seeded from the data, each with the lines above:
	// the fit of the lines below alone may have run far from the
	// conductor to take up the field of one above.
	holdAz, holdDip, _, dip := f.holds()
	for i, sd := range f.seedsFromData(f.sv.y) {
		if i >= 3 || s.Count != 1 {
			break
		}
		g := f.sv.geomFrom(sd, holdAz, holdDip, dip, s.MinDepth)
		g.holdAz, g.holdDip = below[0].holdAz, below[0].holdDip
		g.azLo, g.azHi = below[0].azLo, below[0].azHi
		if g.holdAz {
			g.az = below[0].az
		}
		if g.holdDip {
			g.dip = below[0].dip
		}
		starts = append(starts, start{lines: append([]lineGeom{g}, ups...)})
	}
	c, err := f.bestOf(starts, false)
	if err != nil {
		return nil, wrapf(err, "fitting %d line(s) below and %d above the sensors", s.Count, len(s.Above))
	}
	return f.report(c, nil)
}

// aboveGeom turns l, a line the caller puts above the sensors
// (Settings.Above), into a fitted line's geometry whose height is bounded
// above top, the highest sensor.
func (f *fitter) aboveGeom(l Line, top float64) lineGeom {
	u := l.Dir
	n := math.Sqrt(u[0]*u[0] + u[1]*u[1] + u[2]*u[2])
	az := math.Atan2(u[0], u[1])
	dip := math.Asin(math.Max(-1, math.Min(1, -u[2]/n)))
	if s := f.set; s.Dip != nil {
		dip = *s.Dip * math.Pi / 180
	}
	if s := f.set; s.Azimuth != nil {
		az = *s.Azimuth * math.Pi / 180
	}
	g := f.sv.geomFrom(seed{e: l.Point[0], n: l.Point[1], az: az, z: l.Point[2]}, f.set.Azimuth != nil, f.set.Dip != nil, dip, f.set.MinDepth)
	g.above = true
	g.zLo = top + f.set.MinDepth
	g.zHi = top + 10*(f.sv.extent+5)
	g.z = math.Min(math.Max(l.Point[2], g.zLo), g.zHi)
	return g
}
