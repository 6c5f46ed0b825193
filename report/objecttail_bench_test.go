package report

import (
	"fmt"
	"path/filepath"
	"testing"
	"time"

	"undercurrent/ingest/ingesttest"
	"undercurrent/inverse"
	"undercurrent/inverse/route"
	"undercurrent/inverse/simulate"
)

// BenchmarkObjectTails times objectTails, the refits of the traverses
// beside the objects found, on a route of n traverses 2 m apart across the
// 20 A cable of drum-beside-cable.toml (the invented Pellow Bank) with its
// drum repeated every 6 m along the route (rv14c's drums scenarios): the
// objects are taken as found at their own traverses, at their simulated
// positions and moments. Before the bound on an object's reach
// (objectReach) every object's field was summed at every reading of every
// traverse, and the list of objects sorted and de-duplicated again for
// each: the time per traverse grew with the route's length; now it does
// not. Run with go test -run '^$' -bench ObjectTails ./report/.
func BenchmarkObjectTails(b *testing.B) {
	for _, n := range []int{100, 400} {
		b.Run(fmt.Sprintf("traverses=%d", n), func(b *testing.B) {
			fits, kept := drumRoute(b, n)
			b.ResetTimer()
			var cpu time.Duration
			for range b.N {
				b.StopTimer()
				run := append([]Fit(nil), fits...)
				c0 := ingesttest.CPUTime()
				b.StartTimer()
				objectTails(run, kept, nil)
				b.StopTimer()
				cpu += ingesttest.CPUTime() - c0
				b.StartTimer()
			}
			// The process's CPU time: steadier than the wall time on a
			// shared machine.
			b.ReportMetric(float64(cpu.Nanoseconds())/float64(b.N)/float64(n)/1e6, "cpu-ms/traverse")
		})
	}
}

// drumRoute simulates the drums route of BenchmarkObjectTails, fits each
// traverse's lines and returns the fits with the objects accepted.
func drumRoute(b *testing.B, n int) ([]Fit, []accepted) {
	b.Helper()
	sc, err := simulate.Load(filepath.Join("..", "testdata", "scenarios", "open", "drum-beside-cable.toml"))
	if err != nil {
		b.Fatal(err)
	}
	end := 2*float64(n) + 4
	sc.Survey.Route = [][2]float64{{0, 0}, {end, 0}}
	sc.Survey.Count = n
	var drum simulate.Conductor
	var conds []simulate.Conductor
	for _, c := range sc.Conductors {
		if c.Kind == "dipole" {
			drum = c
			continue
		}
		c.Vertices = [][3]float64{{-200, 0, -1}, {end / 2, 0, -1}, {end + 200, 0, -1}}
		conds = append(conds, c)
	}
	type truth struct{ pos, m [3]float64 }
	var drums []truth
	for x := 8.0; x <= 2*float64(n); x += 6 {
		d := drum
		d.Name = fmt.Sprintf("drum at %g m", x)
		d.Position = &[3]float64{x, -1.3, -0.6}
		conds = append(conds, d)
		drums = append(drums, truth{*d.Position, *d.Moment})
	}
	sc.Conductors = conds
	if err := sc.Validate(); err != nil {
		b.Fatal(err)
	}
	s, err := simulate.Simulate(sc)
	if err != nil {
		b.Fatal(err)
	}
	byKey, keys := groupProblems(s)
	if len(keys) != n {
		b.Fatalf("%d traverses simulated, want %d", len(keys), n)
	}
	ground := 0.0
	fits := make([]Fit, n)
	for i, k := range keys {
		p := byKey[k]
		res, err := inverse.FitLines(p, &inverse.Settings{ReferenceZ: &ground})
		if err != nil {
			b.Fatal(err)
		}
		fits[i] = Fit{Key: k, Problem: p, Result: res, Settings: &inverse.Settings{ReferenceZ: &ground}}
	}
	var kept []accepted
	for _, d := range drums {
		i := int((d.pos[0]-2)/2 + 0.5) // traverse j at east 2 + 2j m
		o := &route.Object{Point: d.pos, Depth: -d.pos[2], PointSigma: [3]float64{0.01, 0.01, 0.01}}
		mom := &inverse.Result{Strengths: d.m[:], StrengthSigmas: []float64{0.02, 0.02, 0.02}}
		fits[i].Dipole, fits[i].object = true, o
		kept = append(kept, accepted{fit: i, ds: &dipoleSearch{obj: o, moment: mom}})
	}
	return fits, kept
}
