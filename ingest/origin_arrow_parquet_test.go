package ingest

import (
	"math"
	"testing"
)

// TestLatLonOriginEveryFormat: a latitude/longitude/height log read as an
// Arrow IPC file or stream or as Parquet kept no origin (Samples.Origin
// nil) and a zero local frame, so every reading came out at x = y = 0
// with z its height; only the CSV reader put the default origin at the
// first reading, and WithOriginMean, which takes the mean of a first pass
// about that origin, fell back to the same zero frame; in every format a
// reading without a position (a missing value, allowed) made the mean
// origin NaN, and every position with it. The one log, at
// the DOMAIN.md check point (40.137 N, -105.236 E, 1682 m; +0.001 deg
// latitude is 111.066633 m north, +0.001 deg longitude 85.245398 m east,
// both given to 1e-6 m, whence the tolerance), reads the same in every
// format, bit for bit: the same origin in the schema as soon as the
// reader is open, and the same positions, with the default origin and
// the mean one. The first batch holds the first reading alone, so the
// origin is found in a batch that is read again (or kept) for its rows;
// in the second log that reading has no latitude (a missing value), so
// the origin is the first reading with one, in the second batch, as in
// the CSV reader, and the mean is that of the readings with one. Each
// reader is released once before any batch, with what it read ahead
// (the allocator checks that nothing is left).
func TestLatLonOriginEveryFormat(t *testing.T) {
	const tol = 1e-6 // DOMAIN.md's values are given to 1e-6 m
	nan := math.NaN()
	full := []llRow{{0, 40.137, -105.236, 1682}, {1, 40.138, -105.236, 1682}, {2, 40.137, -105.235, 1682}}
	gap := append([]llRow{{-1, nan, -105.236, 1682}}, full...)
	for _, lg := range []struct {
		name  string
		rows  []llRow
		first int // index of the first reading with a position
	}{{"full", full, 0}, {"gap", gap, 1}} {
		// Batches: the first reading alone, then the rest.
		files := latLonLogs(t, lg.name, lg.rows, 1)
		for _, mean := range []bool{false, true} {
			opts := []Option{WithAllowMissing(true)}
			what := lg.name + " first"
			if mean {
				opts, what = append(opts, WithOriginMean()), lg.name+" mean"
			}
			var want *Samples
			for _, ext := range []string{"csv", "arrow", "arrows", "parquet"} {
				mem := checked(t)
				o := append(append([]Option(nil), opts...), WithAllocator(mem))
				r, err := Open(files[ext], o...)
				if err != nil {
					t.Fatalf("%s %s: %v", what, ext, err)
				}
				meta, _ := r.Schema().Metadata().GetValue(MetaOrigin)
				r.Release() // before any batch: what was read ahead is freed (checked)
				s, err := ReadSamples(files[ext], o...)
				if err != nil {
					t.Fatalf("%s %s: %v", what, ext, err)
				}
				if s.Origin == nil || meta != formatOrigin(*s.Origin) || !finite(s.Origin.Lat) || !finite(s.Origin.Lon) || !finite(s.Origin.H) {
					t.Errorf("%s %s: origin %v, schema at open %q: want one origin", what, ext, s.Origin, meta)
					continue
				}
				if want == nil {
					want = s
				} else if *s.Origin != *want.Origin || !sameFloats(s.X, want.X) || !sameFloats(s.Y, want.Y) || !sameFloats(s.Z, want.Z) {
					t.Errorf("%s %s: origin %v, x %v, y %v, z %v; the CSV gives %v, %v, %v, %v", what, ext, *s.Origin, s.X, s.Y, s.Z, *want.Origin, want.X, want.Y, want.Z)
				}
				f := lg.first
				if !mean {
					if *s.Origin != (Geodetic{40.137, -105.236, 1682}) {
						t.Errorf("%s %s: origin %v, want the first reading with a position", what, ext, *s.Origin)
					}
					got := [][3]float64{{s.X[f+1], s.Y[f+1], s.Z[f+1]}, {s.X[f+2], s.Y[f+2], s.Z[f+2]}}
					for i, w := range [][3]float64{{0, 111.066633, 0}, {85.245398, 0.00048, 0}} {
						for k := range w {
							if math.Abs(got[i][k]-w[k]) > tol {
								t.Errorf("%s %s: +0.001 deg %d: enu %v, want %v (DOMAIN.md)", what, ext, i, got[i], w)
								break
							}
						}
					}
					continue
				}
				// The mean origin puts the mean position at 0.
				var m [3]float64
				for i := f; i < s.Len(); i++ {
					m[0] += s.X[i] / 3
					m[1] += s.Y[i] / 3
					m[2] += s.Z[i] / 3
				}
				if math.Abs(m[0]) > tol || math.Abs(m[1]) > tol || math.Abs(m[2]) > tol {
					t.Errorf("%s %s: origin %v: mean position %v, want 0", what, ext, *s.Origin, m)
				}
			}
		}
	}
}
