package inverse

import (
	"math"
	"math/bits"
	"math/cmplx"
	"slices"
)

// survey holds what the seeding and reporting need to know about the readings.
type survey struct {
	pts      [][3]float64
	trav     [][3]float64 // half-travel per reading (Problem.Travel), nil for point readings
	scale    []float64    // the conductors' factor per reading (Problem.Scale), nil for 1
	lo, hi   [][3]float64 // outer quadrature nodes of each reading's path, pts -/+ gaussNode trav; nil for point readings
	y        []float64    // 3 rows per point x nrhs, row-major (nT)
	nrhs     int
	centroid [3]float64 // mean position
	anchor   [3]float64 // centroid at height 0: anchor of the lines' crossing planes
	t1       [3]float64 // principal horizontal direction of the positions
	spread   [2]float64 // RMS spread along t1 and across it, m
	single   bool       // readings along one traverse
	walked   bool       // single, and at trackPositions distinct places or more: a walked track, not a few fixed sensors
	zmin     float64
	zmean    float64
	extent   float64      // largest horizontal distance from the centroid, m
	anom     [][3]float64 // anomaly of y, once computed
	screen   *survey      // subsample for ranking starts (screening), once computed
	proj     projData     // y projected off the uniform background, for the separables
	across   []float64    // seedFor's workspace
	scr      *scratch     // lends y and the workspaces, or nil
}

// screenPoints is the number of readings above which starts are ranked on an evenly
// spaced subsample of about this many readings instead of all of them: the ranking
// only orders candidate starts (the best are then iterated on every reading), and a
// few hundred rows order them as well as a few thousand at a fraction of the cost.
const screenPoints = 128

// screening returns the survey itself, or for large surveys an evenly spaced
// subsample of its readings (positions, data and path nodes) for ranking starts.
func (sv *survey) screening() *survey {
	n := len(sv.pts)
	if n <= 2*screenPoints {
		return sv
	}
	if sv.screen != nil {
		return sv.screen
	}
	step := (n + screenPoints - 1) / screenPoints
	k := (n + step - 1) / step
	sub := &survey{nrhs: sv.nrhs, pts: make([][3]float64, 0, k), y: make([]float64, 0, 3*k*sv.nrhs)}
	if sv.lo != nil {
		sub.lo, sub.hi = make([][3]float64, 0, k), make([][3]float64, 0, k)
	}
	if sv.scale != nil {
		sub.scale = make([]float64, 0, k)
	}
	for i := 0; i < n; i += step {
		sub.pts = append(sub.pts, sv.pts[i])
		if sv.scale != nil {
			sub.scale = append(sub.scale, sv.scale[i])
		}
		sub.y = append(sub.y, sv.y[3*i*sv.nrhs:3*(i+1)*sv.nrhs]...)
		if sv.lo != nil {
			sub.lo, sub.hi = append(sub.lo, sv.lo[i]), append(sub.hi, sv.hi[i])
		}
	}
	sv.screen = sub
	return sub
}

// anomaly returns the anomaly of the readings (see the function anomaly), computed once.
func (sv *survey) anomaly() [][3]float64 {
	if sv.anom == nil {
		sv.anom = anomaly(sv.y, len(sv.pts), sv.nrhs, sv.scr)
	}
	return sv.anom
}

// singleTraverseRatio: readings whose RMS spread across their principal direction is
// below this fraction of the spread along it are treated as one traverse.
const singleTraverseRatio = 0.1

func newSurvey(p *Problem) *survey { return newSurveyIn(p, nil) }

