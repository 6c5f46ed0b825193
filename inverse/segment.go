package inverse

// Segment is a straight filament from A to B carrying current from A towards B.
//
// The field is the Biot-Savart integral in the form of Hanson & Hirshman (Phys. Plasmas
// 9(10), 4410, 2002). With Ri = r - A, Rf = r - B, c = (B - A) x Ri = Ri x Rf:
//
//	B = (mu0 I / 4 pi) c (|Ri| + |Rf|) / (|Ri| |Rf| (|Ri| |Rf| + Ri.Rf))
//
// Beside a long segment Ri.Rf ~ -|Ri||Rf| and the last factor cancels catastrophically, so
// when Ri.Rf < 0 it is evaluated as |c|^2 / (|Ri||Rf| - Ri.Rf), which is exact algebra
// (|Ri|^2|Rf|^2 - (Ri.Rf)^2 = |Ri x Rf|^2) without the cancellation. The field is not
// finite on the segment itself; on its extension beyond the ends it is zero.
type Segment struct {
	A, B [3]float64
}

// NumStrengths returns 1: the current.
func (s Segment) NumStrengths() int { return 1 }

// Basis writes the field per ampere at r. It panics if len(dst) != 1.
func (s Segment) Basis(r [3]float64, dst [][3]float64) {
	if len(dst) != 1 {
		panic("inverse: Segment.Basis: dst must have length 1")
	}
	dst[0] = s.Field(r, 1)
}

// Field returns the field in tesla at r for the given current in amperes.
func (s Segment) Field(r [3]float64, current float64) [3]float64 {
	ri, rf := sub(r, s.A), sub(r, s.B)
	ni, nf := norm(ri), norm(rf)
	c := s.cross(r)
	d := segDenom(ni, nf, dot(ri, rf), c)
	return scale(c, k4pi*current*(ni+nf)/(ni*nf*d))
}

// cross returns Ri x Rf = (B - A) x (r - M), M the midpoint: the second form keeps its
// digits beside long segments, where Ri and Rf are long and nearly antiparallel.
func (s Segment) cross(r [3]float64) [3]float64 {
	m := scale(add(s.A, s.B), 0.5)
	return cross(sub(s.B, s.A), sub(r, m))
}

// segDenom returns |Ri||Rf| + Ri.Rf without cancellation.
func segDenom(ni, nf, rr float64, c [3]float64) float64 {
	p := ni * nf
	if rr < 0 {
		return dot(c, c) / (p - rr)
	}
	return p + rr
}

// FieldJac returns the field per ampere at r and its derivatives with respect to the end
// points: dA[i][j] = dB_i/dA_j, dB[i][j] = dB_i/dB_j.
func (s Segment) FieldJac(r [3]float64) (b [3]float64, dA, dB [3][3]float64) {
	ri, rf := sub(r, s.A), sub(r, s.B)
	ni, nf := norm(ri), norm(rf)
	rr := dot(ri, rf)
	c := s.cross(r)
	d := segDenom(ni, nf, rr, c)
	p := ni * nf
	n := ni + nf
	pd := p * d
	g := n / pd
	b = scale(c, k4pi*g)
	// g = N/(P D), N = |Ri|+|Rf|, P = |Ri||Rf|, D = P + Ri.Rf.
	gni := 1/pd - n*nf*(d+p)/(pd*pd)
	gnf := 1/pd - n*ni*(d+p)/(pd*pd)
	gdot := -n / (p * d * d)
	gradRi := add(scale(ri, gni/ni), scale(rf, gdot))
	gradRf := add(scale(rf, gnf/nf), scale(ri, gdot))
	// d(Ri x Rf)/dRi = -[Rf]x ; d(Ri x Rf)/dRf = [Ri]x.
	dRi := matAdd(matScale(skew(rf), -g), outer(c, gradRi))
	dRf := matAdd(matScale(skew(ri), g), outer(c, gradRf))
	// Ri = r - A, Rf = r - B.
	return b, matScale(dRi, -k4pi), matScale(dRf, -k4pi)
}
