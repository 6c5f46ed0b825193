package report_test

import (
	"fmt"
	"math"
	"strings"

	"undercurrent/inverse"
	"undercurrent/inverse/route"
	"undercurrent/report"
)

// Two traverses across a cable on the fictional Fenwick Lane route, each
// fitted with inverse.FitLines, turned into a result document.
func ExampleBuild() {
	var fits []report.Fit
	for i, current := range []float64{40, 40} {
		var p inverse.Problem
		cable := inverse.Line{Point: [3]float64{0, 10 * float64(i), -0.8}, Dir: [3]float64{0, 1, 0}}
		for k := -10; k <= 10; k++ {
			r := [3]float64{0.3 * float64(k), 10 * float64(i), 0}
			b := cable.Field(r, current)
			p.Points = append(p.Points, r)
			p.Fields = append(p.Fields, [3]float64{b[0] * 1e9, b[1]*1e9 + 19000, b[2]*1e9 - 45000})
		}
		p.Sigma = 1
		res, err := inverse.FitLines(&p, &inverse.Settings{Count: 1})
		fits = append(fits, report.Fit{Key: fmt.Sprintf("T%d", i+1), Problem: &p, Result: res, Err: err})
	}
	head := report.Document{Tool: report.Tool{Name: "undercurrent", Version: "v0.1.0"}, Title: "Fenwick Lane cable route"}
	d, err := report.Build(head, fits, &report.BuildSettings{Noise: 1, SensorHeight: 0.25, MinCover: 0.6})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%s, %s, route %.0f m\n", d.Signal.Mode, d.DepthReference.Kind, d.Route.Length)
	for _, g := range d.Groups {
		s := g.Sources[0]
		fmt.Printf("%s at %.0f m: %s %.1f A, depth %.2f m\n", g.Key, *g.Chainage, s.Kind, s.Current, s.Depth)
	}
	for _, f := range d.Findings {
		fmt.Println(f.Severity, f.Kind, f.Groups)
	}
	// Output:
	// dc, mean-sensor-height, route 10 m
	// T1 at 0 m: line 40.0 A, depth 0.80 m
	// T2 at 10 m: line 40.0 A, depth 0.80 m
	// warning shallow-cover [T1 T2]
}

// SetRoute brings an along-route analysis into a document whose groups
// were filled by the caller.
func ExampleDocument_SetRoute() {
	d := &report.Document{
		SchemaVersion:  report.SchemaVersion,
		Frame:          report.Frame{Kind: report.FrameLocalENU},
		DepthReference: report.DepthReference{Kind: report.DepthBelowGround},
		Signal:         report.Signal{Mode: report.SignalDC},
	}
	var st []route.Station
	for i, c := range []float64{5.0, 5.1, 3.9} {
		key := fmt.Sprintf("K%d", i+1)
		p := [3]float64{0, 25 * float64(i), -1}
		d.Groups = append(d.Groups, report.Group{Key: key, OK: true,
			Sources: []report.Source{{Kind: report.KindLine, Point: p, Direction: [3]float64{0, 1, 0}, Current: c, CurrentSigma: 0.05, Depth: 1, DepthSigma: 0.02}}})
		st = append(st, route.Station{Key: key, Point: p, Dir: [3]float64{0, 1, 0}, Current: c, CurrentSigma: 0.05, Depth: 1, DepthSigma: 0.02, OK: true})
	}
	r, err := route.Build(st, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	d.SetRoute(r)
	for _, f := range d.Findings {
		fmt.Printf("%s %s %s\n", f.Severity, f.Kind, strings.Join(f.Groups, "-"))
	}
	// Output:
	// warning current-step K2-K3
}

// ReadJSON reads a document back and says where bad JSON is.
func ExampleReadJSON() {
	_, err := report.ReadJSON(strings.NewReader("{\n  \"schema_version\": 1,\n  \"groups\": [,]\n}"), "results.json")
	fmt.Println(err)
	// Output:
	// report: results.json:3:14: invalid character ',' looking for beginning of value
}

// NewProfile sorts readings by their offset across the conductor.
func ExampleNewProfile() {
	pos := [][3]float64{{1, 5, 0}, {-2, 5, 0}, {0.5, 5, 0}}
	b := [][3]float64{{1, 0, 0}, {2, 0, 0}, {3, 0, 0}}
	// A conductor running north: offsets are positive to the east.
	p, err := report.NewProfile(pos, b, b, [3]float64{0, 0, -1}, [3]float64{0, 1, 0}, report.ComponentDC, 0)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(p.Offset, math.Round(p.Measured[0][0]))
	// Output:
	// [-2 0.5 1] 2
}
