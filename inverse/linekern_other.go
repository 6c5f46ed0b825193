//go:build !amd64 || noasm || gccgo || safe

package inverse

// useLineKern is false where there is no assembly kernel: lineColumn and dLineLevel
// run their Go loops.
var useLineKern = false

func lineColumnAVX2(col, pts *float64, n int, u0, u1, u2, p00, p01, p02, k float64) (finite bool) {
	panic("inverse: no lineColumn kernel on this build")
}

func dLineLevelAVX2(cs, cz, ca, cd, pts *float64, n, nd int, u0, u1, u2, p00, p01, p02, n00, n01, cs0, cs1, cs2, cz0, cz1, cz2, va0, va1, vd0, vd1, vd2, kc float64) {
	panic("inverse: no dLineLevel kernel on this build")
}
