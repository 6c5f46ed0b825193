package report

import (
	"fmt"
	"math"
	"sort"
	"strings"
)

// The trend's per-step series: each current step (a current-step finding,
// current leaving the conductor at a defect or joining it) followed over
// the surveys, its size in each survey side by side, its growth against
// the first survey and its change since the survey before that walked
// both sides of it. Every number is one of compare's: a step's size is
// the survey's own finding, its growth against survey 1 is Compare(1,
// k)'s step pairing (the size beyond the supply's factor, |NEW| - level *
// |OLD|), and its change since the survey before is Compare(j, k)'s, j the
// latest earlier survey that walked both sides of it: a survey in
// between that walked only part of the route (its stations on one side
// of the step alone) is "not covered" there and is stepped over, so a
// partial walk in the middle of a series does not hide the growth across
// it.

// TrendStep is one current step followed over the surveys: on conductor
// Conductor (survey 1's numbering), its bracket on survey 1's chainage
// (the first survey that found it, its chainage taken onto survey 1's),
// and its value in each survey (Surveys[k] is survey k+1's).
type TrendStep struct {
	Conductor    int              `json:"conductor"`
	ChainageFrom float64          `json:"chainage_from_m"`
	ChainageTo   float64          `json:"chainage_to_m"`
	Surveys      []TrendStepValue `json:"surveys"`
}

// TrendStepValue is a step in one survey. Status is "found" (the survey's
// locate found it: Step and StepSigma, signed, a loss negative, and Groups
// its bracket's stations), "none" (the survey walked both sides of it and
// found no step there) or "not-covered" (the survey has no used station
// on one side of it, or did not match the conductor: whether it was there
// is not known). Growth is its size against survey 1's, compare's
// |step| - level * |survey 1's step| (level: the supply's factor between
// the two, where it changed), with its sigma and z; absent for survey 1
// and where either has no step. Since is the latest earlier survey that
// walked both sides of it (the one before, or further back where that one
// did not cover it), SinceStatus compare's status for the step between
// the two (grown, shrunk, unchanged, new, gone) and Change, ChangeSigma,
// ChangeZ compare's change of its size between them.
type TrendStepValue struct {
	Survey      int      `json:"survey"`
	Status      string   `json:"status"`
	Groups      []string `json:"groups,omitempty"`
	Step        *float64 `json:"step_a,omitempty"`
	StepSigma   *float64 `json:"step_sigma_a,omitempty"`
	Growth      *float64 `json:"growth_a,omitempty"`
	GrowthSigma *float64 `json:"growth_sigma_a,omitempty"`
	GrowthZ     *float64 `json:"growth_z,omitempty"`
	Since       int      `json:"since_survey,omitempty"`
	SinceStatus string   `json:"since_status,omitempty"`
	Change      *float64 `json:"change_since_a,omitempty"`
	ChangeSigma *float64 `json:"change_since_sigma_a,omitempty"`
	ChangeZ     *float64 `json:"change_since_z,omitempty"`
}

// Step statuses in a trend's series.
const (
	stepFound      = "found"
	stepNone       = "none"
	stepNotCovered = "not-covered"
)

// ccOf returns c's comparison of OLD's conductor old, nil when NEW has no
// partner for it.
func ccOf(c *Comparison, old int) *ConductorComparison {
	for i := range c.Conductors {
		if c.Conductors[i].Old == old {
			return &c.Conductors[i]
		}
	}
	return nil
}

