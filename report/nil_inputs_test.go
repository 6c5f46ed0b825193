package report

import (
	"testing"
)

// The helpers the command calls with a document, group, track or source
// give their documented empty answer for a nil one, and ReadJSON and
// NewProfile return errors for a nil reader and for readings of different
// lengths. Before, each panicked (a nil-pointer dereference, an index out
// of range in SourcePlace, a deliberate panic in NewProfile).
func TestNilInputsNoPanic(t *testing.T) {
	var d *Document
	empty := &Document{}
	check := func(name string, f func() bool) {
		t.Helper()
		defer func() {
			if v := recover(); v != nil {
				t.Errorf("%s: panic %v", name, v)
			}
		}()
		if !f() {
			t.Errorf("%s: not the documented answer", name)
		}
	}
	check("ReadJSON(nil)", func() bool { _, err := ReadJSON(nil, "results.json"); return err != nil })
	check("NewProfile(lengths differ)", func() bool {
		_, err := NewProfile([][3]float64{{0, 0, 0}, {1, 0, 0}}, [][3]float64{{1, 2, 3}}, nil, [3]float64{}, [3]float64{1, 0, 0}, "bz", 0)
		return err != nil
	})
	check("ChainageZero(nil)", func() bool { return ChainageZero(d) == "" })
	check("LeastCover(nil)", func() bool { return LeastCover(d) == "" })
	check("ConductorSummary(nil, nil)", func() bool { return ConductorSummary(d, nil) == "" })
	check("ConductorSummary(d, nil)", func() bool { return ConductorSummary(empty, nil) == "" })
	check("GroupRMS(nil)", func() bool { s, ok := GroupRMS(nil); return s == "" && !ok })
	check("NoCurrent(nil)", func() bool { return NoCurrent(nil, false) })
	check("BaseGapOnly(nil)", func() bool { return !empty.BaseGapOnly(nil) && !d.BaseGapOnly(&Group{}) })
	check("CoverColumn(nil)", func() bool { return empty.CoverColumn(nil) == nil })
	check("SourcePlace(nil)", func() bool {
		p, depth, sigma := empty.SourcePlace(nil, 0)
		q, _, _ := empty.SourcePlace(&Group{}, 0)
		return p == [3]float64{} && depth == 0 && sigma == 0 && q == [3]float64{}
	})
	check("SummedColumns(nil)", func() bool { _, _, ok := empty.SummedColumns(nil, 0); return !ok })
}
