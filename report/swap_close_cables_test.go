package report

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"undercurrent/inverse"
	"undercurrent/inverse/simulate"
)

// latticeDroveScenario is an invented survey at Lattice Drove: cable A
// 1.0 m below the sensors' datum along the route (x = 0, running north)
// carrying 20 A, and cable B 2.0 m east and 1.3 m down carrying 12 A to
// y = 60 m and 30 A past it (current joining it there), so that A is the
// stronger at T01-T06 and B at T07-T12; 12 traverses 12 m long, 10 m
// apart, 3 nT noise.
func latticeDroveScenario(seed int64) string {
	return latticeDroveScenarioAt(seed, 2.0)
}

// latticeDroveScenarioAt is latticeDroveScenario with cable B east m east
// of cable A.
func latticeDroveScenarioAt(seed int64, east float64) string {
	return latticeDroveScenarioWith(seed, east, 12, 30)
}

// latticeDroveScenarioWith is latticeDroveScenarioAt with cable B carrying
// before A to y = 60 m and after A past it (north positive).
func latticeDroveScenarioWith(seed int64, east, before, after float64) string {
	return fmt.Sprintf(`name = "lattice-drove"
site = "Lattice Drove (invented)"
seed = %d
start = "2026-05-10T15:00:00Z"
[earth]
field_nt = [-300.0, 18000.0, -46000.0]
[sensor]
height_m = 0.3
noise_nt = 3.0
[survey]
route = [[0.0, 0.0], [0.0, 120.0]]
count = 12
spacing_m = 10.0
first_at_m = 5.0
length_m = 12.0
speed_m_s = 0.5
sample_spacing_m = 0.05
turn_s = 10.0
[[conductor]]
name = "cable A"
kind = "line"
point = [0.0, 0.0, -1.0]
direction = [0.0, 1.0, 0.0]
current_a = 20.0
[[conductor]]
name = "cable B"
kind = "polyline"
vertices = [[%[2]g, -300.0, -1.3], [%[2]g, 60.0, -1.3], [%[2]g, 400.0, -1.3]]
currents_a = [%.1f, %.1f]
`, seed, east, before, after)
}

// TestSwapBetweenCablesTwoMetresApart: two parallel cables 2.0 m apart
// across and 0.3 m apart in depth, each the stronger along half the
// route. README's rule: conductor 1 keeps to the one whose current
// changes (here the stronger at the tie, B), so the rise is reported at
// its size and neither cable is said to end. Simulated truth (Biot-Savart
// through the simulate package): conductor 1 at E 2 m at every station;
// one rise, within 3 sigma of 18 A; no "appears to end". When swapPick
// measured the other line's distance from conductor 1 across the route
// only (2.0 m, not beyond the 2 m reach), no swap was considered: at
// every seed conductor 1 went from A to B with a false 9.7 A rise and
// both cables said to end (the 2.02 m in the cross-section is beyond).
func TestSwapBetweenCablesTwoMetresApart(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 48 traverses")
	}
	for _, seed := range []int64{1, 2, 3, 10} {
		t.Run(fmt.Sprintf("seed%d", seed), func(t *testing.T) { checkLatticeSwap(t, seed, 2.0) })
	}
}

// TestSwapBetweenCablesOneAndAHalfMetresApart is
// TestSwapBetweenCablesTwoMetresApart with cable B 1.5 m east of A
// (1.53 m in the cross-section), within continuityReach of it. Simulated
// truth (Biot-Savart through the simulate package): conductor 1 at E 1.5
// m at every station; one rise, within 3 sigma of 18 A; no "appears to
// end". Each cable's line lying on the other's track, the groups' conductor
// 1 lines made one track and swapPick wanted the other line beyond the
// reach: at seeds 1-7 and 10 conductor 1 went from A to B with a false
// rise of 9.6-10.2 A and both cables were said to end (fails before the
// fix).
func TestSwapBetweenCablesOneAndAHalfMetresApart(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 48 traverses")
	}
	for _, seed := range []int64{1, 2, 3, 10} {
		t.Run(fmt.Sprintf("seed%d", seed), func(t *testing.T) { checkLatticeSwap(t, seed, 1.5) })
	}
}