// newSurveyIn is newSurvey with its data and workspaces lent by scr (nil to allocate).
func newSurveyIn(p *Problem, scr *scratch) *survey {
	n := len(p.Points)
	sv := &survey{pts: p.Points, trav: p.Travel, scale: p.Scale, nrhs: 1, zmin: math.Inf(1), scr: scr}
	if p.isAC() {
		sv.nrhs = 2
	}
	sv.y = scr.take(3 * n * sv.nrhs)
	if p.isAC() {
		for i := range n {
			for j := range 3 {
				v := p.Phasors[i][j]
				sv.y[(3*i+j)*2] = real(v)
				sv.y[(3*i+j)*2+1] = imag(v)
			}
		}
	} else {
		y := sv.y
		for _, f := range p.Fields[:n] {
			y[0], y[1], y[2] = f[0], f[1], f[2]
			y = y[3:]
		}
	}
	// The sums and the lowest height in locals (registers), not in sv through memory
	// at every reading: the same additions in the same order, and the built-in min,
	// which treats NaNs and signed zeros as math.Min does.
	c0, c1, c2, zmin := 0.0, 0.0, 0.0, sv.zmin
	for _, r := range p.Points {
		c0, c1, c2 = c0+r[0], c1+r[1], c2+r[2]
		zmin = min(zmin, r[2])
	}
	sv.centroid, sv.zmin = [3]float64{c0, c1, c2}, zmin
	if p.Travel != nil {
		sv.lo, sv.hi = make([][3]float64, n), make([][3]float64, n)
		for i, t := range p.Travel {
			g := scale(t, gaussNode)
			sv.lo[i], sv.hi[i] = sub(p.Points[i], g), add(p.Points[i], g)
			// The lowest point of the path bounds the conductors' height.
			sv.zmin = math.Min(sv.zmin, p.Points[i][2]-math.Abs(t[2]))
		}
	}
	sv.centroid = scale(sv.centroid, 1/float64(n))
	sv.zmean = sv.centroid[2]
	sv.anchor = [3]float64{sv.centroid[0], sv.centroid[1], 0}
	var cee, cen, cnn float64
	ext, ce, cn := sv.extent, sv.centroid[0], sv.centroid[1]
	for _, r := range p.Points {
		de, dn := r[0]-ce, r[1]-cn
		cee += de * de
		cen += de * dn
		cnn += dn * dn
		ext = max(ext, math.Hypot(de, dn))
	}
	sv.extent = ext
	cee, cen, cnn = cee/float64(n), cen/float64(n), cnn/float64(n)
	// Eigen decomposition of the 2x2 horizontal covariance.
	l1, l2, ang := PlanPrincipal(cee, cnn, cen)
	sv.t1 = [3]float64{math.Cos(ang), math.Sin(ang), 0}
	sv.spread = [2]float64{math.Sqrt(l1), math.Sqrt(l2)}
	sv.single = sv.spread[1] < singleTraverseRatio*sv.spread[0]
	sv.walked = sv.single && distinctPlaces(p.Points, trackPositions)
	return sv
}

// trackPositions is the number of distinct places in plan (1 mm apart or more)
// from which readings along one line are taken as a walked traverse, whose line
// a conductor's station lies on (stationAlong): a few fixed sensors in a row,
// read over and over at the same places, stay a group whose station lies under
// their centroid.
const trackPositions = 8

// distinctPlaces reports whether pts lie at k or more places in plan at least
// 1 mm apart. It stops at the k-th: a walked traverse answers within its first
// readings, a row of fewer fixed sensors after k comparisons per reading.
func distinctPlaces(pts [][3]float64, k int) bool {
	seen := make([][2]float64, 0, k)
	for _, r := range pts {
		known := false
		for _, q := range seen {
			if math.Abs(r[0]-q[0]) < 1e-3 && math.Abs(r[1]-q[1]) < 1e-3 {
				known = true
				break
			}
		}
		if !known {
			if seen = append(seen, [2]float64{r[0], r[1]}); len(seen) >= k {
				return true
			}
		}
	}
	return false
}

