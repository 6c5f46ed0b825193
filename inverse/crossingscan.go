package inverse

import (
	"math"
	"slices"
)

// The seeds of a one-line fit are read off the anomaly's shape (seedFor's half-width,
// poleSeed's pole). Where the line's field is not much above the noise, that shape is
// the noise's as much as the line's, and every seed can start in a basin of the noise:
// a 1 A line 6 m down under 20 m traverses read with 20 nT noise (peak 32 nT) ended on
// about 40% of traverses at a near-zero current a few metres from the sensors, while
// the true line lowers chi-square by 10 to 150 more. crossingScan looks for the line
// over the whole vertical plane across it, which is cheap because everything but the
// crossing is linear.

// scanRatio is the ratio of successive depths of crossingScan's grid, and scanStep its
// step across, in units of the depth below the sensors: a line's field over a
// traverse is a bump about twice its depth wide, so a node within a quarter of a depth
// and a quarter of a depth apart lies inside the basin of a line at the nodes' depth.
const (
	scanRatio = 1.25
	scanStep  = 0.5
)

// scanNode is one crossing of the scan's grid with the sum of squares it leaves.
type scanNode struct {
	d, z, rss float64 // across the line from the centroid, height relative to the mean height (m)
}

// crossingScan returns the crossings of a horizontal line of azimuth az in the plane
// across it that best fit the readings, with its current (each part, for AC) and a
// uniform background solved for by linear least squares at every node of a grid, and
// the sum of squares the fit leaves at a given crossing (at, relative as the nodes'),
// for comparison with the same measure. The line's field (Biot-Savart, see poleSeed) in
// the plane across it is K ((z - z0) nh - (d - d0) up) / ((d - d0)^2 + (z - z0)^2),
// with nothing along the line, so for a unit current g at every reading the sum of
// squares left is S0 - sum_k (g.y_k)^2 / g.g with g and the data y_k centred per axis
// (the background taken out): two sums per node and reading. Depths run geometrically
// by scanRatio from a twentieth of the survey's half-width (extent) to twice it below
// the lowest sensor (within the search's bounds), and across within the depth of
// either end of the readings, in steps of scanStep depths. On large surveys the
// evenly spaced subsample of screening is scanned. The nodes returned are the grid's
// local minima (across and in depth), best first, at most keep of them. ok is false
// for a gradient background (not linear in this way) or when no node is formed.
func (sv *survey) crossingScan(az, minDepth float64, bg BackgroundModel, at [2]float64, keep int) (nodes []scanNode, atRSS float64, ok bool) {
	if bg == BackgroundGradient || bg == BackgroundAlong {
		return nil, 0, false
	}
	sub := sv.screening()
	n, nr := len(sub.pts), sub.nrhs
	if n < 3 {
		return nil, 0, false
	}
	nh := [3]float64{math.Cos(az), -math.Sin(az), 0}
	d := sv.scr.take(n)
	z := sv.scr.take(n)
	yc := sv.scr.take(2 * n * nr) // across, then up, per reading and part
	var mean [3][2]float64
	for i := range n {
		r := &sub.pts[i]
		d[i] = (r[0]-sv.centroid[0])*nh[0] + (r[1]-sv.centroid[1])*nh[1]
		z[i] = r[2] - sv.zmean
		for k := range nr {
			e, nn, u := sub.y[(3*i)*nr+k], sub.y[(3*i+1)*nr+k], sub.y[(3*i+2)*nr+k]
			yc[(2*i)*nr+k] = e*nh[0] + nn*nh[1]
			yc[(2*i+1)*nr+k] = u
			mean[0][k] += e*nh[0] + nn*nh[1]
			mean[1][k] += u
			mean[2][k] += e*nh[1] - nn*nh[0] // along the line
		}
	}
	center := bg != BackgroundNone
	var s0 float64
	for i := range n {
		for k := range nr {
			e, nn := sub.y[(3*i)*nr+k], sub.y[(3*i+1)*nr+k]
			al := e*nh[1] - nn*nh[0]
			if center {
				yc[(2*i)*nr+k] -= mean[0][k] / float64(n)
				yc[(2*i+1)*nr+k] -= mean[1][k] / float64(n)
				al -= mean[2][k] / float64(n)
			}
			s0 += yc[(2*i)*nr+k]*yc[(2*i)*nr+k] + yc[(2*i+1)*nr+k]*yc[(2*i+1)*nr+k] + al*al
		}
	}
	// rssAt is the sum of squares left with the line crossing at (d0, z0).
	rssAt := func(d0, z0 float64) float64 {
		var gg, ga, gu float64
		var gy [2]float64
		for i := range n {
			dd, dz := d[i]-d0, z[i]-z0
			q := 1 / (dd*dd + dz*dz)
			ga1, gu1 := dz*q, -dd*q
			gg += ga1*ga1 + gu1*gu1
			ga += ga1
			gu += gu1
			for k := range nr {
				gy[k] += ga1*yc[(2*i)*nr+k] + gu1*yc[(2*i+1)*nr+k]
			}
		}
		if center {
			gg -= (ga*ga + gu*gu) / float64(n)
		}
		if !(gg > 0) {
			return s0
		}
		var red float64
		for k := range nr {
			red += gy[k] * gy[k] / gg
		}
		return s0 - red
	}
	atRSS = rssAt(at[0], at[1])
	top := sv.zmin - minDepth - sv.zmean // highest crossing allowed, relative
	lim := 2*sv.extent + 5
	h0, h1 := math.Max(sv.extent/20, minDepth), 2*sv.extent
	var grid [][]scanNode // per depth, across
	for h := h0; h <= h1*(1+1e-9); h *= scanRatio {
		z0 := math.Min(top, sv.zmin-h-sv.zmean)
		w := math.Min(sv.extent+h, lim)
		step := scanStep * h
		m := int(math.Ceil(w / step))
		row := make([]scanNode, 0, 2*m+1)
		for j := -m; j <= m; j++ {
			d0 := float64(j) * step
			row = append(row, scanNode{d: d0, z: z0, rss: rssAt(d0, z0)})
		}
		grid = append(grid, row)
	}
	if len(grid) == 0 {
		return nil, atRSS, false
	}
	// Local minima: no lower node beside it across, nor at the nearest across in the
	// rows above and below.
	nearest := func(row []scanNode, d0 float64) float64 {
		j, _ := slices.BinarySearchFunc(row, d0, func(a scanNode, t float64) int {
			switch {
			case a.d < t:
				return -1
			case a.d > t:
				return 1
			}
			return 0
		})
		best := math.Inf(1)
		for _, jj := range []int{j - 1, j} {
			if jj >= 0 && jj < len(row) {
				best = math.Min(best, row[jj].rss)
			}
		}
		return best
	}
	for r, row := range grid {
		for j, nd := range row {
			if j > 0 && row[j-1].rss < nd.rss || j+1 < len(row) && row[j+1].rss < nd.rss {
				continue
			}
			if r > 0 && nearest(grid[r-1], nd.d) < nd.rss || r+1 < len(grid) && nearest(grid[r+1], nd.d) < nd.rss {
				continue
			}
			nodes = append(nodes, nd)
		}
	}
	slices.SortFunc(nodes, func(a, b scanNode) int {
		switch {
		case a.rss < b.rss:
			return -1
		case a.rss > b.rss:
			return 1
		}
		return 0
	})
	if len(nodes) > keep {
		nodes = nodes[:keep]
	}
	return nodes, atRSS, len(nodes) > 0
}

