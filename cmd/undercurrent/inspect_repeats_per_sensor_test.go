package main

import (
	"fmt"
	"strings"
	"testing"
)

// TestInspectRepeatsPerSensor: inspect counts a repeated time per group,
// so three sensors logged on shared stamps repeat nothing, in the summary
// and in --json, also when the log's time steps back and inspect reads
// the times again to count them in order (before, every row after a
// stamp's first was a repeat: a clean 5-sensor hour read "21600000
// repeated times"). A sensor reading twice at one stamp is still one.
// Invented fixture, 0.5 s stamps.
func TestInspectRepeatsPerSensor(t *testing.T) {
	log := func(order []int, extra string) string {
		var b strings.Builder
		b.WriteString("time,x,y,z,bx,by,bz,group\n")
		for _, i := range order {
			for k, s := range []string{"s1", "s2", "s3"} {
				fmt.Fprintf(&b, "%.1f,%d,0,0.3,1200,19200,-45000,%s\n", 1776760800+0.5*float64(i), k, s)
			}
		}
		return b.String() + extra
	}
	clean := ingestTemp(t, "clean.csv", log([]int{0, 1, 2, 3, 4, 5, 6, 7}, ""))
	if _, out, _ := cli(t, "inspect", clean); strings.Contains(out, "repeated") {
		t.Errorf("clean interleaved log: summary\n%s\nwant no repeated times", out)
	}
	for _, tc := range []struct {
		name, path string
		args       []string
		back, rep  int
	}{
		{"clean", clean, nil, 0, 0},
		{"clean, per-group", clean, []string{"--time-order", "per-group"}, 0, 0},
		// Stamps 3 and 4 swapped: read again in order.
		{"swapped stamps", ingestTemp(t, "swapped.csv", log([]int{0, 1, 2, 4, 3, 5, 6, 7}, "")), []string{"--time-order", "any"}, 1, 0},
		{"swapped stamps, ordered", ingestTemp(t, "swapped2.csv", log([]int{0, 1, 2, 4, 3, 5, 6, 7}, "")), nil, 1, 0},
		{"s2 twice at the last stamp", ingestTemp(t, "twice.csv", log([]int{0, 1, 2, 3, 4, 5, 6, 7}, "1776760803.5,1,0,0.3,1200,19200,-45000,s2\n")), nil, 0, 1},
		{"s2 twice, swapped stamps", ingestTemp(t, "twice2.csv", log([]int{0, 1, 2, 4, 3, 5, 6, 7}, "1776760803.5,1,0,0.3,1200,19200,-45000,s2\n")), nil, 1, 1},
	} {
		back, rep, _, _, _ := inspectTime(t, append(append([]string(nil), tc.args...), tc.path)...)
		if back != tc.back || rep != tc.rep {
			t.Errorf("%s: %d backwards, %d repeated; want %d and %d", tc.name, back, rep, tc.back, tc.rep)
		}
	}
}
