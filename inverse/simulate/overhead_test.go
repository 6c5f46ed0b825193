package simulate

import (
	"strings"
	"testing"
)

// TestOverheadLine: a walked survey takes a line above its sensors only
// when marked overhead = true, horizontal and at least 0.5 m above the
// sensor height (an overhead line, a cable tray over a walkway).
func TestOverheadLine(t *testing.T) {
	up := strings.Replace(goodScenario, "point = [0, 0, -1]", "point = [0, 0, 8]\noverhead = true", 1)
	if _, err := Parse([]byte(up), "s.toml"); err != nil {
		t.Fatalf("an overhead line 8 m up: %v", err)
	}
	checkParseErrors(t, up, []parseCase{
		{"not marked", "overhead = true", "", "not below the sensor height"},
		{"too low", "point = [0, 0, 8]", "point = [0, 0, 0.2]", "not at least 0.5 m above the sensor height"},
		{"not level", "direction = [1, 0, 0]", "direction = [1, 0, 0.5]", "for a horizontal line"},
	})
}
