package report

import (
	"fmt"
	"math"
)

// refZTolerance is how far apart, m, two fits' ReferenceZ may lie and still
// be taken as one ground datum (a micrometre: the same height computed two
// ways, not two grounds).
const refZTolerance = 1e-6

// checkFits refuses fits that Build cannot report as one survey (Build's
// doc): keys that do not name each group apart, a mix of DC and AC
// problems, fits whose depths are measured from different references, and
// a minimum cover to check with no way to know where the ground is. Fits
// with no Problem are left to Build's own check.
func checkFits(fits []Fit, bs *BuildSettings) error {
	if err := bs.check(); err != nil {
		return err
	}
	if err := checkKeys(fits); err != nil {
		return err
	}
	if err := checkSignal(fits); err != nil {
		return err
	}
	if err := checkResultsMatch(fits); err != nil {
		return err
	}
	below, err := checkReference(fits)
	if err != nil {
		return err
	}
	if err := checkLogHeights(fits, bs, below); err != nil {
		return err
	}
	if bs != nil && bs.MinCover > 0 && !below && !(bs.SensorHeight > 0) {
		return fmt.Errorf("report: MinCover %g m needs to know where the ground is: the fits' depths are below the sensors and BuildSettings.SensorHeight is 0 (unknown); give SensorHeight (the sensors' height above ground) or fit with inverse.Settings.ReferenceZ (the ground's height)", bs.MinCover)
	}
	return nil
}

// check refuses settings outside the ranges their documentation gives: a
// NaN or infinite value, or a negative one where only zero or more has a
// meaning. Before, Build took them: a NaN or infinite StepK dropped a 7 A
// earth fault without a word, a NaN MinCover or GroundSigma called every
// group's cover shallow, and only WriteJSON refused the NaN later.
func (bs *BuildSettings) check() error {
	if bs == nil {
		return nil
	}
	for _, f := range []struct {
		name     string
		v        float64
		positive bool // zero or more
		want     string
	}{
		{"SensorHeight", bs.SensorHeight, true, "a height in metres, 0 when not known"},
		{"MinCover", bs.MinCover, true, "a depth in metres, 0 for no check"},
		{"GroundSigma", bs.GroundSigma, true, "a length in metres"},
		{"StepK", bs.StepK, true, "a number of standard deviations, 0 for 3"},
		{"MinStep", bs.MinStep, false, "a fraction of the current, 0 for 0.02"},
		{"Noise", bs.Noise, true, "a noise in nT, 0 when the fits estimated it"},
		{"MeasuredNoise", bs.MeasuredNoise, true, "a noise in nT, 0 when not measured"},
	} {
		if math.IsNaN(f.v) || math.IsInf(f.v, 0) || f.positive && f.v < 0 {
			return fmt.Errorf("report: BuildSettings.%s is %v, want %s", f.name, f.v, f.want)
		}
	}
	return nil
}

// checkKeys refuses keys that are not unique: the route places each group
// by its key, so groups that share one would all take the first one's
// chainage. An empty key is allowed only for a single fit (a run that was
// not grouped).
func checkKeys(fits []Fit) error {
	if len(fits) == 1 {
		return nil
	}
	seen := make(map[string]int, len(fits))
	for i := range fits {
		k := fits[i].Key
		if k == "" {
			return fmt.Errorf("report: fit %d has no key: with %d fits each group needs a key of its own", i, len(fits))
		}
		if j, dup := seen[k]; dup {
			return fmt.Errorf("report: fits %d and %d share the key %q: each group needs a key of its own (prefix the walk or the day to keys repeated across logs)", j, i, k)
		}
		seen[k] = i
	}
	return nil
}

// fitName is how checkFits names fit i.
func fitName(fits []Fit, i int) string {
	if fits[i].Key == "" {
		return fmt.Sprintf("fit %d", i)
	}
	return fmt.Sprintf("fit %d (group %q)", i, fits[i].Key)
}

