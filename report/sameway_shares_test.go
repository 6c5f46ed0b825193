package report

import (
	"testing"

	"undercurrent/inverse"
	"undercurrent/inverse/route"
)

// splitFit is a fit of one traverse over a steel main: the main's line
// carrying strong A and, when weak is not 0, a second line 1 m beside it
// carrying weak A the same way; split makes the two an unparted same-way
// split (inverse.Result.SameWay) whose sum is known to 2 mA.
func splitFit(key string, strong, weak float64, split bool) Fit {
	res := &inverse.Result{Sources: []inverse.SourceEstimate{
		{Kind: "line", Point: [3]float64{0, 0, -1.3}, Dir: [3]float64{1, 0, 0}, Current: strong, CurrentSigma: 0.03, Depth: 1.3, DepthSigma: 0.006},
	}}
	if weak != 0 {
		res.Sources = append(res.Sources, inverse.SourceEstimate{Kind: "line", Point: [3]float64{0, 1, -1.6}, Dir: [3]float64{0.9, 0.4, 0}, Current: weak, CurrentSigma: 0.03, Depth: 1.6, DepthSigma: 0.06})
	}
	if split {
		res.SameWay = []inverse.PairEstimate{{Lines: [2]int{0, 1}, Point: [3]float64{0, 0.5, -1.45}, Dir: [3]float64{1, 0, 0},
			Depth: 1.45, DepthSigma: 0.03, NetCurrent: strong + weak, NetCurrentSigma: 0.002, Spacing: 1}}
	}
	return Fit{Key: key, Result: res}
}

// routeOf places fits along a route 50 m apart, as route.Build would,
// with each station's current its strongest line's.
func routeOf(fits []Fit) *route.Route {
	r := &route.Route{}
	for i, f := range fits {
		s := f.Result.Sources[0]
		r.Stations = append(r.Stations, route.Placed{Station: route.Station{Key: f.Key, Point: [3]float64{50 * float64(i), 0, -s.Depth},
			Dir: [3]float64{1, 0, 0}, Current: s.Current, CurrentSigma: s.CurrentSigma, Depth: s.Depth, DepthSigma: s.DepthSigma, OK: true},
			Chainage: 50 * float64(i), Index: i})
	}
	return r
}

// TestWeldSharesTrackTakesSum: the stations of a steel main whose girth
// welds made the fits split the pipe's current in two same-way lines (the
// numbers of review's Brackenridge main, invented: a 0.02 A line 3 m
// aside at T26, splits of 1.29 + 0.135 A at T27 and 1.19 + 0.175 A at
// T29, the unsplit stations 1.45, 1.39 and, past the coating defect
// between T29 and T30, 1.16 A; the truth by Ampere's law is the pipe's
// current, 1.42 A at T27 and 1.37 A at T29). The second lines were
// joined into a "conductor 2" track, and the route took the stronger
// shares. A track made of such shares follows no conductor: the route
// takes the sums at T27 and T29. At T29 the mean of its neighbours (1.39
// and 1.16 A) lies nearer the share than the sum: the sum is taken as it
// matches the neighbour on its side of the defect.
func TestWeldSharesTrackTakesSum(t *testing.T) {
	fits := []Fit{
		splitFit("T25", 1.487, 0, false),
		splitFit("T26", 1.448, 0.021, false),
		splitFit("T27", 1.286, 0.135, true),
		splitFit("T28", 1.393, 0, false),
		splitFit("T29", 1.194, 0.175, true),
		splitFit("T30", 1.160, 0, false),
	}
	r := routeOf(fits)
	track := builtTrack{number: 2, members: []trackSource{{fit: 1, source: 1, pos: 1}, {fit: 2, source: 1, pos: 2}, {fit: 4, source: 1, pos: 4}}}
	if !markSplitSums(fits, r, []builtTrack{track}) {
		t.Fatal("no station takes the sum of its split")
	}
	for _, k := range []int{2, 4} {
		if !fits[k].sumSplit {
			t.Errorf("%s takes its stronger share, %.3f A, not the sum %.3f A of the pipe split by its welds", fits[k].Key,
				fits[k].Result.Sources[0].Current, fits[k].Result.SameWay[0].NetCurrent)
		}
	}
}

// TestCableTrackKeepsShares: a cable laid 1 m beside conductor 1 and
// resolved from it at most traverses (its own lines, not splits) keeps its
// track where two of its five stations are same-way splits: the track
// follows a conductor, and the stations take the stronger share.
func TestCableTrackKeepsShares(t *testing.T) {
	fits := []Fit{
		splitFit("T01", 1.40, 0.30, false),
		splitFit("T02", 1.10, 0.30, true),
		splitFit("T03", 1.40, 0.30, false),
		splitFit("T04", 1.10, 0.30, true),
		splitFit("T05", 1.40, 0.30, false),
	}
	r := routeOf(fits)
	var members []trackSource
	for i := range fits {
		members = append(members, trackSource{fit: i, source: 1, pos: i})
	}
	if markSplitSums(fits, r, []builtTrack{{number: 2, members: members}}) {
		for _, f := range fits {
			if f.sumSplit {
				t.Errorf("%s takes the sum of conductor 1 and the cable beside it, followed as its own conductor", f.Key)
			}
		}
	}
}
