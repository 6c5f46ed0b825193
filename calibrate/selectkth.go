package calibrate

// SelectKth reorders a so that a[k] is its k-th smallest (0-based), those
// before it no larger and those after no smaller, and returns a[k]: the
// value sort.Float64s would put at a[k], in linear expected time (Hoare's
// selection). a must hold no NaN. It panics unless 0 <= k < len(a).
func SelectKth(a []float64, k int) float64 {
	if k < 0 || k >= len(a) {
		panic("calibrate: SelectKth: k out of range")
	}
	return selectKth(a, k)
}
