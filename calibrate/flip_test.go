package calibrate

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

func TestFlipOffsetNamesTheAxisTurnedAbout(t *testing.T) {
	// The sensor turned 180 degrees about x, told z: a half turn about x
	// maps (x, y, z) to (x, -y, -z), so z changes by twice its field
	// component while x stays; the field here has little on y.
	rng := rand.New(rand.NewPCG(91, 92))
	b := [3]float64{17900, 420, -46700}
	off := [3]float64{0, -240, 180}
	var r0, r180 [][3]float64
	for i := 0; i < 200; i++ {
		r0 = append(r0, [3]float64{b[0] + off[0] + rng.NormFloat64(), b[1] + off[1] + rng.NormFloat64(), b[2] + off[2] + rng.NormFloat64()})
		r180 = append(r180, [3]float64{b[0] + off[0] + rng.NormFloat64(), -b[1] + off[1] + rng.NormFloat64(), -b[2] + off[2] + rng.NormFloat64()})
	}
	_, err := FlipOffset(r0, r180, 2)
	if err == nil {
		t.Fatal("no error")
	}
	for _, want := range []string{"the flip axis z reads", "changed sign, as a turn of 180 degrees about x makes them", "give x as the flip axis"} {
		if !strings.Contains(err.Error(), want) {
			t.Errorf("error %q lacks %q", err, want)
		}
	}
	if strings.Contains(err.Error(), "given twice") {
		t.Errorf("error %q: the logs were flipped, about x", err)
	}
	// Told x, the same logs give the offsets of y and z.
	res, err := FlipOffset(r0, r180, 0)
	if err != nil {
		t.Fatal(err)
	}
	for _, k := range []int{1, 2} {
		if d := math.Abs(res.Offset[k] - off[k]); d > 1 {
			t.Errorf("offset[%d] = %.2f, want %.0f", k, res.Offset[k], off[k])
		}
	}
}