// checkSignal refuses a mix of DC problems (Fields) and AC ones (Phasors):
// a DC current is signed, an AC one an RMS with a phase, and read along
// one route they make false steps.
func checkSignal(fits []Fit) error {
	first := -1
	for i := range fits {
		if fits[i].Problem == nil {
			continue
		}
		if first < 0 {
			first = i
			continue
		}
		if a, b := fits[first].Problem.Phasors != nil, fits[i].Problem.Phasors != nil; a != b {
			return fmt.Errorf("report: %s is %s but %s is %s: DC and AC fits cannot share a report", fitName(fits, i), signalName(b), fitName(fits, first), signalName(a))
		}
	}
	return nil
}

// checkResultsMatch refuses a Result that was not fitted to its fit's
// Problem, as far as the result tells: residuals for another number of
// readings, or DC residuals (Residuals) for an AC problem (Phasors) or AC
// ones for a DC problem. Before, such pairs made a quietly wrong document:
// a result of 30 readings beside a problem of 10 was reported as the fit of
// those 10 with its profile dropped, and a DC result beside an AC problem
// gave the DC current a phase and called the group "no current found". A
// result with no residuals (made by hand) is not checked.
func checkResultsMatch(fits []Fit) error {
	for i := range fits {
		p, r := fits[i].Problem, fits[i].Result
		if p == nil || r == nil {
			continue
		}
		ac := p.Phasors != nil
		switch {
		case ac && r.Residuals != nil && r.ResidualPhasors == nil:
			return fmt.Errorf("report: %s has an AC problem (phasors) but a DC result (residuals of fields): pair each result with the problem it was fitted to", fitName(fits, i))
		case !ac && r.ResidualPhasors != nil && r.Residuals == nil:
			return fmt.Errorf("report: %s has a DC problem (fields) but an AC result (residuals of phasors): pair each result with the problem it was fitted to", fitName(fits, i))
		}
		n := len(r.Residuals)
		if ac {
			n = len(r.ResidualPhasors)
		}
		if (r.Residuals != nil || r.ResidualPhasors != nil) && n != len(p.Points) {
			return fmt.Errorf("report: %s has a result fitted to %d readings but a problem of %d: pair each result with the problem it was fitted to", fitName(fits, i), n, len(p.Points))
		}
	}
	return nil
}

func signalName(ac bool) string {
	if ac {
		return "AC (phasors)"
	}
	return "DC (fields)"
}

// checkReference refuses fits whose depths are measured from different
// references (inverse.Result.DepthReference: one below the ground at
// ReferenceZ, another below its sensors' mean height) or from different
// ReferenceZ heights: the document has one depth reference, and cover read
// from a depth below the sensors is overstated by their height. It reports
// whether the fits' depths are below the ground (ReferenceZ), from the
// results, or from Fit.Settings when no fit has a result.
func checkReference(fits []Fit) (belowGround bool, err error) {
	first := -1
	for i := range fits {
		r := fits[i].Result
		if r == nil {
			continue
		}
		if first < 0 {
			first = i
			continue
		}
		r0 := fits[first].Result
		if r.DepthReference != r0.DepthReference {
			return false, fmt.Errorf("report: %s has depths below %s but %s below %s: fit every group with the same depth reference", fitName(fits, i), depthRefName(r.DepthReference), fitName(fits, first), depthRefName(r0.DepthReference))
		}
		if r.DepthReference == "ReferenceZ" && !(math.Abs(r.ReferenceZ-r0.ReferenceZ) <= refZTolerance) {
			return false, fmt.Errorf("report: %s has depths below the ground at up = %g m but %s below the ground at %g m: fit every group with the same ReferenceZ", fitName(fits, i), r.ReferenceZ, fitName(fits, first), r0.ReferenceZ)
		}
	}
	if first >= 0 {
		return fits[first].Result.DepthReference == "ReferenceZ", nil
	}
	for i := range fits {
		if s := fits[i].Settings; s != nil && s.ReferenceZ != nil {
			return true, nil
		}
	}
	return false, nil
}

func depthRefName(ref string) string {
	switch ref {
	case "ReferenceZ":
		return "ReferenceZ (the ground)"
	case "":
		return "an unnamed reference (Result.DepthReference empty)"
	}
	return "the " + ref
}
