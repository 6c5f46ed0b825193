package ingest

import (
	"fmt"
	"math"
	"strings"
	"testing"
)

// fieldWarnings returns inspect's "field:" warnings for a log.
func fieldWarnings(t *testing.T, path string) []string {
	t.Helper()
	in, err := Inspect(path)
	if err != nil {
		t.Fatal(err)
	}
	var w []string
	for _, s := range in.Warnings {
		if strings.HasPrefix(s, "field:") {
			w = append(w, s)
		}
	}
	return w
}

// A small |B| read in nT is not by itself a log in another unit. The
// repository's zero-field example (a sensor inside a shield reading its
// offset, about 431 nT) and a traverse with the Earth's field removed
// across a long straight conductor (Biot-Savart, B = µ0 I / (2π r), µ0 =
// 4π·10⁻⁷ T·m/A: 10 A at 1 to 5 m is 400 to 2000 nT) both sit where mG
// (1 mG = 100 nT, from 1 G = 1e-4 T, BIPM SI Brochure, 8th ed., Table 9)
// would put them inside the Earth's band of 15 000-80 000 nT (IGRF). They
// must not be told they are in mG (read so, the shield's offset would be
// 43 000 nT); the warning names a zero-field log as a reason. A log that
// keeps its size while it turns in the sensor's axes is a total field,
// and is still told its unit (inspect_field_units_test.go).
func TestInspectSmallFieldNotCalledMilligauss(t *testing.T) {
	var trav strings.Builder
	trav.WriteString("time,x,bx,by,bz\n")
	const mu0I = 4 * math.Pi * 1e-7 * 10 / (2 * math.Pi) * 1e9 // nT·m for 10 A
	for i := 0; i <= 100; i++ {
		x := -5 + 0.1*float64(i) // m along the traverse, the conductor 1 m below x = 0
		r := math.Hypot(x, 1)
		b := mu0I / r
		// The field circles the conductor, at right angles to (x, 1):
		// along the traverse b·1/r, up b·(-x)/r.
		fmt.Fprintf(&trav, "%d,%.1f,%.3f,0,%.3f\n", i, x, b/r, -b*x/r)
	}
	for _, c := range []struct{ name, path string }{
		{"shield example", "../testdata/examples/kestrel-moor-shield.csv"},
		{"Earth's field removed", writeFile(t, "removed.csv", trav.String())},
	} {
		w := fieldWarnings(t, c.path)
		if len(w) != 1 {
			t.Errorf("%s: field warnings %q, want one", c.name, w)
			continue
		}
		if strings.Contains(w[0], "probably in") || strings.Contains(w[0], "=mG") {
			t.Errorf("%s: %q suggests a unit", c.name, w[0])
		}
		for _, want := range []string{"outside the Earth's field band", "zero-field log", "Earth's field removed"} {
			if !strings.Contains(w[0], want) {
				t.Errorf("%s: %q lacks %q", c.name, w[0], want)
			}
		}
	}
}
