package report

import (
	"strings"
)

// A valueKeyDef names one value a finding of some kind may carry: the
// phrase it has in Value.Name (for a crew, and free to be reworded), its
// unit, and the machine key results.json (findings[].values[].key),
// findings.csv (value_key, value_keys) and route.geojson (the property
// name) give it, which is not reworded: a consumer keys on it. A name
// holding "<walk>" is one value per walk of a route walked again (a
// repeat): the name is the phrase before it followed by the walk's name
// ("step second walk", "step day2.csv"), and the key has the walk's name
// in snake case in its place ("step_second_walk_a").
type valueKeyDef struct {
	Name, Unit, Key string
}

// walkMark stands for a walk's name in a valueKeyDef's Name and Key.
const walkMark = "<walk>"

// stepValueKeys are the values of a current step and a current change
// (findings of kind current-step and current-change: a change found by
// the same test, too small to be taken as a step).
var stepValueKeys = []valueKeyDef{
	{"step", "A", "step_a"},
	{"current before", "A", "current_before_a"},
	{"current after", "A", "current_after_a"},
	{"change between bracketing stations", "A", "change_between_bracketing_stations_a"},
	{"relative change", "%", "relative_change_pct"},
	{"minimum step", "%", "minimum_step_pct"},
	{"location (chainage)", "m", "location_chainage_m"},
	{"trend", "A/m", "trend_a_per_m"},
	{"largest part", "A", "largest_part_a"},
	{"between-station scatter", "A", "between_station_scatter_a"},
	{"current leaving", "A", "current_leaving_a"},
	{"angle to line current", "deg", "angle_to_line_current_deg"},
	{"phase before", "deg", "phase_before_deg"},
	{"phase after", "deg", "phase_after_deg"},
	{"phase turn", "deg", "phase_turn_deg"},
	{"depth before", "m", "depth_before_m"},
	{"current at its last station", "A", "current_at_its_last_station_a"},
	{"step <walk>", "A", "step_<walk>_a"},
	{"share <walk>", "%", "share_<walk>_pct"},
}

// depthValueKeys are a depth given as a finding's value: below ground
// where the ground is known, below the sensors where that is what was
// measured (the one or both).
var depthValueKeys = []valueKeyDef{
	{"depth below ground", "m", "depth_below_ground_m"},
	{"depth below sensors", "m", "depth_below_sensors_m"},
}

// bendValueKeys are the numbers of a station whose fitted dip departs
// from the slope of its neighbours' depths: a bend-near finding's, and
// those a poor fit or a weak source at that station carries in its place
// (a weak source names the station's current "current at the bend", as
// its own "current" is the weak line's).
var bendValueKeys = []valueKeyDef{
	{"fitted dip", "deg", "fitted_dip_deg"},
	{"slope of neighbouring depths", "deg", "slope_of_neighbouring_depths_deg"},
	{"depth", "m", "depth_m"},
	{"current", "A", "current_a"},
}

// findingValueKeys is the one table of the values each kind of finding
// carries and their keys, in the order README's table gives them
// (TestREADMEValueKeys checks that table against this one, and
// TestFindingValueKeysCover that every value the demo and the scenarios'
// findings carry is in it). A key, once given, keeps its meaning: a
// value whose meaning changes gets a new key, and a key dropped is a
// change of SchemaVersion.
var findingValueKeys = []struct {
	Kind string
	Keys []valueKeyDef
}{
	{"current-step", stepValueKeys},
	{"current-change", stepValueKeys},
	{"current-anomaly", []valueKeyDef{
		{"departure from neighbours", "A", "departure_from_neighbours_a"},
		{"current", "A", "current_a"},
		{"between-station scatter", "A", "between_station_scatter_a"},
	}},
	{"current-varied", []valueKeyDef{
		{"largest change over a traverse", "fraction of the mean current", "largest_change_over_a_traverse_fraction_of_the_mean_current"},
	}},
	{"shallow-cover", []valueKeyDef{
		{"cover", "m", "cover_m"},
		{"minimum cover", "m", "minimum_cover_m"},
		{"current", "A", "current_a"},
		{"azimuth", "deg", "azimuth_deg"},
		{"current times spacing", "A m", "current_times_spacing_a_m"},
		{"between-station scatter", "A", "between_station_scatter_a"},
	}},
	{"poor-fit", append([]valueKeyDef{
		{"reduced chi-square", "", "reduced_chi_square"},
		{"turn", "deg", "turn_deg"},
		{"rms residual", "nT", "rms_residual_nt"},
		{"rms signal", "nT", "rms_signal_nt"},
		{"change between bracketing stations", "A", "change_between_bracketing_stations_a"},
		{"step", "A", "step_a"},
	}, bendValueKeys...)},
	{"dipole-anomaly", append([]valueKeyDef{
		{"east", "m", "east_m"},
		{"north", "m", "north_m"},
		{"distance from conductor", "m", "distance_from_conductor_m"},
		{"moment", "A m^2", "moment_a_m2"},
		{"BIC lower by", "", "bic_lower_by"},
	}, depthValueKeys...)},
	{"surface-disturbance", []valueKeyDef{
		{"east", "m", "east_m"},
		{"north", "m", "north_m"},
		{"height above ground", "m", "height_above_ground_m"},
		{"moment", "A m^2", "moment_a_m2"},
		{"BIC lower by", "", "bic_lower_by"},
	}},
	{"weak-source", []valueKeyDef{
		{"current", "A", "current_a"},
		{"share of the conductor's current", "%", "share_of_the_conductor_s_current_pct"},
		{"dip", "deg", "dip_deg"},
		{"depth below ground", "m", "depth_below_ground_m"},
		{"depth below sensors", "m", "depth_below_sensors_m"},
		{"fitted dip", "deg", "fitted_dip_deg"},
		{"slope of neighbouring depths", "deg", "slope_of_neighbouring_depths_deg"},
		{"depth", "m", "depth_m"},
		{"current at the bend", "A", "current_at_the_bend_a"},
	}},
	{"bend-near", bendValueKeys},
	{"unsearched", []valueKeyDef{
		{"length", "m", "length_m"},
		{"change across", "A", "change_across_a"},
	}},
	{"attenuation", []valueKeyDef{
		{"attenuation", "%/km", "attenuation_pct_per_km"},
		{"attenuation", "dB/km", "attenuation_db_per_km"},
	}},
	{"walks-differ", []valueKeyDef{
		{"level <walk>", "A", "level_<walk>_a"},
		{"change <walk>", "A", "change_<walk>_a"},
		{"chi-square", "", "chi_square"},
		{"degrees of freedom", "", "degrees_of_freedom"},
		{"ratio <walk>", "", "ratio_<walk>"},
		{"change or ratio spread", "A", "change_or_ratio_spread_a"},
		{"step <walk>", "A", "step_<walk>_a"},
		{"phase offset <walk>", "deg", "phase_offset_<walk>_deg"},
		{"phase drift <walk>", "deg/s", "phase_drift_<walk>_deg_per_s"},
		{"phase drift <walk>", "deg/m", "phase_drift_<walk>_deg_per_m"},
		{"phase chi-square", "", "phase_chi_square"},
		{"phase degrees of freedom", "", "phase_degrees_of_freedom"},
		{"phase offset before <walk>", "deg", "phase_offset_before_<walk>_deg"},
		{"phase offset after <walk>", "deg", "phase_offset_after_<walk>_deg"},
		{"phase turn change <walk>", "deg", "phase_turn_change_<walk>_deg"},
	}},
	{"walks-depth-differ", []valueKeyDef{
		{"depth change <walk>", "m", "depth_change_<walk>_m"},
	}},
}