// checkLatticeSwap checks the Lattice Drove survey at seed with cable B
// east m east of cable A: conductor 1 on B at every used station (within
// half a metre: the poor fit 5 m from the change places B 0.16 m off at
// 1.5 m apart, the others to under 0.02 m), one rise on it within 3 sigma
// of the 18 A joining B, and neither cable said to end.
func checkLatticeSwap(t *testing.T, seed int64, east float64) {
	t.Helper()
	sc, err := simulate.Parse([]byte(latticeDroveScenarioAt(seed, east)), "lattice-drove")
	if err != nil {
		t.Fatal(err)
	}
	checkLatticeSwapDoc(t, simulatedDoc(t, sc), east)
}

// checkLatticeSwapDoc is checkLatticeSwap on the document d built from the
// survey's fits.
func checkLatticeSwapDoc(t *testing.T, d *Document, east float64) {
	t.Helper()
	if d.Route == nil {
		t.Fatal("no route")
	}
	for _, s := range d.Route.Stations {
		if s.Used && math.Abs(s.Point[0]-east) > 0.5 {
			t.Errorf("conductor 1 at %s lies at E %.2f m carrying %.4g A, want cable B (E %g m) throughout", s.Key, s.Point[0], s.Current, east)
		}
	}
	rises := 0
	for _, f := range d.Findings {
		if strings.Contains(f.Message, "appears to end") {
			t.Errorf("a cable said to end (both run the whole survey): %s", f.Message)
		}
		if f.Kind != "current-step" && f.Kind != "current-change" || f.Severity == SeverityInfo || f.Conductor > 1 || len(f.Values) == 0 {
			continue
		}
		rises++
		if v := f.Values[0]; math.Abs(v.Value-18) > 3*v.Sigma {
			t.Errorf("change %.4g ± %.2g A, beyond 3 sigma of the truth +18 A: %s", v.Value, v.Sigma, f.Message)
		}
	}
	if rises != 1 {
		t.Errorf("%d changes of current on conductor 1, want the one rise of 18 A", rises)
	}
}

// TestSwapCloseCablesAnyDatum: the Lattice Drove survey with cable B 1.5 m
// east of A (1.3 and 1.6 m below the sensors 0.3 m up), its fits made with
// depths reported below the ground (ReferenceZ 0), below ReferenceZ 0.3
// (the sensors' height, as --sensor-height 0.3 gives) and below the mean
// sensor height (no datum, locate's default). A datum only says where depths
// are counted from: the readings, and so which lines they resolve, are the
// same, and so must be conductor 1's track and the rise (checkLatticeSwap's
// truth, Biot-Savart through the simulate package). The same-way split was
// judged by the lines' spacing against the deeper one's reported depth: 1.53
// m against 1.3 m below the ground parted the two cables, against 1.6 m below
// the sensors split them at every traverse, so the split exchange was
// refused and conductor 2 was said to end with no rise reported (fails
// before the fix with no datum and with 0.3, at seeds 1 and 2).
func TestSwapCloseCablesAnyDatum(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 72 traverses")
	}
	sensors := 0.3
	datums := []struct {
		name string
		ref  *float64
	}{{"ground", new(0.0)}, {"sensors", &sensors}, {"mean sensor height", nil}}
	for _, seed := range []int64{1, 2} {
		sc, err := simulate.Parse([]byte(latticeDroveScenarioAt(seed, 1.5)), "lattice-drove")
		if err != nil {
			t.Fatal(err)
		}
		for _, dt := range datums {
			t.Run(fmt.Sprintf("seed%d/%s", seed, dt.name), func(t *testing.T) {
				checkLatticeSwapDoc(t, simulatedDocRef(t, sc, dt.ref), 1.5)
			})
		}
	}
}

