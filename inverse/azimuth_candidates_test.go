package inverse

import (
	"math"
	"math/rand/v2"
	"path/filepath"
	"slices"
	"testing"
)

// azimuthCandidatesRef is azimuthCandidates as it was written before it skipped the
// square roots of readings below half the peak: every magnitude taken (norm). It is
// the reference the faster version must reproduce exactly.
func azimuthCandidatesRef(sv *survey, a [][3]float64) []float64 {
	ip := peak(a)
	var out []float64
	if h := math.Hypot(a[ip][0], a[ip][1]); h > 0 {
		out = append(out, math.Atan2(a[ip][1], -a[ip][0]))
	}
	amax := norm(a[ip])
	mag := make([]float64, len(a))
	var w, ce, cn float64
	for i := range a {
		m := norm(a[i])
		mag[i] = m
		if m >= amax/2 {
			w += m
			ce += m * sv.pts[i][0]
			cn += m * sv.pts[i][1]
		}
	}
	ce, cn = ce/w, cn/w
	var see, sen, snn float64
	for i, m := range mag {
		if m >= amax/2 {
			de, dn := sv.pts[i][0]-ce, sv.pts[i][1]-cn
			see += m * de * de
			sen += m * de * dn
			snn += m * dn * dn
		}
	}
	if see+snn > 0 {
		ang := 0.5 * math.Atan2(2*sen, see-snn)
		out = append(out, math.Pi/2-ang)
	}
	for k := range 4 {
		out = append(out, float64(k)*math.Pi/4)
	}
	var uniq []float64
	for _, az := range out {
		dup := false
		for _, b := range uniq {
			d := math.Mod(math.Abs(az-b), math.Pi)
			if d < 0.17 || math.Pi-d < 0.17 {
				dup = true
				break
			}
		}
		if !dup {
			uniq = append(uniq, az)
		}
	}
	return uniq
}

// TestAzimuthCandidatesSameAsEveryRoot: azimuthCandidates, which takes no square root
// of a reading whose squared magnitude is below 0.249 of the peak's, must propose
// exactly the azimuths of the version that took every one (azimuthCandidatesRef), bit
// for bit: on the anomalies of the three benchmark surveys (simulated by Biot-Savart),
// on random anomalies, and on readings placed exactly at half the peak's magnitude
// and just either side of the 0.249 cut (where only the exact comparison decides).
func TestAzimuthCandidatesSameAsEveryRoot(t *testing.T) {
	check := func(name string, sv *survey, a [][3]float64) {
		t.Helper()
		got := slices.Clone(sv.azimuthCandidates(a))
		want := azimuthCandidatesRef(sv, a)
		if !slices.Equal(got, want) {
			t.Errorf("%s: azimuths %v, want %v", name, got, want)
		}
	}
	for _, c := range benchCases {
		p, err := readBenchSurvey(filepath.Join("testdata", c.file))
		if err != nil {
			t.Fatal(err)
		}
		sv := newSurvey(p)
		check(c.file, sv, sv.anomaly())
	}
	rng := rand.New(rand.NewPCG(3, 5))
	for trial := range 50 {
		n := 8 + rng.IntN(300)
		p := &Problem{Points: make([][3]float64, n), Fields: make([][3]float64, n)}
		for i := range n {
			p.Points[i] = [3]float64{rng.NormFloat64() * 3, rng.NormFloat64() * 3, 0.3}
		}
		sv := newSurvey(p)
		a := make([][3]float64, n)
		for i := range a {
			a[i] = [3]float64{rng.NormFloat64() * 50, rng.NormFloat64() * 50, rng.NormFloat64() * 50}
		}
		check("random", sv, a)
		// Readings exactly at half the peak (the >= keeps them), at 0.249 and 0.25
		// of its squared magnitude and a rounding either side.
		peakv := [3]float64{0, 0, 400 + float64(trial)}
		a[0] = peakv
		a[1] = [3]float64{0, 0, peakv[2] / 2}
		for i, f := range []float64{0.249, 0.25} {
			s := f * peakv[2] * peakv[2]
			a[2+3*i] = [3]float64{0, 0, math.Sqrt(s)}
			a[3+3*i] = [3]float64{0, 0, math.Nextafter(math.Sqrt(s), 0)}
			a[4+3*i] = [3]float64{0, 0, math.Nextafter(math.Sqrt(s), math.Inf(1))}
		}
		check("at half the peak", sv, a)
	}
	// A zero anomaly: every reading at the peak.
	p := &Problem{Points: [][3]float64{{0, 0, 0}, {1, 0, 0}, {2, 1, 0}}, Fields: make([][3]float64, 3)}
	sv := newSurvey(p)
	check("zero", sv, make([][3]float64, 3))
}
