package calibrate

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// softIronFlipLogs simulates the two logs of a flip about axis: a sensor reading
// r = M B + o + noise (soft-iron matrix M, offset o), 300 readings each,
// with the field b in the sensor's frame at 0 degrees and that field with
// the two other components' signs changed at 180 degrees.
func softIronFlipLogs(rng *rand.Rand, m [3][3]float64, o, b [3]float64, axis int, noise float64) (r0, r180 [][3]float64) {
	read := func(b [3]float64) [3]float64 {
		var r [3]float64
		for i := range 3 {
			r[i] = o[i] + noise*rng.NormFloat64()
			for j := range 3 {
				r[i] += m[i][j] * b[j]
			}
		}
		return r
	}
	b180 := [3]float64{-b[0], -b[1], -b[2]}
	b180[axis] = b[axis]
	for range 300 {
		r0 = append(r0, read(b))
		r180 = append(r180, read(b180))
	}
	return r0, r180
}

// TestFlipOffsetAllowsForCrossAxisCoupling: the Kestrel Moor sensor
// (offset [310, -240, 180] nT, the symmetric soft-iron matrix of
// testdata/scenarios/kestrel-moor-spin.toml, off-diagonals 0.008 to 0.015)
// flipped about z in the site's field [-420, 17600, -46900] nT. The mean of
// the two logs is o + M[:,z] Bz (simulated truth), so the x and y
// "offsets" are off by M_xz Bz = +375 and M_yz Bz = -704 nT: the stated
// standard errors must cover that (they were ± 0.04 nT, the scatter
// alone), and a warning must say that the reading along the flip axis is
// large and point to --spin. Flipped instead about x held at right angles
// to the field (Bx = 0 in the sensor's frame), the coupling term is zero:
// the offsets of y and z come out right within their scatter, the
// allowance is only 1% of the x offset, and there is no warning.
func TestFlipOffsetAllowsForCrossAxisCoupling(t *testing.T) {
	m := [3][3]float64{{1.040, 0.012, -0.008}, {0.012, 0.965, 0.015}, {-0.008, 0.015, 0.997}}
	o := [3]float64{310, -240, 180}
	rng := rand.New(rand.NewPCG(71, 72))

	r0, r180 := softIronFlipLogs(rng, m, o, [3]float64{-420, 17600, -46900}, 2, 1)
	res, err := FlipOffset(r0, r180, 2)
	if err != nil {
		t.Fatal(err)
	}
	for _, k := range []int{0, 1} {
		bias := m[k][2] * -46900
		if d := math.Abs(res.Offset[k] - (o[k] + bias)); d > 0.5 {
			t.Errorf("offset[%d] = %.2f, want o + M[%d][z] Bz = %.2f (the simulation's coupling term)", k, res.Offset[k], k, o[k]+bias)
		}
		if miss := math.Abs(res.Offset[k] - o[k]); miss > 3*res.Sigma[k] {
			t.Errorf("offset[%d] = %.2f ± %.2f, true %.0f: %.0f nT off, %.1f standard errors", k, res.Offset[k], res.Sigma[k], o[k], miss, miss/res.Sigma[k])
		}
	}
	if len(res.Warnings) != 1 || !strings.Contains(res.Warnings[0], "reading along the flip axis z") || !strings.Contains(res.Warnings[0], "--spin") {
		t.Errorf("warnings %q: want one on the reading along the flip axis z, pointing to --spin", res.Warnings)
	}
	if len(res.Notes) == 0 || !strings.Contains(res.Notes[0], "cross-axis coupling") {
		t.Errorf("notes %q: want one on the cross-axis coupling allowance", res.Notes)
	}

	// About x at right angles to the field: |B| kept, Bx = 0. The mean
	// along x is then the x offset, 310 nT, so the allowance is 3.1 nT.
	b := [3]float64{0, 17605, -46900}
	r0, r180 = softIronFlipLogs(rng, m, o, b, 0, 1)
	res, err = FlipOffset(r0, r180, 0)
	if err != nil {
		t.Fatal(err)
	}
	for _, k := range []int{1, 2} {
		if miss := math.Abs(res.Offset[k] - o[k]); miss > 4*res.Scatter[k] || res.Sigma[k] > 0.01*o[0]+res.Scatter[k] {
			t.Errorf("about x across the field: offset[%d] = %.2f ± %.2f (scatter %.2f), true %.0f", k, res.Offset[k], res.Sigma[k], res.Scatter[k], o[k])
		}
	}
	if len(res.Warnings) != 0 {
		t.Errorf("about x across the field: warnings %q", res.Warnings)
	}
}

