package inverse

import "math"

// Background is the field of distant sources over the survey: a uniform field, optionally
// with a constant gradient about Origin. Distant sources make the region source free, so
// the gradient tensor G_ij = dB_i/dx_j is symmetric (curl free) and traceless (divergence
// free) and has five independent components (the standard potential-field gradient
// tensor):
//
//	B(r) = B0 + G (r - Origin)
//	strengths: B0e, B0n, B0u, Gee, Gen, Geu, Gnn, Gnu   (T and T/m);  Guu = -(Gee + Gnn)
//
// A single traverse cannot resolve the gradient components across it; enable Gradient only
// for areal surveys. Along, when not zero (and Gradient false), adds instead the three
// terms a single traverse resolves, the change of each axis per metre along the unit
// horizontal vector Along (BackgroundAlong):
//
//	B(r) = B0 + A ((r - Origin) . Along)
//	strengths: B0e, B0n, B0u, Ae, An, Au
type Background struct {
	Origin   [3]float64
	Gradient bool
	Along    [3]float64
}

// NumStrengths returns 3, 8 with Gradient, or 6 with Along.
func (g Background) NumStrengths() int {
	if g.Gradient {
		return 8
	}
	if g.Along != ([3]float64{}) {
		return 6
	}
	return 3
}

// Basis writes the field per unit of each strength at r. It panics if len(dst) !=
// NumStrengths().
func (g Background) Basis(r [3]float64, dst [][3]float64) {
	if len(dst) != g.NumStrengths() {
		panic("inverse: Background.Basis: wrong dst length")
	}
	dst[0] = [3]float64{1, 0, 0}
	dst[1] = [3]float64{0, 1, 0}
	dst[2] = [3]float64{0, 0, 1}
	if !g.Gradient {
		if g.Along != ([3]float64{}) {
			u := dot(sub(r, g.Origin), g.Along)
			dst[3] = [3]float64{u, 0, 0}
			dst[4] = [3]float64{0, u, 0}
			dst[5] = [3]float64{0, 0, u}
		}
		return
	}
	d := sub(r, g.Origin)
	dst[3] = [3]float64{d[0], 0, -d[2]} // Gee (with Guu = -Gee)
	dst[4] = [3]float64{d[1], d[0], 0}  // Gen = Gne
	dst[5] = [3]float64{d[2], 0, d[0]}  // Geu = Gue
	dst[6] = [3]float64{0, d[1], -d[2]} // Gnn (with Guu = -Gnn)
	dst[7] = [3]float64{0, d[2], d[1]}  // Gnu = Gun
}

// Field returns the background field in tesla at r; strengths as for Basis. It panics if
// len(strengths) != NumStrengths().
func (g Background) Field(r [3]float64, strengths []float64) [3]float64 {
	if len(strengths) != g.NumStrengths() {
		panic("inverse: Background.Field: wrong number of strengths")
	}
	var dst [8][3]float64
	g.Basis(r, dst[:g.NumStrengths()])
	var b [3]float64
	for k, c := range strengths {
		b = add(b, scale(dst[k], c))
	}
	return b
}

// alongAxis returns the principal horizontal direction of pts about org (the unit
// vector BackgroundAlong's terms run along), east-pointing or, square to east,
// north-pointing, so that the sign of the terms does not depend on the readings' order.
func alongAxis(pts [][3]float64, org [3]float64) [3]float64 {
	var cee, cen, cnn float64
	for _, r := range pts {
		de, dn := r[0]-org[0], r[1]-org[1]
		cee += de * de
		cen += de * dn
		cnn += dn * dn
	}
	_, _, ang := PlanPrincipal(cee, cnn, cen)
	t := [3]float64{math.Cos(ang), math.Sin(ang), 0}
	if t[0] < -1e-12 || (math.Abs(t[0]) <= 1e-12 && t[1] < 0) {
		t[0], t[1] = -t[0], -t[1]
	}
	return t
}