// anomaly returns, per point, a real anomaly vector from data rows d (3 rows per point x
// nrhs): for DC the reading minus the per-axis median (a robust background); for AC the
// phasor rotated so that its largest component is real.
// It and its workspace are lent by scr (nil to allocate).
func anomaly(d []float64, n, nrhs int, scr *scratch) [][3]float64 {
	a := scr.take3(n)
	if nrhs == 1 {
		var med [3]float64
		col := scr.take(n)
		for j := range 3 {
			for i := range n {
				col[i] = d[3*i+j]
			}
			med[j] = medianInPlace(col)
		}
		for i := range n {
			for j := range 3 {
				a[i][j] = d[3*i+j] - med[j]
			}
		}
		return a
	}
	for i := range n {
		var c [3]complex128
		big := 0
		for j := range 3 {
			c[j] = complex(d[(3*i+j)*2], d[(3*i+j)*2+1])
			if cmplx.Abs(c[j]) > cmplx.Abs(c[big]) {
				big = j
			}
		}
		rot := cmplx.Rect(1, -cmplx.Phase(c[big]))
		for j := range 3 {
			a[i][j] = real(c[j] * rot)
		}
	}
	return a
}

// median returns the median of v, leaving v as it was.
func median(v []float64) float64 {
	return medianInPlace(append([]float64(nil), v...))
}

// medianInPlace returns the median of s, reordering s (for private scratch, which it
// spares a copy).
func medianInPlace(s []float64) float64 {
	n := len(s)
	if n == 0 {
		return 0
	}
	hi := selectKth(s, n/2)
	if n%2 == 1 {
		return hi
	}
	// The lower middle is the largest element of the part below n/2.
	lo := s[0]
	for _, x := range s[1 : n/2] {
		if x > lo || x == 0 && lo == 0 && math.Signbit(lo) { // math.Max, without its NaN cases
			lo = x
		}
	}
	return 0.5 * (lo + hi)
}

// selectKth reorders s so that s[k] is the value it would have if s were sorted, with
// no larger value before it and no smaller after, and returns s[k]. NaNs are not
// expected.
//
// Quickselect with partitions that do not branch on the data: each pass moves the
// elements below the pivot to the front with a conditional increment rather than a
// jump (the comparisons of a median's partition are coin tosses, which a branch
// predictor cannot learn; Hoare's partition spent most of its time on mispredicted
// jumps). When k falls at or above the pivot a second pass gathers the elements equal
// to it, so ties (readings quantised to 0.1 nT give many) cost one pass, not quadratic
// time. Pivots are the median of three, or of three medians of three on long ranges;
// after 2 log2(n) + 8 passes without converging the range is sorted instead (a bound
// only adversarial orders reach).
func selectKth(s []float64, k int) float64 {
	return selectKthWithin(s, k, 2*bits.Len(uint(len(s)))+8)
}

// selectKthWithin is selectKth with at most budget partitioning passes before the
// range is sorted.
func selectKthWithin(s []float64, k, budget int) float64 {
	lo, hi := 0, len(s) // the k-th lies in s[lo:hi]
	for ; hi-lo > 16; budget-- {
		if budget == 0 {
			slices.Sort(s[lo:hi])
			return s[k]
		}
		p := pivotOf(s[lo:hi])
		lt := partitionBelow(s[lo:hi], p) + lo // s[lo:lt] < p <= s[lt:hi]
		if k < lt {
			hi = lt
			continue
		}
		eq := partitionAtMost(s[lt:hi], p) + lt // s[lt:eq] == p < s[eq:hi]
		if k < eq {
			return s[k]
		}
		lo = eq
	}
	// A short range: insertion sort.
	for i := lo + 1; i < hi; i++ {
		x := s[i]
		j := i
		for j > lo && s[j-1] > x {
			s[j] = s[j-1]
			j--
		}
		s[j] = x
	}
	return s[k]
}

// partitionBelow moves the elements of s below p to its front, keeping the rest after
// them, and returns their count. The loop has no data-dependent jump.
func partitionBelow(s []float64, p float64) int {
	n := 0
	for i, x := range s {
		s[i] = s[n]
		s[n] = x
		n += b2i(x < p)
	}
	return n
}

// partitionAtMost is partitionBelow for the elements at most p.
func partitionAtMost(s []float64, p float64) int {
	n := 0
	for i, x := range s {
		s[i] = s[n]
		s[n] = x
		n += b2i(x <= p)
	}
	return n
}