// lookupValueKey returns the key of value v of a finding of that kind
// from findingValueKeys; ok is false for a value the table does not name
// (a document from another version). An exact name wins over a per-walk
// one, and of per-walk names the longest phrase before the walk's
// ("phase offset before <walk>" over "phase offset <walk>").
func lookupValueKey(kind string, v Value) (key string, ok bool) {
	best := -1
	for _, k := range findingValueKeys {
		if k.Kind != kind {
			continue
		}
		for _, def := range k.Keys {
			if def.Unit != v.Unit {
				continue
			}
			if def.Name == v.Name {
				return def.Key, true
			}
			head, isWalk := strings.CutSuffix(def.Name, walkMark)
			if !isWalk || len(head) <= best || !strings.HasPrefix(v.Name, head) || len(v.Name) == len(head) {
				continue
			}
			best = len(head)
			key = strings.Replace(def.Key, walkMark, snakeCase(v.Name[len(head):]), 1)
		}
	}
	return key, best >= 0
}

// ValueKey returns the machine key of value v of a finding of that kind:
// findingValueKeys', or, for a value that table does not name, one made
// from v's name and unit as the keys of this version were ("cover" in
// "m" gives "cover_m"), so that a document read from another version
// still writes a key.
func ValueKey(kind string, v Value) string {
	if k, ok := lookupValueKey(kind, v); ok {
		return k
	}
	return phraseKey(v.Name, v.Unit)
}

// sigmaKey returns the GeoJSON property name of the sigma of the value
// keyed key with that unit: "_sigma" before the key's unit suffix
// ("location_chainage_sigma_m"), or after a key without one.
func sigmaKey(key, unit string) string {
	if u := unitSnake(unit); u != "" {
		if head, ok := strings.CutSuffix(key, "_"+u); ok {
			return head + "_sigma_" + u
		}
	}
	return key + "_sigma"
}

// phraseKey makes a key from a value's name and unit: both in snake case
// ("%" as "pct", "/" as "per", "^2" as "2"), the unit's last.
func phraseKey(name, unit string) string {
	k := snakeCase(name)
	if u := unitSnake(unit); u != "" {
		k += "_" + u
	}
	return k
}

// unitSnake is a unit in snake case, "/" read as "per" ("A/m" gives
// "a_per_m").
func unitSnake(unit string) string { return snakeCase(strings.ReplaceAll(unit, "/", " per ")) }

// snakeCase lowers s and joins its runs of letters and digits with "_"
// ("%" as "pct", "^2" and "^3" as "2" and "3").
func snakeCase(s string) string {
	s = strings.NewReplacer("%", "pct", "^2", "2", "^3", "3").Replace(strings.ToLower(s))
	var b strings.Builder
	under := false
	for _, r := range s {
		if r >= 'a' && r <= 'z' || r >= '0' && r <= '9' {
			if under && b.Len() > 0 {
				b.WriteByte('_')
			}
			b.WriteRune(r)
			under = false
		} else {
			under = true
		}
	}
	return b.String()
}
