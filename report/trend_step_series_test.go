package report

import (
	"bytes"
	"encoding/json"
	"math"
	"strings"
	"testing"

	"golang.org/x/net/html"

	"undercurrent/inverse/simulate"
)

// stepTruth is the scenario's current step at the spur's coating defect
// (between T13 at 240 m and T14 at 260 m): the current of the segment
// past it less the one before, as simulated.
func stepTruth(sc *simulate.Scenario) float64 {
	for _, c := range sc.Conductors {
		if len(c.Currents) > 13 {
			return c.Currents[13] - c.Currents[12]
		}
	}
	return math.NaN()
}

// TestTrendStepSeriesAcrossPartialWalk: four walks of the Kestrel Moor spur
// (invented; testdata/scenarios/kestrel-moor-step.toml), the coating
// defect between T13 and T14 letting 0.3068 A go and growing by 0.05 A a
// survey; the third walk covers only 260-400 m, past the defect. Before,
// trend listed only consecutive pairs: nothing put the defect's size side
// by side survey by survey nor against survey 1, the intervals 2 -> 3 and
// 3 -> 4 said nothing about the step (the third walk never saw it), their
// ratios (about 0.96, the supply unchanged) stood without the doubt their
// pair comparisons carry, and the partial walk's caution was kept only
// against survey 1. Now the trend must have one step series there: each
// survey's size within 3 sigma of the scenario's, survey 3 "not covered",
// the growth against survey 1 within 3 sigma of the scenario's (+0.05,
// +0.15 A), and survey 4 compared with survey 2 across survey 3 (+0.10 A);
// both intervals' ratio doubt, the pairs' cautions, and the text, JSON and
// page saying so.
func TestTrendStepSeriesAcrossPartialWalk(t *testing.T) {
	if testing.Short() {
		t.Skip("fits 71 traverses")
	}
	var docs []*Document
	var truth []float64
	for k, edit := range []func(*simulate.Scenario){nil, leakFrom(13, 0.05), edits(leakFrom(13, 0.10), walkedFrom(t, 260, 8)), leakFrom(13, 0.15)} {
		d, sc := kestrelDoc(t, int64(21+k), edit)
		docs, truth = append(docs, d), append(truth, stepTruth(sc))
	}
	tr, err := CompareSeries(docs, []string{"a", "b", "c", "d"}, CompareSettings{})
	if err != nil {
		t.Fatal(err)
	}
	var ts *TrendStep
	for i := range tr.Steps {
		s := &tr.Steps[i]
		if s.Conductor == 1 && s.ChainageFrom <= 250 && 250 <= s.ChainageTo {
			ts = s
		} else {
			t.Errorf("a step series at %s, where the scenario has no defect: %+v", stepWhere(*s), s.Surveys)
		}
	}
	if ts == nil || len(ts.Surveys) != 4 {
		t.Fatalf("steps %+v, want one series at the defect (240-260 m) over 4 surveys", tr.Steps)
	}
	for k, v := range ts.Surveys {
		t.Logf("survey %d: %s; %s; %s (scenario %+.4f A)", k+1, stepCell(v), stepGrowthText(v), stepSinceText(v), truth[k])
		if k == 2 {
			if v.Status != "not-covered" || v.Step != nil {
				t.Errorf("survey 3 (walked 260-400 m): %+v, want not covered", v)
			}
			continue
		}
		if v.Status != "found" || v.Step == nil || math.Abs(*v.Step-truth[k]) > 3**v.StepSigma+0.003 {
			t.Fatalf("survey %d: %+v, want the step %.4f A (scenario)", k+1, v, truth[k])
		}
		if k == 0 {
			continue
		}
		want := math.Abs(truth[k]) - math.Abs(truth[0])
		if v.Growth == nil || math.Abs(*v.Growth-want) > 3**v.GrowthSigma || *v.GrowthZ < 3 {
			t.Errorf("survey %d: growth against survey 1 %v ± %v, scenario %+.4f A", k+1, v.Growth, v.GrowthSigma, want)
		}
	}
	// Survey 4 against survey 2, across survey 3.
	v4 := ts.Surveys[3]
	want := math.Abs(truth[3]) - math.Abs(truth[1])
	if v4.Since != 2 || v4.Change == nil || math.Abs(*v4.Change-want) > 3**v4.ChangeSigma {
		t.Errorf("survey 4 since %d: %v ± %v, want since survey 2, scenario %+.4f A", v4.Since, v4.Change, v4.ChangeSigma, want)
	}
	if v2 := ts.Surveys[1]; v2.Since != 1 {
		t.Errorf("survey 2 since %d, want 1", v2.Since)
	}
	// The intervals around the partial walk carry the ratio's doubt, and
	// the trend the pairs' cautions.
	for _, iv := range tr.Intervals[1:] {
		if iv.Ratio == nil || !strings.Contains(iv.RatioDoubt, "a change of loss before") {
			t.Errorf("interval %d -> %d: ratio %v, doubt %q, want the partial walk's doubt", iv.From, iv.To, iv.Ratio, iv.RatioDoubt)
		}
	}
	if iv := tr.Intervals[0]; iv.RatioDoubt != "" {
		t.Errorf("interval 1 -> 2 (both walked the whole spur): doubt %q", iv.RatioDoubt)
	}
	cautions := strings.Join(tr.Cautions, "\n")
	for _, w := range []string{"Survey 3 against survey 1: The two surveys walked different", "Survey 3 against survey 2: The two surveys walked different", "Survey 4 against survey 3: The two surveys walked different"} {
		if !strings.Contains(cautions, w) {
			t.Errorf("cautions lack %q:\n%s", w, cautions)
		}
	}
	// Text, JSON and page.
	var txt, js, page bytes.Buffer
	if err := WriteTrendText(&txt, tr); err != nil {
		t.Fatal(err)
	}
	for _, w := range []string{"Current steps per survey", "    3. not covered", "since 2 (", "across survey 3 (not covered)",
		"the step at chainage", "is not covered by survey 3", "survey 4 is compared with survey 2 there", "(the supply, or a change of loss before"} {
		if !strings.Contains(txt.String(), w) {
			t.Errorf("the text lacks %q:\n%s", w, txt.String())
		}
	}
	if err := WriteTrendJSON(&js, tr); err != nil {
		t.Fatal(err)
	}
	var back struct {
		Intervals []struct {
			Doubt string `json:"ratio_doubt"`
		} `json:"intervals"`
		Steps []struct {
			From    float64 `json:"chainage_from_m"`
			Surveys []struct {
				Status      string   `json:"status"`
				Step        *float64 `json:"step_a"`
				Growth      *float64 `json:"growth_a"`
				GrowthSigma *float64 `json:"growth_sigma_a"`
				Since       int      `json:"since_survey"`
				Change      *float64 `json:"change_since_a"`
			} `json:"surveys"`
		} `json:"steps"`
	}
	if err := json.Unmarshal(js.Bytes(), &back); err != nil || len(back.Steps) != 1 || len(back.Steps[0].Surveys) != 4 || len(back.Intervals) != 3 {
		t.Fatalf("JSON: %v, %+v", err, back)
	}
	if s := back.Steps[0].Surveys; s[2].Status != "not-covered" || s[3].Growth == nil || s[3].GrowthSigma == nil || s[3].Since != 2 || s[3].Change == nil || back.Intervals[1].Doubt == "" {
		t.Errorf("JSON steps %+v, intervals %+v", s, back.Intervals)
	}
	if err := WriteTrendHTML(&page, tr); err != nil {
		t.Fatal(err)
	}
	var steps string
	for _, n := range findAll(parsePage(t, page.Bytes()), func(n *html.Node) bool { return attr(n, "id") == "steps" }) {
		steps = nodeText(n)
	}
	for _, w := range []string{"Survey 4", "not covered", "since 1", "since 2", "across survey 3"} {
		if !strings.Contains(steps, w) {
			t.Errorf("the page's steps section lacks %q: %q", w, steps)
		}
	}
}