// TestCloseCablesSplitAnyDatum: Lattice Drove with cable B 0.8 m east of A,
// where the fits take the two as one conductor split in two at nearly every
// traverse and the route follows their sum (the split exchange refused:
// splitsResolved). The sum rises by the 18 A joining B (the simulated
// truth), once, within 3 sigma, and no cable is said to end, whatever the
// datum the depths are reported from (0.8 m against 1.6 m below the
// sensors: a split by either rule, so this passes before the fix too; it
// guards the bound sameWayNearSpacing against being raised past it).
func TestCloseCablesSplitAnyDatum(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 36 traverses")
	}
	sc, err := simulate.Parse([]byte(latticeDroveScenarioAt(1, 0.8)), "lattice-drove")
	if err != nil {
		t.Fatal(err)
	}
	sensors := 0.3
	for _, ref := range []*float64{new(0.0), &sensors, nil} {
		d := simulatedDocRef(t, sc, ref)
		rises := 0
		for _, f := range d.Findings {
			if strings.Contains(f.Message, "appears to end") {
				t.Errorf("datum %v: a cable said to end (both run the whole survey): %s", ref, f.Message)
			}
			if f.Kind != "current-step" && f.Kind != "current-change" || f.Severity == SeverityInfo || f.Conductor > 1 || len(f.Values) == 0 {
				continue
			}
			rises++
			if v := f.Values[0]; math.Abs(v.Value-18) > 3*v.Sigma {
				t.Errorf("datum %v: change %.4g ± %.2g A, beyond 3 sigma of the truth +18 A: %s", ref, v.Value, v.Sigma, f.Message)
			}
		}
		if rises != 1 {
			t.Errorf("datum %v: %d changes of current on conductor 1, want the one rise of 18 A", ref, rises)
		}
	}
}

// simulatedDocRef is simulatedDoc with depths reported below ref (nil: below
// the mean sensor height, as locate does with no datum).
func simulatedDocRef(t *testing.T, sc *simulate.Scenario, ref *float64) *Document {
	t.Helper()
	s, err := simulate.Simulate(sc)
	if err != nil {
		t.Fatal(err)
	}
	byKey, keys := groupProblems(s)
	var fits []Fit
	for _, k := range keys {
		p := byKey[k]
		res, err := inverse.FitLines(p, &inverse.Settings{ReferenceZ: ref})
		fits = append(fits, Fit{Key: k, Problem: p, Result: res, Err: err, MeasuredNoise: secondDiffNoise(p.Fields)})
	}
	d, err := Build(Document{}, fits, &BuildSettings{})
	if err != nil {
		t.Fatal(err)
	}
	return d
}

// TestCloseCablesTracksAnyDatum: Lattice Drove with cable B 1.0 m east of A
// (1.3 and 1.6 m below the sensors 0.3 m up) at seed 202, fitted with depths
// reported below the ground (ReferenceZ 0), below ReferenceZ 0.3 (the
// sensors' height, as --sensor-height 0.3 gives) and below the mean sensor
// height (no datum). The fits are the same; the datum only says where depths
// are counted from, so the further conductors (their numbers, groups and
// currents) and the findings (kind, severity, conductor, groups) must be the
// same too. What they are is the known limit at 1.0 m (DEVELOPERS.md,
// "Conductor weaker than a parallel cable"): this checks only that the datum
// does not change it. Before, the track gate (trackGate) took the depths
// reported: 1.5 m with the ground as datum against 1.95 m without, and with
// the ground as datum the lines of B before the change and of A after it
// made two further conductors, each said to end beside the change, where
// with no datum or 0.3 they made one (fails before the fix with ReferenceZ 0).
func TestCloseCablesTracksAnyDatum(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 36 traverses")
	}
	sc, err := simulate.Parse([]byte(latticeDroveScenarioAt(202, 1.0)), "lattice-drove")
	if err != nil {
		t.Fatal(err)
	}
	sensors := 0.3
	datums := []struct {
		name string
		ref  *float64
	}{{"mean sensor height", nil}, {"ground", new(0.0)}, {"sensors", &sensors}}
	var first string
	for i, dt := range datums {
		sig := tracksSignature(simulatedDocRef(t, sc, dt.ref))
		if i == 0 {
			first = sig
			t.Logf("datum %s:\n%s", dt.name, sig)
			continue
		}
		if sig != first {
			t.Errorf("datum %s: the further conductors and findings\n%s\nwith datum %s\n%s", dt.name, sig, datums[0].name, first)
		}
	}
}

// tracksSignature is what d says of the further conductors and the findings,
// without the depths: each further conductor's number and its stations'
// groups and currents, and each finding's kind, severity, conductor and groups.
func tracksSignature(d *Document) string {
	var b strings.Builder
	for _, tr := range d.Conductors {
		fmt.Fprintf(&b, "conductor %d:", tr.Number)
		for _, s := range tr.Route.Stations {
			fmt.Fprintf(&b, " %s %.4f", s.Key, s.Current)
		}
		b.WriteString("\n")
	}
	for _, f := range d.Findings {
		fmt.Fprintf(&b, "finding %s %s conductor %d %v\n", f.Kind, f.Severity, f.Conductor, f.Groups)
	}
	return b.String()
}

