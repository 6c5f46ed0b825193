package inverse

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
// for areal surveys.
type Background struct {
	Origin   [3]float64
	Gradient bool
}

// NumStrengths returns 3, or 8 with Gradient.
func (g Background) NumStrengths() int {
	if g.Gradient {
		return 8
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