// TestFlipOffsetAxisOffsetNotField: a flip about z held pointing magnetic
// east, at right angles to the field as the warning advises (sensor x
// north, y up, z east; the Kestrel Moor field of [-420, 17600, -46900] nT
// east, north, up from the scenario, so the field along z is -420 nT),
// with a large offset of 6000 nT on z itself and [310, -240] on x and y
// (simulated truth; no soft iron, so the offsets of x and y come out
// exactly). The mean reading along z, 5580 nT, is that field plus z's
// own offset, which the flip cannot give: the note and warning must call
// it the reading along the flip axis and say that it holds z's offset,
// not call it the field along the flip axis (before: "the field along
// the flip axis z is 5580 nT", and advice to do what was done), and the
// field across z, which the flip does measure, must be given as the
// simulation's hypot(17600, 46900) = 50094 nT (north and up), not the
// readings' magnitude with every offset in it (50736 nT).
func TestFlipOffsetAxisOffsetNotField(t *testing.T) {
	id := [3][3]float64{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}}
	o := [3]float64{310, -240, 6000}
	b := [3]float64{17600, -46900, -420} // north, up, east in the sensor's x, y, z
	rng := rand.New(rand.NewPCG(81, 82))
	r0, r180 := softIronFlipLogs(rng, id, o, b, 2, 1)
	res, err := FlipOffset(r0, r180, 2)
	if err != nil {
		t.Fatal(err)
	}
	for _, k := range []int{0, 1} {
		if miss := math.Abs(res.Offset[k] - o[k]); miss > 4*res.Scatter[k] {
			t.Errorf("offset[%d] = %.2f (scatter %.2f), true %.0f", k, res.Offset[k], res.Scatter[k], o[k])
		}
	}
	across := math.Hypot(b[0], b[1])
	text := strings.Join(append(append([]string(nil), res.Notes...), res.Warnings...), "\n")
	if strings.Contains(text, "field along the flip axis z is") || strings.Contains(text, "5580 nT field along") {
		t.Errorf("the reading along z (field -420 nT plus z's offset 6000 nT) called the field along the flip axis:\n%s", text)
	}
	if !strings.Contains(res.Notes[0], "5580 nT reading along the flip axis z") || !strings.Contains(res.Notes[0], "z's own offset, which a flip does not give") {
		t.Errorf("note %q: want the 5580 nT named the reading along z, with z's own offset in it", res.Notes[0])
	}
	want := fmt.Sprintf("the field across z is %.0f nT", across)
	if !strings.Contains(res.Notes[0], want) {
		t.Errorf("note %q: want %q (simulated truth)", res.Notes[0], want)
	}
	// 5580 nT is 11% of the 50400 nT it and the field across make: the
	// warning stays (the flip cannot tell field from offset), worded so.
	if len(res.Warnings) != 1 || !strings.Contains(res.Warnings[0], "reading along the flip axis z is 5580 nT") ||
		!strings.Contains(res.Warnings[0], "if z was so held, the reading is mostly its offset") {
		t.Errorf("warnings %q: want one naming the 5580 nT reading along z and saying it may be mostly z's offset", res.Warnings)
	}
}
