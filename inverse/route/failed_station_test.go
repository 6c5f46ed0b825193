package route

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
)

// A failed station keeps out of the route's chain, chainage and
// orientation wherever it lies. The fixture (invented, Harrow Fen
// substation) follows a 15 A DC cable at azimuth 150 degrees, 1.3 m below
// the sensors, crossed by sound traverses every 2.6 m, with one traverse
// whose fit failed: its point is the centroid of its readings, 25 m off
// the cable (the cable has drifted past the traverse's end). Each fit's
// direction comes with an arbitrary sign, its current signed along it.
//
// The truth follows from Kirchhoff's current law: a cable with nothing
// joining or leaving it carries the same current all along, so after
// orientation every sound station reads +15 A (within the fits' sigmas),
// no current step is reported, and the chainage of the sound stations is
// their distance along the cable from the first. Before, the failed
// station at an end lay farthest from the centroid and started the chain:
// chainage 0 was the failed traverse, the next station's direction was
// taken along the line from the failed point, its current turned to
// -15 A, and a "current rises by 28 A" warning followed (found in review).
const (
	failCurrent = 15.0  // A
	failSigma   = 0.014 // A, each sound fit's current sigma
	failSpacing = 2.6   // m along the cable between sound stations
	failAside   = 25.0  // m, the failed station's centroid off the cable
	failSound   = 6     // sound stations
)

// failedRoute returns the stations in input order with the failed one at
// input position at (0 the first, failSound the last), and the distance
// along the cable of each station (the failed one's where its traverse
// crosses the cable's line).
func failedRoute(seed uint64, at int) ([]Station, []float64) {
	rng := rand.New(rand.NewPCG(seed, 4))
	az := 150 * math.Pi / 180
	u := [3]float64{math.Sin(az), math.Cos(az), 0}
	side := [3]float64{u[1], -u[0], 0}
	st := make([]Station, 0, failSound+1)
	var along []float64
	for i := 0; i <= failSound; i++ {
		x := failSpacing * float64(i)
		if i == at {
			st = append(st, Station{
				Key:     key(i + 1),
				Point:   [3]float64{x*u[0] + failAside*side[0], x*u[1] + failAside*side[1], 0},
				Current: -10.7, CurrentSigma: 3.8, Depth: 0.57, DepthSigma: 0.86,
				OK: false, Problem: "no current found",
			})
			along = append(along, x)
			continue
		}
		sign := 1.0
		if rng.IntN(2) == 0 {
			sign = -1
		}
		st = append(st, Station{
			Key:          key(i + 1),
			Point:        [3]float64{x * u[0], x * u[1], -1.3},
			Dir:          [3]float64{sign * u[0], sign * u[1], 0},
			Current:      sign * (failCurrent + failSigma*rng.NormFloat64()),
			CurrentSigma: failSigma,
			Depth:        1.3 + 0.002*rng.NormFloat64(),
			DepthSigma:   0.002,
			OK:           true,
		})
		along = append(along, x)
	}
	return st, along
}

func TestFailedStationKeepsOutOfChain(t *testing.T) {
	for _, at := range []int{failSound, 0, 3} {
		for seed := uint64(1); seed <= 8; seed++ {
			for _, shuffled := range []bool{false, true} {
				st, along := failedRoute(seed, at)
				if shuffled {
					// An input order that says nothing of the route
					// (groups keyed by sensor or time): the failed
					// station goes where it lengthens the path least.
					rng := rand.New(rand.NewPCG(seed, 9))
					perm := rng.Perm(len(st))
					s2, a2 := make([]Station, len(st)), make([]float64, len(st))
					for i, j := range perm {
						s2[i], a2[i] = st[j], along[j]
					}
					st, along = s2, a2
				}
				checkFailedRoute(t, at, seed, shuffled, st, along)
			}
		}
	}
}

func checkFailedRoute(t *testing.T, at int, seed uint64, shuffled bool, st []Station, along []float64) {
	t.Helper()
	r, err := Build(st, nil)
	if err != nil {
		t.Fatal(err)
	}
	name := func() string {
		return fmt.Sprintf("%s failed, seed %d, shuffled %v", key(at+1), seed, shuffled)
	}
	if !r.Stations[0].OK && at != 0 && !shuffled {
		t.Errorf("%s: the route starts at failed %s", name(), r.Stations[0].Key)
	}
	// The sound stations in route order run along the cable one way.
	var sound []*Placed
	for k := range r.Stations {
		if r.Stations[k].OK {
			sound = append(sound, &r.Stations[k])
		}
	}
	dir := 1.0
	if along[sound[0].Index] > along[sound[len(sound)-1].Index] {
		dir = -1
	}
	first := along[sound[0].Index]
	for _, p := range sound {
		if want := dir * (along[p.Index] - first); math.Abs(p.Chainage-sound[0].Chainage-want) > 1e-6 {
			t.Errorf("%s: %s chainage %.3f m, want %.3f m along the cable", name(), p.Key, p.Chainage, want)
		}
		if math.Abs(math.Abs(p.Current)-failCurrent) > 5*failSigma {
			t.Errorf("%s: %s current %.3f A, want ±%.0f A", name(), p.Key, p.Current, failCurrent)
		}
		if math.Signbit(p.Current) != math.Signbit(sound[0].Current) {
			t.Errorf("%s: %s current %.3f A against %.3f A at %s: turned by a failed neighbour",
				name(), p.Key, p.Current, sound[0].Current, sound[0].Key)
		}
	}
	for k := 1; k < len(r.Stations); k++ {
		if r.Stations[k].Chainage < r.Stations[k-1].Chainage {
			t.Errorf("%s: chainage falls from %.3f m at %s to %.3f m at %s", name(),
				r.Stations[k-1].Chainage, r.Stations[k-1].Key, r.Stations[k].Chainage, r.Stations[k].Key)
		}
	}
	if r.Stations[0].Chainage != 0 {
		t.Errorf("%s: the first station's chainage is %g m, want 0", name(), r.Stations[0].Chainage)
	}
	// Sound stations only 2.6 m apart: the route is their length, however
	// far aside the failed one lies.
	if want := float64(failSound-1) * failSpacing; r.Length > want+failSpacing+1e-6 {
		t.Errorf("%s: route length %.3f m, want no more than %.3f m", name(), r.Length, want+failSpacing)
	}
	if !shuffled {
		for k := range r.Stations {
			if r.Stations[k].Index != k {
				t.Errorf("%s: position %d holds %s, want the input order", name(), k, r.Stations[k].Key)
				break
			}
		}
	}
	for _, f := range r.Findings {
		if f.Kind == KindCurrentStep || f.Kind == KindCurrentAnomaly {
			t.Errorf("%s: false finding on a constant current: %s", name(), f.Message)
		}
	}
}
