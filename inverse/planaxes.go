package inverse

import "math"

// PlanPrincipal returns the principal spreads and direction of points in
// plan from their scatter (second central moments, or sums of squares)
// sxx, syy, sxy about their centre: the eigenvalues major >= minor >= 0 of
// the 2 x 2 matrix [[sxx, sxy], [sxy, syy]], and the angle of the major
// axis from east, anticlockwise, in radians (-pi/2, pi/2]; (cos, sin) of
// it is the axis's unit vector and (-sin, cos) the minor's. The readings of
// a traverse lie along the major axis.
func PlanPrincipal(sxx, syy, sxy float64) (major, minor, angle float64) {
	tr, det := sxx+syy, sxx*syy-sxy*sxy
	disc := math.Sqrt(math.Max(tr*tr/4-det, 0))
	return tr/2 + disc, math.Max(tr/2-disc, 0), 0.5 * math.Atan2(2*sxy, sxx-syy)
}

// PlanScatter returns the centre of points in plan (their mean east and
// north) and the sums of squares about it, sxx, syy and sxy, for
// PlanPrincipal.
func PlanScatter(pts [][3]float64) (ce, cn, sxx, syy, sxy float64) {
	for _, p := range pts {
		ce += p[0]
		cn += p[1]
	}
	n := float64(len(pts))
	ce, cn = ce/n, cn/n
	for _, p := range pts {
		e, nn := p[0]-ce, p[1]-cn
		sxx += e * e
		syy += nn * nn
		sxy += e * nn
	}
	return ce, cn, sxx, syy, sxy
}
