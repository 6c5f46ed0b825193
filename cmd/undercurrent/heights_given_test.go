package main

import "testing"

// TestHeightsGivenAsNumbers: results.json's settings record --sensor-height
// as numbers, however they were typed, as the other number flags are (a
// review found ".30" and "3e-1" kept as typed after the flag took LOG=H).
func TestHeightsGivenAsNumbers(t *testing.T) {
	for _, c := range []struct {
		in   []string
		want string
	}{
		{[]string{"0.30"}, "0.3"},
		{[]string{".3"}, "0.3"},
		{[]string{"3e-1"}, "0.3"},
		{[]string{"0.30", "day2.csv=.25"}, "0.3,day2.csv=0.25"},
		{[]string{"a=b.csv=0.250"}, "a=b.csv=0.25"},
	} {
		if got := heightsGiven(c.in); got != c.want {
			t.Errorf("heightsGiven(%q) = %q, want %q", c.in, got, c.want)
		}
	}
}