// b2i is 1 for true and 0 for false; the compiler turns it into a flag move, not a jump.
func b2i(b bool) int {
	var i int
	if b {
		i = 1
	}
	return i
}

// pivotOf returns a pivot value for selection in s (len(s) > 16): the median of the
// first, middle and last elements, or on ranges of 128 and more Tukey's ninther (the
// median of three such medians), which keeps the passes balanced on sorted and
// reverse-sorted input as well as on random input.
func pivotOf(s []float64) float64 {
	n := len(s)
	if n < 128 {
		return med3(s[0], s[n/2], s[n-1])
	}
	e := n / 8
	return med3(med3(s[0], s[e], s[2*e]), med3(s[n/2-e], s[n/2], s[n/2+e]), med3(s[n-1-2*e], s[n-1-e], s[n-1]))
}

func med3(a, b, c float64) float64 {
	if a > b {
		a, b = b, a
	}
	if b > c {
		b = c
	}
	if a > b {
		b = a
	}
	return b
}

// seed is a starting geometry for one line: horizontal position of a point over it,
// azimuth (radians) and height of the line.
type seed struct {
	e, n, az, z float64
}

// azimuthCandidates proposes line azimuths from the anomaly: perpendicular to the
// horizontal anomaly field at its peak (the field of a line is perpendicular to it), the
// long axis of the region above half the peak, and a coarse fan.
func (sv *survey) azimuthCandidates(a [][3]float64) []float64 {
	ip := peak(a)
	var out []float64
	if h := math.Hypot(a[ip][0], a[ip][1]); h > 0 {
		out = append(out, math.Atan2(a[ip][1], -a[ip][0]))
	}
	smax := dot(a[ip], a[ip])
	amax := math.Sqrt(smax) // norm(a[ip])
	// A reading whose squared magnitude is below 0.249 of the peak's lies below half
	// the peak whatever the rounding of the square roots (sqrt(0.249) = 0.499): its
	// magnitude is not needed, and -1 marks it below. The square roots were most of
	// the time of this function (4% of a two-line fit's in the CPU profile).
	lim := 0.249 * smax
	mag := sv.scr.take(len(a))
	var w, ce, cn float64
	for i := range a {
		s := dot(a[i], a[i])
		if s < lim {
			mag[i] = -1
			continue
		}
		m := math.Sqrt(s) // norm(a[i])
		mag[i] = m
		if m >= amax/2 {
			w += m
			ce += m * sv.pts[i][0]
			cn += m * sv.pts[i][1]
		}
	}
	ce, cn = ce/w, cn/w
	var see, sen, snn float64
	for i, m := range mag {
		if m >= amax/2 {
			de, dn := sv.pts[i][0]-ce, sv.pts[i][1]-cn
			see += m * de * de
			sen += m * de * dn
			snn += m * dn * dn
		}
	}
	if see+snn > 0 {
		ang := 0.5 * math.Atan2(2*sen, see-snn) // angle from east of the long axis
		out = append(out, math.Pi/2-ang)
	}
	for k := range 4 {
		out = append(out, float64(k)*math.Pi/4)
	}
	// Remove near duplicates (lines are undirected: compare modulo pi).
	var uniq []float64
	for _, az := range out {
		dup := false
		for _, b := range uniq {
			d := math.Mod(math.Abs(az-b), math.Pi)
			if d < 0.17 || math.Pi-d < 0.17 {
				dup = true
				break
			}
		}
		if !dup {
			uniq = append(uniq, az)
		}
	}
	return uniq
}

// peak returns the index of the largest anomaly magnitude.
func peak(a [][3]float64) int {
	ip, best := 0, dot(a[0], a[0])
	for i := range a {
		if m := dot(a[i], a[i]); m > best {
			ip, best = i, m
		}
	}
	return ip
}