// scanSeed turns a node of crossingScan at azimuth az into a seed.
func (sv *survey) scanSeed(nd scanNode, az float64) seed {
	nh := [3]float64{math.Cos(az), -math.Sin(az), 0}
	p := add(sv.centroid, scale(nh, nd.d))
	return seed{e: p[0], n: p[1], az: az, z: nd.z + sv.zmean}
}

// scanKeep is the number of crossingScan's best local minima polished when the scan
// finds a crossing that fits better than a one-line fit's.
const scanKeep = 3

// scanBelow is the fall in chi-square from the background alone (on the readings'
// noise, noiseFloor) below which a one-line fit is checked by crossingScan. Above it
// the fit's line explains the readings far beyond what noise can (50 sigma), the
// seeds read off so clear an anomaly place it, and the scan is not run: run on every
// one-line fit it made the fit of a 41-reading traverse four times slower (28 to 120
// microseconds of CPU). The weak lines the scan is
// for lower chi-square by 10 to 300 (1 A at 6 m under 20 m traverses and 20 nT; at
// twice the current the seeds found every one).
const scanBelow = 2500

// backgroundRSS returns the sum of squares of the readings about the background alone
// (a uniform field per axis, or none), or ok false for a gradient background.
func (sv *survey) backgroundRSS(bg BackgroundModel) (rss float64, ok bool) {
	if bg == BackgroundGradient || bg == BackgroundAlong {
		return 0, false
	}
	n, nr := len(sv.pts), sv.nrhs
	for c := range 3 * nr {
		j, k := c/nr, c%nr
		var m float64
		if bg != BackgroundNone {
			for i := range n {
				m += sv.y[(3*i+j)*nr+k]
			}
			m /= float64(n)
		}
		for i := range n {
			v := sv.y[(3*i+j)*nr+k] - m
			rss += v * v
		}
	}
	return rss, true
}

