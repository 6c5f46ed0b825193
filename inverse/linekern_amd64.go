//go:build !noasm && !gccgo && !safe

package inverse

// useLineKern reports whether lineColumn and dLineLevel hand their readings, four at
// a time, to the AVX2 kernels of linekern_amd64.s (same values bit for bit). Tests
// clear it to run the Go loops for comparison.
var useLineKern = haveAVX2

// lineColumnAVX2 is the loop of lineColumn for the first n readings at pts, n a
// positive multiple of 4, writing 3n values at col; k is nT * k2pi. finite reports
// that every value written is finite.
//
//go:noescape
func lineColumnAVX2(col, pts *float64, n int, u0, u1, u2, p00, p01, p02, k float64) (finite bool)

// dLineLevelAVX2 is the loop of dLineLevel for the first n readings at pts, n a
// positive multiple of 4, writing 3n values at each of the nd (2, 3 or 4) columns cs,
// cz, ca and cd (ca and cd unused, and may be nil, when nd leaves them out).
//
//go:noescape
func dLineLevelAVX2(cs, cz, ca, cd, pts *float64, n, nd int, u0, u1, u2, p00, p01, p02, n00, n01, cs0, cs1, cs2, cz0, cz1, cz2, va0, va1, vd0, vd1, vd2, kc float64)