// seedFor places a line of azimuth az from the anomaly by the depth rules of thumb
// (DOMAIN.md, common practice): the horizontal component across the line peaks over it,
// and its half-width at half maximum equals the depth below the sensor.
func (sv *survey) seedFor(a [][3]float64, az float64) seed {
	nh := [3]float64{math.Cos(az), -math.Sin(az), 0} // horizontal, across the line
	// The magnitude of the component across the line at every point, kept for the
	// second pass.
	across := sv.scr.grow(sv.across, len(a))
	sv.across = across
	ip, bp := 0, 0.0
	for i := range a {
		v := &a[i]
		c := math.Abs(v[0]*nh[0] + v[1]*nh[1] + v[2]*nh[2])
		across[i] = c
		if c > bp {
			ip, bp = i, c
		}
	}
	p := sv.pts[ip]
	pn := p[0]*nh[0] + p[1]*nh[1] + p[2]*nh[2]
	hw := [2]float64{math.Inf(1), math.Inf(1)}
	pts := sv.pts[:len(across)]
	for i, c := range across {
		if c <= bp/2 {
			r := &pts[i]
			d := r[0]*nh[0] + r[1]*nh[1] + r[2]*nh[2] - pn
			side := 0
			if d < 0 {
				side, d = 1, -d
			}
			if d < hw[side] { // the distances are finite and not negative
				hw[side] = d
			}
		}
	}
	var h float64
	switch {
	case !math.IsInf(hw[0], 1) && !math.IsInf(hw[1], 1):
		h = 0.5 * (hw[0] + hw[1])
	case !math.IsInf(hw[0], 1):
		h = hw[0]
	case !math.IsInf(hw[1], 1):
		h = hw[1]
	default:
		h = math.Max(sv.extent, 0.5)
	}
	return seed{e: p[0], n: p[1], az: az, z: p[2] - h}
}

// geomFrom turns a seed into a line geometry with its crossing plane perpendicular to
// the seed direction and the bounds of the fit.
func (sv *survey) geomFrom(sd seed, holdAz, holdDip bool, dip, minDepth float64) lineGeom {
	n0 := [3]float64{math.Cos(sd.az), -math.Sin(sd.az), 0}
	lim := 2*sv.extent + 5
	zHi := sv.zmin - minDepth
	z := math.Min(sd.z, zHi)
	return lineGeom{
		anchor: sv.anchor, n0: n0,
		s: dot(sub([3]float64{sd.e, sd.n, 0}, sv.anchor), n0),
		z: z, az: sd.az, dip: dip,
		holdAz: holdAz, holdDip: holdDip,
		sLo: -lim, sHi: lim, zHi: zHi, zLo: sv.zmin - 10*(sv.extent+5),
	}
}

// poleRounds is the number of solves poleSeed makes: one unweighted, then reweighted
// ones (see poleSeed). On 10 m traverses over lines 0.5 to 3 m deep with 5 nT noise the
// second solve moved the pole by up to 1% of the depth and a third by under 1e-4 of it;
// the third is kept because it costs little, and a fit whose model does not hold (a
// bending route fitted as one line, with spikes) can end in another basin for less.
const poleRounds = 3

