package simulate

import (
	"strings"
	"testing"
)

// TestScenarioHugeValues checks that lengths, sizes, speeds and turn times
// far out of range are refused at their key. Before, length_m = 1e20
// overflowed the reading count to a negative number that passed the
// 10,000,000-reading guard, and Simulate panicked (makeslice: len out of
// range); a grid of size 1e300 across did the same through its line count;
// turn_s = 1e300 wrote a log of times near 1e300 s.
func TestScenarioHugeValues(t *testing.T) {
	grid := "count = 2\nspacing_m = 5\nlength_m = 6"
	checkParseErrors(t, goodScenario, []parseCase{
		{"length 1e20", "length_m = 6", "length_m = 1e20", "s.toml:7:12: a traverse of 1e+20 m"},
		{"length 1e300", "length_m = 6", "length_m = 1e300", "more than 10000000 readings"},
		{"grid across", grid, "pattern = \"grid\"\nsize_m = [6, 1e300]\nline_spacing_m = 1", "lines, more than 10000"},
		{"grid along", grid, "pattern = \"grid\"\nsize_m = [1e20, 2]\nline_spacing_m = 1", "a grid line of 1e+20 m"},
		{"turn", "length_m = 6", "length_m = 6\nturn_s = 1e300", "turn time 1e+300 s must be in [0, 86400]"},
		{"slow", "length_m = 6", "length_m = 6\nspeed_m_s = 1e-300", "speed 1e-300 m/s must be in [1e-06, 100]"},
	})
	// At a sample spacing, a slow walk logs few readings over a long time.
	spaced := strings.Replace(goodScenario, "sample_rate_hz = 10", "", 1)
	checkParseErrors(t, spaced, []parseCase{
		{"too long a walk", "length_m = 6", "length_m = 60\nsample_spacing_m = 0.1\nspeed_m_s = 1e-6", "the survey would take 1.2e+08 s"},
	})
}
