package report

import (
	"fmt"
	"math"
	"slices"
	"sort"
	"strings"

	"undercurrent/inverse"
)

// Logs whose sensors stood at different heights above the ground.
//
// A fit's depths are below its own sensors (their mean height, or their
// height over each line, groundAtLines), and cover = depth - H holds only
// for the H its sensors were carried at. Two crews' logs merged in one run
// (a 0.30 m staff one day, a 0.25 m staff the next) given one H read one
// crew's cover off by the difference, 5 cm, many sigmas, with no
// correction; the route's walksDepthDiffer only named it (found in
// review). Each fit now carries its log's height (Fit.SensorHeight), and
// Build refers the depths of a fit whose sensors stood at h to one datum,
// the plane H = BuildSettings.SensorHeight above the ground:
//
//	depth on the datum = depth below its own sensors - (h - H)
//
// so that cover = depth - H holds for every group, in the groups, the
// route's stations and findings, the least cover, the minimum cover
// checks and every file. The datum matters where the route joins
// traverses: a station walked in two logs takes the inverse-variance mean
// of their depths (route's combineRepeats), and walksDepthDiffer compares
// the walks' depths; on the datum both are on one footing, so the mean is
// the cover's and a difference the heights explain draws no caution.
// Depths of such groups are not below their own sensors: Group.SensorHeight
// names their height, and depth below them = depth + h - H.

// LogHeightNote starts the note on a fit whose depths toDatum referred to
// the datum.
const LogHeightNote = "depths are referred to the datum, a plane at the survey's sensor height above the ground, not to this log's own sensors"

// toDatum refers f's depths to the plane datum m above the ground when
// f's sensors stood at another height (f.SensorHeight, see above), and
// sets f.depthShift. f.Result is replaced by a copy with the depths of its
// lines, objects and pairs moved and a note; a result so moved already is
// left as it is.
func toDatum(f *Fit, datum float64) {
	f.depthShift = 0
	h := f.SensorHeight
	if !(h > 0) || math.Abs(h-datum) < 1e-9 {
		return
	}
	f.depthShift = h - datum
	res := f.Result
	if res == nil || res.DepthReference != "mean sensor height" {
		return
	}
	for _, n := range res.Notes {
		if strings.HasPrefix(n, LogHeightNote) {
			return
		}
	}
	cp := *res
	cp.Sources = slices.Clone(res.Sources)
	for i := range cp.Sources {
		cp.Sources[i].Depth -= f.depthShift
	}
	for _, ps := range []*[]inverse.PairEstimate{&cp.Pairs, &cp.Opposed, &cp.SameWay} {
		if *ps == nil {
			continue
		}
		*ps = slices.Clone(*ps)
		for i := range *ps {
			(*ps)[i].Depth -= f.depthShift
		}
	}
	cp.Notes = append(slices.Clone(res.Notes), fmt.Sprintf("%s: they stood %.2f m above the ground, the datum %.2f m, so the depths below them are %.2f m %s than those given; cover = depth - %.2f m holds", LogHeightNote, h, datum, math.Abs(f.depthShift), map[bool]string{true: "greater", false: "less"}[f.depthShift > 0], datum))
	f.Result = &cp
}

// logHeightNote is the document's note when some fits' depths were
// referred to the datum (toDatum): the logs' heights and what the depths
// are measured from. Empty when none were.
func logHeightNote(fits []Fit, datum float64) string {
	heights := map[string]float64{}
	moved := false
	for i := range fits {
		f := &fits[i]
		h := f.SensorHeight
		if !(h > 0) {
			h = datum
		}
		name := f.Log
		if name == "" {
			name = "group " + f.Key
		}
		heights[name] = h
		moved = moved || f.depthShift != 0
	}
	if !moved {
		return ""
	}
	names := make([]string, 0, len(heights))
	for n := range heights {
		names = append(names, n)
	}
	sort.Strings(names)
	var each []string
	for _, n := range names {
		each = append(each, fmt.Sprintf("%s %.2f m", n, heights[n]))
	}
	return fmt.Sprintf("the logs' sensors stood at different heights above the ground (%s): each group's cover is the depth below its own sensors less its own log's height, and the depths are all referred to one datum, the plane %.2f m above the ground (cover = depth - %.2f m for every group), so that the route averages and compares the depths of traverses from different logs on one footing; a group whose sensors stood at another height gives it (sensor_height_m), and its depth below them is its depth plus that height less %.2f m",
		strings.Join(each, ", "), datum, datum, datum)
}

// checkLogHeights refuses a fit's own sensor height (Fit.SensorHeight)
// that is not a finite height of zero or more, or that Build cannot use:
// depths below the ground (below, ReferenceZ), where no sensor height
// enters, or no BuildSettings.SensorHeight to serve as the datum.
func checkLogHeights(fits []Fit, bs *BuildSettings, below bool) error {
	for i := range fits {
		h := fits[i].SensorHeight
		switch {
		case h == 0:
			continue
		case math.IsNaN(h) || math.IsInf(h, 0) || h < 0:
			return fmt.Errorf("report: %s has SensorHeight %v, want a height in metres, 0 for BuildSettings.SensorHeight", fitName(fits, i), h)
		case below:
			return fmt.Errorf("report: %s has a SensorHeight of %g m but the depths are below the ground (ReferenceZ), where no sensor height enters", fitName(fits, i), h)
		case bs == nil || !(bs.SensorHeight > 0):
			return fmt.Errorf("report: %s has a SensorHeight of %g m but BuildSettings.SensorHeight, the datum its depths are referred to, is 0", fitName(fits, i), h)
		}
	}
	return nil
}