// poleSeed places a line of azimuth az without knowing the background: it fits the
// field across the line as a function of position in the vertical plane across it,
// which for an infinite straight line (Biot-Savart, DOMAIN.md) is a simple pole plus
// a constant. With nh = (cos az, -sin az, 0) the horizontal direction across the
// line, d = r.nh, z the height, (d0, z0) the line's crossing of that plane and
// K = mu0 I / 2 pi for a current I along the azimuth, the field of the line is
//
//	B = K ((z - z0) nh - (d - d0) up) / ((d - d0)^2 + (z - z0)^2)
//
// which in complex terms, with w = d + i z and q = d0 + i z0, reads
//
//	G = B.nh - i B.up = i K / (w - q).
//
// A uniform background b adds a constant: G = c / (w - q) + b. Multiplied out,
//
//	G w = q G + b w + (c - b q)
//
// is linear in q, b and c - b q, so one complex least-squares solve of three unknowns
// gives the line's crossing and height from the readings alone: the ratio rule of
// DOMAIN.md (h = |u| Bx/|Bz|) with the background solved for rather than assumed, so
// a is any anomaly that differs from the readings by a constant. The equations'
// errors are the readings' errors times |w - q|, so after the first solve each
// equation's squared error is weighted by 1/|w - q|^2 at the previous pole
// (poleRounds solves in all), which brings the solve closer to least squares on the
// readings; a seed needs no more.
//
// The half-width rule of seedFor needs the background taken out first; over a
// traverse only a few depths long the median of the readings is still mostly the
// anomaly, and that rule then puts a deep line shallow, or at the traverse's end.
//
// ok is false when the solve is singular (no anomaly across the line) or the pole not
// finite. A pole above the readings (a fit to noise) is reflected below them.
func (sv *survey) poleSeed(a [][3]float64, az float64) (sd seed, ok bool) {
	nh := [3]float64{math.Cos(az), -math.Sin(az), 0}
	d0, z0 := dot(sv.centroid, nh), sv.zmean
	// The field's scale does not change the pole: scale it to order one for the solve.
	var g2 float64
	for _, v := range a {
		h := v[0]*nh[0] + v[1]*nh[1]
		if m := h*h + v[2]*v[2]; m > g2 {
			g2 = m
		}
	}
	if !(g2 > 0) || math.IsInf(g2, 0) {
		return seed{}, false
	}
	gs := 1 / math.Sqrt(g2)
	// Large surveys: every step-th reading, as for screening (a seed needs no more).
	step := 1
	if n := len(a); n > 2*screenPoints {
		step = (n + screenPoints - 1) / screenPoints
	}
	var q complex128
	for round := range poleRounds {
		// Normal equations of the rows (G, w, 1) . (q, b, e) = G w, weighted: the
		// Hermitian matrix's upper triangle and the right-hand side, summed in reals.
		var sgg, sww, s1 float64
		var sgwR, sgwI, sgR, sgI, swR, swI, vgR, vgI, vwR, vwI, v1R, v1I float64
		qr, qi := real(q), imag(q)
		for i := 0; i < len(a); i += step {
			r, ai := &sv.pts[i], &a[i]
			wr, wi := r[0]*nh[0]+r[1]*nh[1]-d0, r[2]-z0
			gr, gi := (ai[0]*nh[0]+ai[1]*nh[1])*gs, -ai[2]*gs
			wt := 1.0
			if round > 0 {
				dr, di := wr-qr, wi-qi
				wt = 1 / (dr*dr + di*di)
			}
			gg, ww := gr*gr+gi*gi, wr*wr+wi*wi
			cr, ci := wt*gr, -wt*gi // wt conj(g)
			gwR, gwI := gr*wr-gi*wi, gr*wi+gi*wr
			sgg += wt * gg
			sww += wt * ww
			s1 += wt
			sgwR += cr*wr - ci*wi
			sgwI += cr*wi + ci*wr
			sgR += cr
			sgI += ci
			swR += wt * wr
			swI += wt * wi
			vgR += wt * gg * wr
			vgI += wt * gg * wi
			vwR += wt * ww * gr
			vwI += wt * ww * gi
			v1R += wt * gwR
			v1I += wt * gwI
		}
		sgw, sg, sw := complex(sgwR, sgwI), complex(sgR, sgI), complex(swR, swI)
		m := [3][3]complex128{
			{complex(sgg, 0), sgw, sg},
			{cmplx.Conj(sgw), complex(sww, 0), cmplx.Conj(sw)},
			{cmplx.Conj(sg), sw, complex(s1, 0)},
		}
		v := [3]complex128{complex(vgR, vgI), complex(vwR, vwI), complex(v1R, v1I)}
		x, ok := solve3c(m, v)
		if !ok || cmplx.IsNaN(x[0]) || cmplx.IsInf(x[0]) {
			return seed{}, false
		}
		q = x[0]
		if imag(q)+z0 >= sv.zmin {
			// Above the readings: reflect below them.
			q = complex(real(q), 2*(sv.zmin-z0)-imag(q))
		}
	}
	// A point over the line: the centroid moved across to it.
	p := add(sv.centroid, scale(nh, real(q)))
	return seed{e: p[0], n: p[1], az: az, z: imag(q) + z0}, true
}

