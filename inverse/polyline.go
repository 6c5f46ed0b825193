package inverse

// Polyline is a chain of straight segments through Vertices; segment i runs from
// Vertices[i] to Vertices[i+1] and carries its own current (Currents[i] in the methods
// below), so current lost along a route appears as a step between segments. Each segment
// uses the stable Segment form. A Polyline of fewer than 2 vertices has no segments and
// no field (its methods take no currents and give zeros); FitStrengths, StrengthsRSS,
// ReadingBasis and StrengthsScan refuse it with an error, and one with two successive
// vertices in one place (a leg of no length, whose current nothing sets).
type Polyline struct {
	Vertices [][3]float64
}

// NumStrengths returns the number of segments, len(Vertices)-1 (0 for fewer than 2 vertices).
func (p Polyline) NumStrengths() int {
	if len(p.Vertices) < 2 {
		return 0
	}
	return len(p.Vertices) - 1
}

// Basis writes into dst[i] the field per ampere of segment i at r. It panics if
// len(dst) != NumStrengths().
func (p Polyline) Basis(r [3]float64, dst [][3]float64) {
	if len(dst) != p.NumStrengths() {
		panic("inverse: Polyline.Basis: dst length differs from the number of segments")
	}
	for i := range dst {
		dst[i] = Segment{p.Vertices[i], p.Vertices[i+1]}.Field(r, 1)
	}
}

// Field returns the field in tesla at r with currents[i] amperes in segment i. It panics
// if len(currents) != NumStrengths().
func (p Polyline) Field(r [3]float64, currents []float64) [3]float64 {
	if len(currents) != p.NumStrengths() {
		panic("inverse: Polyline.Field: currents length differs from the number of segments")
	}
	var b [3]float64
	for i, c := range currents {
		b = add(b, Segment{p.Vertices[i], p.Vertices[i+1]}.Field(r, c))
	}
	return b
}

// FieldJac returns the field in tesla at r for the given currents and its derivatives with
// respect to every vertex: dV[k][i][j] = dB_i/dVertex_k,j. It panics if len(currents) !=
// NumStrengths().
func (p Polyline) FieldJac(r [3]float64, currents []float64) (b [3]float64, dV [][3][3]float64) {
	if len(currents) != p.NumStrengths() {
		panic("inverse: Polyline.FieldJac: currents length differs from the number of segments")
	}
	dV = make([][3][3]float64, len(p.Vertices))
	for i, c := range currents {
		bs, da, db := Segment{p.Vertices[i], p.Vertices[i+1]}.FieldJac(r)
		b = add(b, scale(bs, c))
		dV[i] = matAdd(dV[i], matScale(da, c))
		dV[i+1] = matAdd(dV[i+1], matScale(db, c))
	}
	return b, dV
}
