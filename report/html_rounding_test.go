package report

import (
	"bytes"
	"fmt"
	"math"
	"strings"
	"testing"
)

// TestChainageZeroBearingRoundsToNorth: the bearing chainage sets off on
// is a whole degree in [0, 360): a bearing of 359.98° reads "0°", as a
// compass bearing is given from 000 to 359 (360 and 0 are one direction,
// and a bearing is written 0 there), never "360°". Whole degrees either
// side read as rounded.
func TestChainageZeroBearingRoundsToNorth(t *testing.T) {
	for _, c := range []struct {
		bearing float64
		want    string
	}{
		{359.98, "setting off 0° from north (about north)"},
		{359.5, "setting off 0° from north (about north)"},
		{359.4, "setting off 359° from north (about north)"},
		{0.3, "setting off 0° from north (about north)"},
		{89.6, "setting off 90° from north (about east)"},
	} {
		d := fenwickLane(false)
		b := c.bearing * math.Pi / 180
		for i := range d.Route.Stations {
			s := float64(i) * 15
			d.Route.Stations[i].Point = [3]float64{10 + s*math.Sin(b), 5 + s*math.Cos(b), -0.95}
		}
		got := ChainageZero(d)
		if !strings.Contains(got, c.want) {
			t.Errorf("bearing %.2f°: %q, want %q", c.bearing, got, c.want)
		}
	}
}

// TestDepthReferenceNoNegativeZero: a sensors' mean height that is zero
// but for rounding (-1e-17 m, from averaging heights in a geo-referenced
// log) reads "up = 0.00 m" in the report, not "up = -0.00 m": the sign of
// a zero shown to two decimals carries no meaning.
func TestDepthReferenceNoNegativeZero(t *testing.T) {
	for _, z := range []float64{-1e-17, -0.004} {
		d := fenwickLane(false)
		d.DepthReference.Z = z
		var buf bytes.Buffer
		if err := WriteHTML(&buf, d); err != nil {
			t.Fatal(err)
		}
		page := buf.String()
		if strings.Contains(page, "up = -0.00") || !strings.Contains(page, "(up = 0.00 m)") {
			t.Errorf("z = %g: the depth reference reads %q", z, snippet(page, "(up = "))
		}
	}
	d := fenwickLane(false)
	d.DepthReference.Z = -0.25
	var buf bytes.Buffer
	if err := WriteHTML(&buf, d); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(buf.String(), "(up = -0.25 m)") {
		t.Errorf("z = -0.25: the depth reference reads %q", snippet(buf.String(), "(up = "))
	}
}

// snippet is the text of page around the first s, for a message.
func snippet(page, s string) string {
	i := strings.Index(page, s)
	if i < 0 {
		return fmt.Sprintf("(no %q)", s)
	}
	return page[max(0, i-40):min(len(page), i+40)]
}