// stepSeries fills t.Steps from the comparisons with the first survey
// (t.pairs) and, for the change since the survey before, between
// consecutive surveys (t.steps) or, across a survey that did not cover a
// step, between the two around it (pair makes those, once each).
func (t *Trend) stepSeries(docs []*Document, s CompareSettings, pair func(a, b int) (*Comparison, error)) {
	n := len(docs)
	var series []*TrendStep
	newSeries := func(cond int, from, to float64) *TrendStep {
		ts := &TrendStep{Conductor: cond, ChainageFrom: from, ChainageTo: to, Surveys: make([]TrendStepValue, n)}
		for k := range ts.Surveys {
			ts.Surveys[k].Survey = k + 1
		}
		series = append(series, ts)
		return ts
	}
	found := func(v *TrendStepValue, step, sigma float64, groups []string) {
		v.Status, v.Step, v.StepSigma, v.Groups = stepFound, ptr(step), ptr(sigma), groups
	}
	// Survey 1's steps, each conductor's.
	for _, nr := range allRoutes(docs[0]) {
		oc := nr.n
		if oc == 1 {
			oc = 0
		}
		for _, f := range stepsOf(docs[0], oc, func(x float64) float64 { return x }) {
			found(&newSeries(nr.n, f.from, f.to).Surveys[0], f.step, f.sg, f.groups)
		}
	}
	first := len(series)
	// Each later survey against the first: the pairing of survey 1's
	// steps, and its own steps without a partner there.
	for k := 1; k < n; k++ {
		for _, sp := range t.pairs[k].Steps {
			if sp.OldStep != nil {
				var ts *TrendStep
				for _, e := range series[:first] {
					if e.Conductor == sp.Conductor && *e.Surveys[0].Step == *sp.OldStep {
						ts = e
					}
				}
				if ts == nil {
					continue
				}
				v := &ts.Surveys[k]
				switch {
				case sp.Status == "not-covered-by-new":
					v.Status = stepNotCovered
				case sp.NewStep == nil:
					v.Status = stepNone
				default:
					found(v, *sp.NewStep, *sp.NewStepSigma, sp.NewGroups)
					if sp.Change != nil {
						v.Growth, v.GrowthSigma, v.GrowthZ = sp.Change, sp.ChangeSigma, sp.Z
					}
				}
				continue
			}
			// A step of survey k's without a partner in survey 1: the
			// same as one a survey between found, where their brackets
			// meet (within --tolerance).
			var ts *TrendStep
			bd := math.Inf(1)
			for _, e := range series[first:] {
				if e.Conductor != sp.Conductor || e.Surveys[k].Status != "" {
					continue
				}
				gap := math.Max(0, math.Max(e.ChainageFrom-sp.ChainageTo, sp.ChainageFrom-e.ChainageTo))
				if gap <= s.Tolerance && gap < bd {
					ts, bd = e, gap
				}
			}
			if ts == nil {
				ts = newSeries(sp.Conductor, sp.ChainageFrom, sp.ChainageTo)
				ts.Surveys[0].Status = stepNone
				if sp.Status == "not-covered-by-old" {
					ts.Surveys[0].Status = stepNotCovered
				}
			}
			found(&ts.Surveys[k], *sp.NewStep, *sp.NewStepSigma, sp.NewGroups)
		}
	}
	// The surveys not yet placed: whether each walked both sides.
	for _, ts := range series {
		for k := 1; k < n; k++ {
			v := &ts.Surveys[k]
			if v.Status != "" {
				continue
			}
			v.Status = stepNotCovered
			if cc := ccOf(t.pairs[k], ts.Conductor); cc != nil && covers(cc.newOn, ts.ChainageFrom, ts.ChainageTo, s.Tolerance) {
				v.Status = stepNone
			}
		}
	}
	// The change since the latest earlier survey that walked both sides.
	for _, ts := range series {
		for k := 1; k < n; k++ {
			v := &ts.Surveys[k]
			if v.Status == stepNotCovered {
				continue
			}
			j := k - 1
			for j >= 0 && ts.Surveys[j].Status == stepNotCovered {
				j--
			}
			if j < 0 {
				continue
			}
			w := &ts.Surveys[j]
			if w.Status == stepNone && v.Status == stepNone {
				continue
			}
			c := t.steps[k]
			if j < k-1 {
				var err error
				if c, err = pair(j, k); err != nil {
					t.Notes = append(t.Notes, fmt.Sprintf("the step at %.1f-%.1f m of survey 1's chainage: survey %d is not compared with survey %d across the surveys between that did not cover it: %v", ts.ChainageFrom, ts.ChainageTo, k+1, j+1, err))
					continue
				}
			}
			for _, sp := range c.Steps {
				// The pairing of this step: survey j's value as OLD's,
				// survey k's as NEW's (compare may have paired either
				// with another step: then none is this one's).
				if !sameStep(w.Step, sp.OldStep) || !sameStep(v.Step, sp.NewStep) {
					continue
				}
				v.Since, v.SinceStatus = j+1, sp.Status
				if sp.Change != nil {
					v.Change, v.ChangeSigma, v.ChangeZ = sp.Change, sp.ChangeSigma, sp.Z
				}
			}
		}
	}
	sort.SliceStable(series, func(a, b int) bool {
		if series[a].Conductor != series[b].Conductor {
			return series[a].Conductor < series[b].Conductor
		}
		return series[a].ChainageFrom < series[b].ChainageFrom
	})
	t.Steps = []TrendStep{}
	for _, ts := range series {
		t.Steps = append(t.Steps, *ts)
	}
}