// TestSwapCloseCablesOppositeSign: Lattice Drove with cable B carrying its
// current the other way to cable A's (south): 12 A to y = 60 m and 30 A past
// it 1.5 m east of A, or 25 A and 8 A 3.0 m east, and B carrying 8 A south
// then 25 A north 2.0 m east (its current changing sign where 33 A joins
// it). README's rule: conductor 1 keeps to the one whose current changes,
// B. Simulated truth (Biot-Savart through the simulate package): conductor 1
// at B's place, one change on it of B's own change signed along increasing
// chainage (-18, +17 and +33 A; Kirchhoff's current law, from memory: the
// current joining at a point is the current flowing on past it less the
// current flowing in), within 3 sigma, the sign change worded as one, and
// neither cable said to end. A group that
// inverse's fit took as something else with no line at B's place (at 1.5 m,
// 5 m from the change, the two cables fitted as one unresolved pair at 9
// of 10 seeds) is not held to it. Before the fix no group whose two lines
// ran opposite was exchanged (Result.Opposed made it not swap-free) and
// the DC line had to keep its sense of current to be followed: at every
// seed conductor 1 went from A to B, with a false 50 A step at 1.5 m, a
// false 45 A step at 3.0 m and a false 5 A step at 2.0 m, and both cables
// were said to end (fails before the fix).
func TestSwapCloseCablesOppositeSign(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 60 traverses")
	}
	for _, tc := range []struct {
		seed                int64
		east, before, after float64
	}{{1, 1.5, -12, -30}, {2, 1.5, -12, -30}, {1, 3.0, -25, -8}, {2, 3.0, -25, -8}, {1, 2.0, -8, 25}} {
		t.Run(fmt.Sprintf("seed%d/%gm/%g_to_%gA", tc.seed, tc.east, tc.before, tc.after), func(t *testing.T) {
			sc, err := simulate.Parse([]byte(latticeDroveScenarioWith(tc.seed, tc.east, tc.before, tc.after)), "lattice-drove")
			if err != nil {
				t.Fatal(err)
			}
			d := simulatedDoc(t, sc)
			if d.Route == nil {
				t.Fatal("no route")
			}
			// hasB reports whether group key's fit has a line at B's place
			// (within placeTol across; conductor 1 lay within 0.03 m of
			// it at 3.0 m, 0.09 m at 2.0 m, where the fits resolve it).
			const placeTol = 0.5
			hasB := func(key string) bool {
				for _, g := range d.Groups {
					if g.Key != key {
						continue
					}
					for _, s := range g.Sources {
						if math.Abs(s.Point[0]-tc.east) <= placeTol {
							return true
						}
					}
				}
				return false
			}
			off := 0
			for _, s := range d.Route.Stations {
				if s.Used && math.Abs(s.Point[0]-tc.east) > placeTol {
					off++
					if hasB(s.Key) || off > 1 {
						t.Errorf("conductor 1 at %s lies at E %.2f m carrying %.4g A, want cable B (E %g m)", s.Key, s.Point[0], s.Current, tc.east)
					}
				}
			}
			want := tc.after - tc.before
			changes := 0
			for _, f := range d.Findings {
				if strings.Contains(f.Message, "appears to end") {
					t.Errorf("a cable said to end (both run the whole survey): %s", f.Message)
				}
				if f.Kind != "current-step" && f.Kind != "current-change" || f.Severity == SeverityInfo || f.Conductor > 1 || len(f.Values) == 0 {
					continue
				}
				changes++
				if v := f.Values[0]; math.Abs(v.Value-want) > 3*v.Sigma {
					t.Errorf("change %.4g ± %.2g A, beyond 3 sigma of the truth %+g A: %s", v.Value, v.Sigma, want, f.Message)
				}
				if sign := strings.HasPrefix(f.Message, "current changes sign"); sign != (tc.before*tc.after < 0) {
					t.Errorf("B goes from %g to %g A, the message says otherwise: %s", tc.before, tc.after, f.Message)
				}
			}
			if changes != 1 {
				t.Errorf("%d changes of current on conductor 1, want the one of %+g A", changes, want)
			}
		})
	}
}
