package calibrate

import (
	"math"
	"slices"
	"strings"
	"testing"

	"undercurrent/ingest"
)

// checkLog is a fixed-orientation sensor at Kestrel Moor reading a field of
// magnitude f (nT) through the distortion the calibration cal undoes:
// raw = Matrix⁻¹ B + Offset, with a diagonal matrix. The last anomalous
// rows read an extra 6000 nT along the field, as readings over a
// conductor do.
func checkLog(cal *Calibration, f float64, n, anomalous int) *ingest.Samples {
	s := &ingest.Samples{Source: "kestrel-moor-T3.csv", Meta: map[string]string{}}
	for i := 0; i < n; i++ {
		// A direction that wanders a few degrees, inclination about 68°.
		inc := (68 + 3*math.Sin(float64(i)/7)) * math.Pi / 180
		dec := (2 + 4*math.Cos(float64(i)/11)) * math.Pi / 180
		m := f
		if i >= n-anomalous {
			m += 6000
		}
		b := [3]float64{m * math.Cos(inc) * math.Sin(dec), m * math.Cos(inc) * math.Cos(dec), -m * math.Sin(inc)}
		s.Time = append(s.Time, float64(i)/10)
		s.Bx = append(s.Bx, b[0]/cal.Matrix[0][0]+cal.Offset[0])
		s.By = append(s.By, b[1]/cal.Matrix[1][1]+cal.Offset[1])
		s.Bz = append(s.Bz, b[2]/cal.Matrix[2][2]+cal.Offset[2])
	}
	return s
}

func TestCheck(t *testing.T) {
	// 49 850 nT is a mid-latitude total field (the IGRF main field over
	// Britain is 48 000 to 51 000 nT).
	const f = 49850
	cal := &Calibration{Version: Version, Method: MethodEllipsoid, Reference: f,
		Offset: [3]float64{310, -240, 180},
		Matrix: [3][3]float64{{0.96, 0, 0}, {0, 1.04, 0}, {0, 0, 1.0}}, Sensor: "MAG-0412"}
	// Another sensor's calibration: its offsets differ by 1500 nT on z,
	// a hard-iron difference of the size two fluxgates' offsets show.
	other := *cal
	other.Offset[2] += 1500
	noSensor := *cal
	noSensor.Sensor = ""
	noRef := other
	noRef.Reference = 0
	// A calibration whose scale is a tenth of the sensor's (a reference
	// typed as 4985 for 49850): the corrected field leaves the Earth's range,
	// and it agrees with its own reference, so only the range can tell.
	tenth := *cal
	tenth.Reference = f / 10
	for i := range 3 {
		tenth.Matrix[i][i] /= 10
	}
	for _, tc := range []struct {
		name      string
		cal       *Calibration
		logSensor string
		anomalous int
		want      []string // one substring per expected warning
	}{
		{"right calibration", cal, "MAG-0412", 0, nil},
		{"right calibration, a third over a conductor", cal, "", 330, nil},
		{"another sensor's offsets", &other, "", 0, []string{"kestrel-moor-T3.csv: median |B| after the calibration is 51244 nT, +2.8% from the 49850 nT the calibration was made in"}},
		{"another sensor named", cal, "MAG-0977", 0, []string{`kestrel-moor-T3.csv was taken by sensor "MAG-0977", but the calibration was made for sensor "MAG-0412"`}},
		{"calibration names no sensor", &noSensor, "MAG-0977", 0, nil},
		{"both wrong", &other, "MAG-0977", 0, []string{`sensor "MAG-0977"`, "median |B|"}},
		{"no reference to compare", &noRef, "", 0, nil},
		{"a tenth of the scale", &tenth, "", 0, []string{"nT as read but 4985 nT after the calibration, outside the Earth's surface field"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			s := checkLog(cal, f, 1000, tc.anomalous)
			if tc.logSensor != "" {
				s.Meta["sensor"] = tc.logSensor
			}
			bx := slices.Clone(s.Bx)
			got := tc.cal.Check(s)
			if len(got) != len(tc.want) {
				t.Fatalf("warnings %q, want %d", got, len(tc.want))
			}
			for i, w := range tc.want {
				if !strings.Contains(got[i], w) {
					t.Errorf("warning %q lacks %q", got[i], w)
				}
			}
			if !slices.Equal(bx, s.Bx) {
				t.Error("Check changed the log")
			}
		})
	}
	// The threshold sits between the two: the right calibration restores
	// f exactly; the other one is off by about 1500 sin(68°) nT, 2.8%.
	s := checkLog(cal, f, 1000, 0)
	if d := math.Abs(medianCorrected(&other, s)-f) / f; d < MaxReferenceMismatch || d > 0.04 {
		t.Errorf("other sensor's calibration: %.2f%% off, want 2%% to 4%%", 100*d)
	}
	if d := math.Abs(medianCorrected(cal, s)-f) / f; d > 1e-9 {
		t.Errorf("right calibration: %.2g off", d)
	}
}

func medianCorrected(c *Calibration, s *ingest.Samples) float64 {
	var m []float64
	for i := range s.Bx {
		v := c.Correct([3]float64{s.Bx[i], s.By[i], s.Bz[i]})
		m = append(m, math.Sqrt(v[0]*v[0]+v[1]*v[1]+v[2]*v[2]))
	}
	return median(m, nil)
}

func TestSensorName(t *testing.T) {
	for _, tc := range []struct {
		meta map[string]string
		want string
	}{
		{nil, ""},
		{map[string]string{"site": "Kestrel Moor"}, ""},
		{map[string]string{"sensor": " MAG-0412 "}, "MAG-0412"},
		{map[string]string{"serial": "FG-77", "sensor_id": "MAG-0412"}, "MAG-0412"},
	} {
		if got := SensorName(&ingest.Samples{Meta: tc.meta}); got != tc.want {
			t.Errorf("SensorName(%v) = %q, want %q", tc.meta, got, tc.want)
		}
	}
}
