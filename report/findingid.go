package report

import (
	"fmt"
	"strings"
)

// FindingIDs returns the id of each of d's findings, in order: "finding/",
// its kind, its conductor ("c1" for the route's own, "c2", ... for a
// further conductor's; none for a lone line, Finding.Lone) and its groups
// joined by "+", each part after a "/" ("finding/current-step/c1/T07+T08");
// a second finding with the same parts gets "#2", a third "#3", in the
// order written. results.json (findings[].id), findings.csv (its id column)
// and route.geojson (the finding feature's id) give the same id, so that
// the three files join on it and a register appending runs has a key that
// does not hang on the findings' order. Before, only route.geojson gave
// one (found in review).
func (d *Document) FindingIDs() []string {
	ids := make([]string, len(d.Findings))
	seen := map[string]int{}
	for i, f := range d.Findings {
		parts := []string{"finding", f.Kind}
		switch {
		case f.Conductor > 0:
			parts = append(parts, fmt.Sprintf("c%d", f.Conductor))
		case !f.Lone:
			parts = append(parts, "c1")
		}
		if len(f.Groups) > 0 {
			parts = append(parts, strings.Join(f.Groups, "+"))
		}
		id := strings.Join(parts, "/")
		seen[id]++
		if n := seen[id]; n > 1 {
			id += fmt.Sprintf("#%d", n)
		}
		ids[i] = id
	}
	return ids
}
