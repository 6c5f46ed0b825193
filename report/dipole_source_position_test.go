package report

import (
	"bytes"
	"encoding/json"
	"math"
	"slices"
	"testing"
)

// checkDipoleSource checks the document's dipole source in group key
// against the object's simulated position obj (m) and its dipole-anomaly
// finding: no offset (a point has none: "offset" listed as not
// identifiable, 0 with no sigma), and the east, north and up sigmas of the
// finding carried on the source as PointSigma, each axis within 4 sigma of
// the truth. Before, the source read "offset_m": 0, "offset_sigma_m": 0
// without "offset" among its unidentifiable quantities, an exact offset
// for an object 2.5 m along the traverse from the readings' centre, and
// its position had no sigma but the finding's.
func checkDipoleSource(t *testing.T, d *Document, key string, obj [3]float64) {
	t.Helper()
	var f *Finding
	for i := range d.Findings {
		if d.Findings[i].Kind == "dipole-anomaly" && slices.Contains(d.Findings[i].Groups, key) {
			f = &d.Findings[i]
		}
	}
	if f == nil {
		t.Fatalf("no dipole-anomaly finding names %s", key)
	}
	sig := map[string]float64{}
	for _, v := range f.Values {
		sig[v.Name] = v.Sigma
	}
	var src *Source
	for _, g := range d.Groups {
		for i := range g.Sources {
			if g.Key == key && g.Sources[i].Kind == KindDipole {
				src = &g.Sources[i]
			}
		}
	}
	if src == nil {
		t.Fatalf("group %s has no dipole source", key)
	}
	if !slices.Contains(src.Unidentifiable, "offset") || src.Offset != 0 || src.OffsetSigma != 0 {
		t.Errorf("dipole source offset %g ± %g, unidentifiable %v: want none, listed", src.Offset, src.OffsetSigma, src.Unidentifiable)
	}
	if src.PointSigma == nil {
		t.Fatalf("dipole source has no point sigma")
	}
	ps := *src.PointSigma
	for a, name := range []string{"east", "north"} {
		if ps[a] != sig[name] {
			t.Errorf("source %s sigma %g m, its finding's %g m", name, ps[a], sig[name])
		}
	}
	if !(ps[2] > 0) || ps[2] != src.DepthSigma {
		t.Errorf("source up sigma %g m, depth sigma %g m", ps[2], src.DepthSigma)
	}
	for a := range 3 {
		if !(ps[a] > 0) || math.Abs(src.Point[a]-obj[a]) > 4*ps[a] {
			t.Errorf("object axis %d at %.4f ± %.4f m, true %.4f m", a, src.Point[a], ps[a], obj[a])
		}
	}
	// results.json carries the same.
	var buf bytes.Buffer
	if err := WriteJSON(&buf, d); err != nil {
		t.Fatal(err)
	}
	var back Document
	if err := json.Unmarshal(buf.Bytes(), &back); err != nil {
		t.Fatal(err)
	}
	for _, g := range back.Groups {
		for _, s := range g.Sources {
			if g.Key == key && s.Kind == KindDipole && (s.PointSigma == nil || *s.PointSigma != ps || !slices.Contains(s.Unidentifiable, "offset")) {
				t.Errorf("results.json dipole source: point sigma %v, unidentifiable %v", s.PointSigma, s.Unidentifiable)
			}
		}
	}
}

// The drum beside the Fenwick Lane cable (drumFits): the object found beside
// a conductor.
func TestDipoleSourcePositionBesideCable(t *testing.T) {
	d, err := Build(Document{}, drumFits(t), &BuildSettings{Noise: drumNoise})
	if err != nil {
		t.Fatal(err)
	}
	checkDipoleSource(t, d, "F4", drumPos)
}

// The Kestrel Moor valve body alone (as TestBuildFindsObjectAlone): the
// object found with no conductor under it, 1 m north of the readings'
// centre.
func TestDipoleSourcePositionAlone(t *testing.T) {
	d, obj, _ := valveBodyAlone(t)
	checkDipoleSource(t, d, "T06", obj)
}