// solve3c solves the 3 x 3 complex system m x = v by Gaussian elimination with partial
// pivoting; ok is false when a pivot vanishes against the matrix's scale.
func solve3c(m [3][3]complex128, v [3]complex128) (x [3]complex128, ok bool) {
	var big float64
	for j := range 3 {
		for k := range 3 {
			big = math.Max(big, cmplx.Abs(m[j][k]))
		}
	}
	tiny := 1e-13 * big
	for c := range 3 {
		p := c
		for r := c + 1; r < 3; r++ {
			if cmplx.Abs(m[r][c]) > cmplx.Abs(m[p][c]) {
				p = r
			}
		}
		if !(cmplx.Abs(m[p][c]) > tiny) {
			return x, false
		}
		m[c], m[p] = m[p], m[c]
		v[c], v[p] = v[p], v[c]
		for r := c + 1; r < 3; r++ {
			f := m[r][c] / m[c][c]
			for k := c; k < 3; k++ {
				m[r][k] -= f * m[c][k]
			}
			v[r] -= f * v[c]
		}
	}
	for c := 2; c >= 0; c-- {
		s := v[c]
		for k := c + 1; k < 3; k++ {
			s -= m[c][k] * x[k]
		}
		x[c] = s / m[c][c]
	}
	return x, true
}

// twoPoleSeed places two lines of azimuth az at once, without knowing the background:
// poleSeed's fit of the field across the lines in the vertical plane across them, with
// two poles. In poleSeed's complex terms the field of two lines and a uniform
// background is
//
//	G = c1 / (w - q1) + c2 / (w - q2) + b,
//
// and multiplied by (w - q1)(w - q2) = w^2 - S w + P,
//
//	G w^2 = S G w - P G + b w^2 + e1 w + e0
//
// is linear in S, P, b, e1 and e0: one complex least-squares solve of five unknowns,
// and the lines' crossings q1 and q2 are the roots of w^2 - S w + P (rational
// approximation by linearised least squares). The poles are placed wherever the field
// puts them, one above the other as readily as side by side, which splitting one
// fitted line does not. Each equation is weighted by 1/|w^2 - S w + P|^2 at the
// previous solve, as in poleSeed (poleRounds solves; the iteration of Sanathanan and
// Koerner, IEEE Trans. Automatic Control 8(1):56-58, 1963). For noise-free readings
// of two lines the poles are exact (TestTwoPoleSeedExact); a nearly coincident pair
// of opposite currents is a line dipole, whose poles' centre the readings fix but
// whose direction from one pole to the other they hardly do (see stackedStarts). ok
// is false when a solve is singular or a pole is not finite; a pole above the
// readings is reflected below them.
func (sv *survey) twoPoleSeed(a [][3]float64, az float64) (sd [2]seed, ok bool) {
	nh := [3]float64{math.Cos(az), -math.Sin(az), 0}
	d0, z0 := dot(sv.centroid, nh), sv.zmean
	var g2 float64
	for _, v := range a {
		h := v[0]*nh[0] + v[1]*nh[1]
		if m := h*h + v[2]*v[2]; m > g2 {
			g2 = m
		}
	}
	if !(g2 > 0) || math.IsInf(g2, 0) {
		return sd, false
	}
	gs := 1 / math.Sqrt(g2)
	// Positions in units of L keep the powers of w of order one.
	L := math.Max(sv.extent, 0.5)
	step := 1
	if n := len(a); n > 2*screenPoints {
		step = (n + screenPoints - 1) / screenPoints
	}
	const nu = 5
	var S, P complex128
	for round := range poleRounds {
		var m [nu][nu]complex128
		var v [nu]complex128
		for i := 0; i < len(a); i += step {
			r, ai := &sv.pts[i], &a[i]
			w := complex((r[0]*nh[0]+r[1]*nh[1]-d0)/L, (r[2]-z0)/L)
			g := complex((ai[0]*nh[0]+ai[1]*nh[1])*gs, -ai[2]*gs)
			wt := 1.0
			if round > 0 {
				p := w*w - S*w + P
				wt = 1 / (real(p)*real(p) + imag(p)*imag(p))
			}
			row := [nu]complex128{g * w, -g, w * w, w, 1}
			t := g * w * w
			for j := range nu {
				cj := complex(wt, 0) * cmplx.Conj(row[j])
				for k := range nu {
					m[j][k] += cj * row[k]
				}
				v[j] += cj * t
			}
		}
		x, ok := solve5c(m, v)
		if !ok {
			return sd, false
		}
		S, P = x[0], x[1]
		if cmplx.IsNaN(S) || cmplx.IsInf(S) || cmplx.IsNaN(P) || cmplx.IsInf(P) {
			return sd, false
		}
	}
	disc := cmplx.Sqrt(S*S - 4*P)
	for k, q := range [2]complex128{(S + disc) / 2, (S - disc) / 2} {
		q *= complex(L, 0)
		if cmplx.IsNaN(q) || cmplx.IsInf(q) {
			return sd, false
		}
		if imag(q)+z0 >= sv.zmin {
			q = complex(real(q), 2*(sv.zmin-z0)-imag(q))
		}
		p := add(sv.centroid, scale(nh, real(q)))
		sd[k] = seed{e: p[0], n: p[1], az: az, z: imag(q) + z0}
	}
	return sd, true
}

