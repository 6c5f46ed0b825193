package simulate

import "testing"

// TestScenarioUnknownTableLine checks that a table the scenario format does
// not know, [nope] or [[nope]] (a misspelt [[conductor]], say), is reported
// with the file, line and column of its header, as a misspelt key inside a
// known table is. Before, only the file was named.
func TestScenarioUnknownTableLine(t *testing.T) {
	good := goodScenario
	// A dotted key at the top defines a table too (line 2; the column
	// is its value's, as for other keys).
	cases0 := []parseCase{{"dotted key", "\n[sensor]", "\nnope.name = \"x\"\n[sensor]", `s.toml:2:13: unknown key "nope.name"`}}
	checkParseErrors(t, good, cases0)
	// The edits append the table after line 12, the last of good.
	cases := []parseCase{
		{"array of tables", "current_a = 10\n", "current_a = 10\n[[nope]]\nname = \"x\"\n", `s.toml:13:1: unknown key "nope"`},
		{"table", "current_a = 10\n", "current_a = 10\n[nope]\nname = \"x\"\n", `s.toml:13:1: unknown key "nope"`},
		{"indented header", "current_a = 10\n", "current_a = 10\n  [[ nope ]]\n", `s.toml:13:3: unknown key "nope"`},
		{"empty table", "current_a = 10\n", "current_a = 10\n[nope]\n", `s.toml:13:1: unknown key "nope"`},
		{"sub-table of a known table", "current_a = 10\n", "current_a = 10\n[sensor.nope]\nname = \"x\"\n", `s.toml:13:1: unknown key "sensor.nope"`},
		{"misspelt array of conductors", "[[conductor]]", "[[conductors]]", `s.toml:8:1: unknown key "conductors"`},
	}
	checkParseErrors(t, good, cases)
}
