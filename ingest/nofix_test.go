package ingest

import (
	"math"
	"strings"
	"testing"
)

// TestLatLonNoFixLeftOut: many GNSS receivers write latitude 0, longitude
// 0 (and height 0) for a reading taken before they have a fix, or during a
// dropout. Read as a position, the first such reading became the default
// origin, 6000+ km from the survey, and every reading was placed in that
// origin's level plane with no warning; one in mid-survey failed its
// traverse's fit. The log is at the DOMAIN.md check point (40.137 N,
// -105.236 E, 1682 m; +0.001 deg latitude is 111.066633 m north, +0.001 deg
// longitude 85.245398 m east, both given to 1e-6 m, whence the tolerance),
// with two readings at 0, 0, 0 before the first fix and one between the
// fixes. In every format, with the default origin and the mean one, the
// three readings at 0, 0 are left out, the origin is the first fix (or the
// mean of the fixes), the positions are DOMAIN.md's, and a warning names
// the readings left out (fails before: origin 0 0 0, five readings).
// An origin given at 0, 0 is the user's: the readings there are kept.
func TestLatLonNoFixLeftOut(t *testing.T) {
	const tol = 1e-6 // DOMAIN.md's values are given to 1e-6 m
	rows := []llRow{{0, 0, 0, 0}, {1, 0, 0, 0}, {2, 40.137, -105.236, 1682}, {3, 40.138, -105.236, 1682}, {4, 0, 0, 0}, {5, 40.137, -105.235, 1682}}
	// Batches: the two readings without a fix alone, then the rest.
	files := latLonLogs(t, "nofix", rows, 2)
	// Where the warning names the first reading left out.
	firstAt := map[string]string{"csv": "nofix.csv:2", "arrow": "batch 0 row 0", "arrows": "batch 0 row 0", "parquet": "batch 0 row 0"}
	for _, mean := range []bool{false, true} {
		for _, ext := range []string{"csv", "arrow", "arrows", "parquet"} {
			var opts []Option
			what := ext + " first"
			if mean {
				opts, what = append(opts, WithOriginMean()), ext+" mean"
			}
			s, err := ReadSamples(files[ext], append(opts, WithAllocator(checked(t)))...)
			if err != nil {
				t.Fatalf("%s: %v", what, err)
			}
			if s.Len() != 3 {
				t.Errorf("%s: %d readings, want the 3 with a fix (times %v)", what, s.Len(), s.Time)
				continue
			}
			if !sameFloats(s.Time, []float64{2, 3, 5}) {
				t.Errorf("%s: times %v, want 2 3 5", what, s.Time)
			}
			warned := false
			for _, w := range s.Warnings {
				if strings.Contains(w, firstAt[ext]) && strings.Contains(w, "no fix") && strings.Contains(w, "3 readings left out") {
					warned = true
				}
			}
			if !warned {
				t.Errorf("%s: warnings %q, want one naming %s and the 3 readings left out", what, s.Warnings, firstAt[ext])
			}
			if mean {
				var m [3]float64
				for i := range 3 {
					m[0] += s.X[i] / 3
					m[1] += s.Y[i] / 3
					m[2] += s.Z[i] / 3
				}
				if math.Abs(m[0]) > tol || math.Abs(m[1]) > tol || math.Abs(m[2]) > tol {
					t.Errorf("%s: origin %v: mean position %v, want 0", what, *s.Origin, m)
				}
				continue
			}
			if *s.Origin != (Geodetic{40.137, -105.236, 1682}) {
				t.Errorf("%s: origin %v, want the first fix", what, *s.Origin)
			}
			got := [][3]float64{{s.X[1], s.Y[1], s.Z[1]}, {s.X[2], s.Y[2], s.Z[2]}}
			for i, w := range [][3]float64{{0, 111.066633, 0}, {85.245398, 0.00048, 0}} {
				for k := range w {
					if math.Abs(got[i][k]-w[k]) > tol {
						t.Errorf("%s: +0.001 deg %d: enu %v, want %v (DOMAIN.md)", what, i, got[i], w)
						break
					}
				}
			}
		}
	}
	// The origin given at 0, 0: every reading is kept, none warned of.
	s, err := ReadSamples(files["csv"], WithOrigin(Geodetic{}))
	if err != nil {
		t.Fatal(err)
	}
	if s.Len() != len(rows) {
		t.Errorf("origin 0 0 given: %d readings, want all %d", s.Len(), len(rows))
	}
	for _, w := range s.Warnings {
		if strings.Contains(w, "no fix") {
			t.Errorf("origin 0 0 given: warned %q", w)
		}
	}
}