// solve5c solves the 5 x 5 complex system m x = v by Gaussian elimination with
// partial pivoting; ok is false when a pivot vanishes against the matrix's scale.
func solve5c(m [5][5]complex128, v [5]complex128) (x [5]complex128, ok bool) {
	const n = 5
	var big float64
	for j := range n {
		for k := range n {
			big = math.Max(big, cmplx.Abs(m[j][k]))
		}
	}
	tiny := 1e-13 * big
	for c := range n {
		p := c
		for r := c + 1; r < n; r++ {
			if cmplx.Abs(m[r][c]) > cmplx.Abs(m[p][c]) {
				p = r
			}
		}
		if !(cmplx.Abs(m[p][c]) > tiny) {
			return x, false
		}
		m[c], m[p] = m[p], m[c]
		v[c], v[p] = v[p], v[c]
		for r := c + 1; r < n; r++ {
			f := m[r][c] / m[c][c]
			for k := c; k < n; k++ {
				m[r][k] -= f * m[c][k]
			}
			v[r] -= f * v[c]
		}
	}
	for c := n - 1; c >= 0; c-- {
		s := v[c]
		for k := c + 1; k < n; k++ {
			s -= m[c][k] * x[k]
		}
		x[c] = s / m[c][c]
	}
	return x, true
}

// inPhase returns a real anomaly of the readings for twoPoleSeed: for DC the anomaly;
// for AC the phasors' part along their principal phase (half the argument of the sum
// of their squares), which keeps the sign of each current of a circuit whose currents
// are in phase or in antiphase. (anomaly's rotation of each reading makes its largest
// component positive, which folds the field of a go-and-return pair.)
func (sv *survey) inPhase() [][3]float64 {
	if sv.nrhs == 1 {
		return sv.anomaly()
	}
	n := len(sv.pts)
	var s2 complex128
	for i := range 3 * n {
		c := complex(sv.y[2*i], sv.y[2*i+1])
		s2 += c * c
	}
	rot := cmplx.Rect(1, -cmplx.Phase(s2)/2)
	a := sv.scr.take3(n)
	for i := range n {
		for j := range 3 {
			a[i][j] = real(complex(sv.y[(3*i+j)*2], sv.y[(3*i+j)*2+1]) * rot)
		}
	}
	return a
}
