package inverse

import "testing"

// TestFewReadingsNoPanic: a traverse of three readings (nine field components). One
// line has six to eight parameters (offset, height, perhaps azimuth and dip, current,
// three background components) and is fitted; two or three lines have more
// parameters than the readings leave rows for in the Householder factorisation of
// the projected Jacobian, which wants one per parameter. The automatic count had
// tried two lines and panicked inside the factorisation; it must now refuse that
// count and report the one line, and an explicit count of two or three must be an
// error, not a panic. The readings are a simulated fixture.
func TestFewReadingsNoPanic(t *testing.T) {
	// One traverse of the two-conductors-fault scenario (testdata/scenarios),
	// cut to three readings.
	p := &Problem{
		Points: [][3]float64{{-6, 270, 0.3}, {-1, 270, 0.3}, {4, 270, 0.3}},
		Fields: [][3]float64{
			{80.04608161740957, 19140.134642644076, -43856.02282529236},
			{3109.9710725927393, 19152.912286033312, -41930.67435297937},
			{2022.132741275361, 19143.944488454003, -47744.09786309644},
		},
	}
	res, err := FitLines(p, &Settings{})
	if err != nil {
		t.Fatalf("automatic count: %v", err)
	}
	if len(res.Sources) != 1 {
		t.Errorf("%d lines from three readings, want 1", len(res.Sources))
	}
	refused := false
	for _, sc := range res.Criteria {
		if sc.Count >= 2 && sc.Rejected != "" {
			refused = true
		}
	}
	if !refused {
		t.Errorf("no count over one refused: %+v", res.Criteria)
	}
	for _, n := range []int{2, 3} {
		if _, err := FitLines(p, &Settings{Count: n}); err == nil {
			t.Errorf("%d lines from three readings: no error", n)
		}
	}
}