// scanned returns the one-line fit best, or a better one polished from the best
// crossings crossingScan finds. A fit whose line is lost (lostLine) is scanned
// whatever its fall in chi-square, and a fit below scanBelow whose azimuth is free
// (not on a single traverse) first over lostAzimuths azimuths too (rescanLost): its own azimuth is the noise's
// as much as its position is. Then, at the azimuth the fit's new lines start with (held
// on a single traverse) or else best's own, when the best crossing leaves a sum of
// squares below the one best's own crossing leaves by the same measure by more than
// one unit of chi-square (on the readings' noise, noiseFloor). Where best is at the
// global minimum of the scan's model (a strong signal, found by the seeds), no node
// of the coarse grid fits better and nothing more is polished.
func (f *fitter) scanned(best *candidate) *candidate {
	if len(best.sp.geom) != 1 || len(best.sp.dips) > 0 {
		return best
	}
	best.sp.unpack(best.x)
	g := best.sp.geom[0]
	holdAz, holdDip, az, dip := f.holds()
	if !holdAz {
		az = g.az
	}
	sv := f.sv
	unit := f.noiseFloor()
	unit *= unit
	lost := f.lostLine(&g)
	if s0, ok := sv.backgroundRSS(f.set.Background); !ok || !(unit > 0) || (s0-best.rss)/unit > scanBelow && !lost {
		return best
	}
	if lost || !holdAz && !sv.single {
		best = f.rescanLost(best, holdAz, holdDip, az, dip)
		if lost {
			return best
		}
		best.sp.unpack(best.x)
		g = best.sp.geom[0]
		if !holdAz {
			az = g.az
		}
	}
	at := [2]float64{g.s, g.z - sv.zmean}
	if math.Abs(math.Remainder(g.az-az, math.Pi)) > 1e-9 {
		// Fitted at another azimuth: its crossing in the scan's plane.
		nh := [3]float64{math.Cos(az), -math.Sin(az), 0}
		p := g.line().Point
		at[0] = (p[0]-sv.centroid[0])*nh[0] + (p[1]-sv.centroid[1])*nh[1]
	}
	nodes, atRSS, ok := sv.crossingScan(az, f.set.MinDepth, f.set.Background, at, scanKeep)
	if !ok {
		return best
	}
	if !(nodes[0].rss < atRSS-unit) {
		return best
	}
	var starts []start
	for _, nd := range nodes {
		if nd.rss >= atRSS-unit {
			break
		}
		l := sv.geomFrom(sv.scanSeed(nd, az), holdAz, holdDip, dip, f.set.MinDepth)
		starts = append(starts, start{lines: []lineGeom{l}})
	}
	v, err := f.bestOf(starts, false)
	if err != nil || !(v.rss < best.rss) {
		return best
	}
	v.iters += best.iters
	return v
}

// lostLine reports whether a one-line fit's line g ended where the readings do not
// place it: held at the minimum depth, at the edge of the region searched across the
// readings, or passing above the sensors (the notes of deriveQuantities). Such a line
// is no conductor found but the fit's search lost in the noise's basins, whatever the
// fall in chi-square it gives: on six fixed sensors 0.5 m up, 2 m apart, over a
// 0.02 A pipe 3.5 m below them (1.1 nT under 0.5 nT of noise and a drifting
// background), the seeds, read off six points, ended on a line 1.24 m above the
// sensors at the edge of the region, 2500 units of chi-square below the background
// alone (scanBelow's bound) but 1950 above the true line.
func (f *fitter) lostLine(g *lineGeom) bool {
	return g.z >= g.zHi-1e-9 || g.s <= g.sLo+1e-9 || g.s >= g.sHi-1e-9 || f.aboveSensors(g)
}

// lostAzimuths is the number of azimuths, evenly over 180 degrees, at which
// rescanLost scans when the azimuth is free: a lost line's own azimuth says nothing of
// the conductor's (156 degrees for a pipe at 10 in lostLine's case), and the scan's
// plane is across one azimuth only.
const lostAzimuths = 12

// rescanLost returns the one-line fit best, whose line is lost (lostLine) or weak
// (below scanBelow), or a better one polished from the best crossings crossingScan
// finds over the whole vertical plane across each of lostAzimuths azimuths (only at
// az when the azimuth is held, or on a single traverse, whose azimuth is searched
// only about square to it), scanKeep of them per azimuth. It costs lostAzimuths scans and up to
// scanKeep*lostAzimuths polished starts, run only on a fit that found little or nothing.
func (f *fitter) rescanLost(best *candidate, holdAz, holdDip bool, az, dip float64) *candidate {
	sv := f.sv
	azs := []float64{az}
	if !holdAz && !sv.single {
		azs = azs[:0]
		for i := range lostAzimuths {
			azs = append(azs, float64(i)*math.Pi/lostAzimuths)
		}
	}
	var starts []start
	for _, a := range azs {
		nodes, _, ok := sv.crossingScan(a, f.set.MinDepth, f.set.Background, [2]float64{}, scanKeep)
		if !ok {
			continue
		}
		for _, nd := range nodes {
			l := sv.geomFrom(sv.scanSeed(nd, a), holdAz, holdDip, dip, f.set.MinDepth)
			starts = append(starts, start{lines: []lineGeom{l}})
		}
	}
	if len(starts) == 0 {
		return best
	}
	v, err := f.bestOf(starts, false)
	if err != nil || !(v.rss < best.rss) {
		return best
	}
	v.iters += best.iters
	return v
}