// sameStep reports whether a and b are one step's value (both absent, or
// the same finding's).
func sameStep(a, b *float64) bool {
	if a == nil || b == nil {
		return a == nil && b == nil
	}
	return *a == *b
}

// stepWhere names a step of the series for a line of text: its conductor
// (beyond the first) and its bracket on survey 1's chainage.
func stepWhere(ts TrendStep) string {
	who := ""
	if ts.Conductor != 1 {
		who = fmt.Sprintf("conductor %d, ", ts.Conductor)
	}
	return fmt.Sprintf("%schainage %.1f-%.1f m", who, ts.ChainageFrom, ts.ChainageTo)
}

// stepCell words one survey's value of a step: its size ± sigma, "none"
// or "not covered".
func stepCell(v TrendStepValue) string {
	switch v.Status {
	case stepFound:
		return signed(pm(*v.Step, *v.StepSigma)) + " A"
	case stepNone:
		return "none found"
	}
	return "not covered"
}

// stepGrowthText words a step's growth against survey 1 ("" where none),
// with compare's status where survey 1 is the survey before.
func stepGrowthText(v TrendStepValue) string {
	if v.Growth == nil {
		return ""
	}
	status := ""
	if v.Since == 1 {
		status = ", " + v.SinceStatus
	}
	return fmt.Sprintf("%s A since 1 (%.1f sigma%s)", signed(pm(*v.Growth, *v.GrowthSigma)), *v.GrowthZ, status)
}

// stepSinceText words a step's change since the survey it is compared
// with, naming the surveys stepped over ("" where none).
func stepSinceText(v TrendStepValue) string {
	if v.Since == 0 || v.Since == 1 && v.Growth != nil {
		// None, or the growth against survey 1 says it.
		return ""
	}
	across := ""
	if v.Since < v.Survey-1 {
		var skipped []string
		for j := v.Since + 1; j < v.Survey; j++ {
			skipped = append(skipped, fmt.Sprint(j))
		}
		across = ", across survey " + strings.Join(skipped, ", ") + " (not covered)"
	}
	if v.Change == nil {
		return fmt.Sprintf("%s since %d%s", v.SinceStatus, v.Since, across)
	}
	return fmt.Sprintf("%s A since %d (%.1f sigma, %s)%s", signed(pm(*v.Change, *v.ChangeSigma)), v.Since, *v.ChangeZ, v.SinceStatus, across)
}

// notCoveredIn words the steps that survey k (numbered from 1) did not
// walk both sides of, where another survey did, and which surveys are
// compared there instead: one line each, for the interval ending at k.
func notCoveredIn(t *Trend, k int) []string {
	var out []string
	for _, ts := range t.Steps {
		if ts.Surveys[k-1].Status != stepNotCovered {
			continue
		}
		var covered []int
		for _, v := range ts.Surveys {
			if v.Status != stepNotCovered {
				covered = append(covered, v.Survey)
			}
		}
		if len(covered) == 0 {
			continue
		}
		msg := fmt.Sprintf("the step at %s is not covered by survey %d (no used station on one side of it), so whether it changed is not known from it", stepWhere(ts), k)
		for _, v := range ts.Surveys[k:] {
			if v.Status != stepNotCovered && v.Since > 0 && v.Since < k {
				msg += fmt.Sprintf("; survey %d is compared with survey %d there: %s", v.Survey, v.Since, stepSinceText(v))
				break
			}
		}
		out = append(out, msg)
	}
	return out
}
