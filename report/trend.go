package report

import (
	"encoding/json"
	"errors"
	"fmt"
	"html/template"
	"io"
	"math"
	"regexp"
	"sort"
	"strconv"
	"strings"
)

// A trend over three or more surveys of one route (undercurrent trend R1
// R2 R3 ...): each survey is placed on the first's chainage frame by
// Compare(first, survey) (its station matching, its geodetic reprojection,
// its turned DC sign), so that one table gives every station's current and
// cover in each survey; the supply ratio of each survey to the first is
// that comparison's ratio level; and what changed between consecutive
// surveys is Compare(previous, next)'s list of changes, its chainages taken
// onto the first survey's frame.

// Trend is the result of CompareSeries. Its JSON keys are stable: new keys
// may be added, none renamed.
type Trend struct {
	// Cautions are the safety cautions, first as in results.json.
	Cautions []string `json:"cautions"`
	Kind     string   `json:"kind"` // "survey-trend"
	Mode     string   `json:"mode"`
	// DepthQuantity is "cover" when every comparison with the first gives
	// the cover, "depth" when each gives the depth below the same
	// reference, "" when they are not one quantity (then no depth is
	// given).
	DepthQuantity     string           `json:"depth_quantity"`
	MinCurrentChangeA float64          `json:"min_current_change_a,omitempty"`
	MinCoverChangeM   float64          `json:"min_cover_change_m"`
	Sigmas            float64          `json:"sigmas"`
	ToleranceM        float64          `json:"tolerance_m"`
	MinCoverM         *float64         `json:"min_cover_m,omitempty"`
	Notes             []string         `json:"notes,omitempty"`
	Surveys           []TrendSurvey    `json:"surveys"`
	Conductors        []TrendConductor `json:"conductors"`
	Intervals         []TrendInterval  `json:"intervals"`
	Changes           []TrendChange    `json:"changes"`
	// Steps follows each current step found on a conductor over the
	// surveys (see TrendStep): its size in each survey, its growth
	// against survey 1 and its change since the survey before that
	// walked both sides of it.
	Steps []TrendStep         `json:"steps"`
	pairs []*Comparison       // Compare(first, k), k >= 1
	steps []*Comparison       // Compare(k-1, k)
	maps  []map[int]chainMapF // per survey: its conductor -> first's chainage
}

type chainMapF struct {
	first int // the first survey's conductor number
	f     func(float64) float64
}

// TrendSurvey is one survey of the series, numbered from 1 in the order
// given. SupplyRatio is its current over the first's on conductor 1 (the
// ratio level of Compare(first, it); 1 for the first), SupplyChanged
// whether that differs from 1 beyond the thresholds.
type TrendSurvey struct {
	Survey           int      `json:"survey"`
	Name             string   `json:"name"`
	Matched          int      `json:"matched_stations"`
	SupplyRatio      *float64 `json:"supply_ratio,omitempty"`
	SupplyRatioSigma *float64 `json:"supply_ratio_sigma,omitempty"`
	SupplyChanged    bool     `json:"supply_changed"`
	// SupplyDoubt is set when this survey and the first walked different
	// stretches and the ratio changed: the change may be a loss outside
	// the stretch both walked (PartialCoverage.LevelDoubt, NEW this
	// survey and OLD the first), not the supply.
	SupplyDoubt string `json:"supply_doubt,omitempty"`
}

// TrendConductor is one conductor of the first survey, its number in each
// survey (0 where none matched it) and its used stations.
type TrendConductor struct {
	Conductor int            `json:"conductor"`
	InSurvey  []int          `json:"conductor_in_survey"`
	Stations  []TrendStation `json:"stations"`
}

// TrendStation is one used station of the first survey and its value in
// each survey (surveys[k] is survey k+1's; its key empty where no station
// of that survey matched it).
type TrendStation struct {
	Key      string       `json:"key"`
	Chainage float64      `json:"chainage_m"`
	Surveys  []TrendValue `json:"surveys"`
}

// TrendValue is a station's current and cover (or depth, as the trend's
// depth_quantity) in one survey, one sigma each.
type TrendValue struct {
	Survey       int      `json:"survey"`
	Key          string   `json:"key,omitempty"`
	Current      *float64 `json:"current_a,omitempty"`
	CurrentSigma *float64 `json:"current_sigma_a,omitempty"`
	Cover        *float64 `json:"cover_m,omitempty"`
	CoverSigma   *float64 `json:"cover_sigma_m,omitempty"`
}

// TrendInterval is one pair of consecutive surveys: the ratio of the
// later to the earlier on conductor 1 and how many changes were flagged.
// RatioDoubt is set when the two walked different stretches and the
// ratio differs from 1 (beyond --sigmas, or beyond the thresholds): it
// may be a change of loss outside the stretch both walked rather than
// the supply (PartialCoverage.LevelDoubt, NEW the later survey and OLD
// the earlier).
type TrendInterval struct {
	From       int      `json:"from_survey"`
	To         int      `json:"to_survey"`
	Ratio      *float64 `json:"ratio,omitempty"`
	RatioSigma *float64 `json:"ratio_sigma,omitempty"`
	RatioDoubt string   `json:"ratio_doubt,omitempty"`
	Changes    int      `json:"changes"`
}

// TrendChange is a change between consecutive surveys From and To, as
// compare lists it (its message in From's chainage, as compare words it),
// Conductor and ChainageM taken onto the first survey's numbering and
// chainage.
type TrendChange struct {
	From int `json:"from_survey"`
	To   int `json:"to_survey"`
	Change
}

// CompareSeries compares three or more result documents of one route,
// in the order given (oldest first). It refuses what Compare refuses for
// any consecutive pair or any survey against the first.
func CompareSeries(docs []*Document, names []string, s CompareSettings) (*Trend, error) {
	if len(docs) < 2 || len(docs) != len(names) {
		return nil, fmt.Errorf("report: CompareSeries: %d documents and %d names, want two or more of each", len(docs), len(names))
	}
	s = s.filled()
	t := &Trend{Cautions: append([]string(nil), Cautions...), Kind: "survey-trend", Mode: docs[0].Signal.Mode,
		MinCurrentChangeA: s.MinCurrentChange, MinCoverChangeM: s.MinCoverChange, Sigmas: s.Sigmas, ToleranceM: s.Tolerance,
		Surveys: []TrendSurvey{}, Conductors: []TrendConductor{}, Intervals: []TrendInterval{}, Changes: []TrendChange{}, Steps: []TrendStep{}}
	one := 1.0
	t.Surveys = append(t.Surveys, TrendSurvey{Survey: 1, Name: names[0], Matched: usedStations(docs[0]), SupplyRatio: &one, SupplyRatioSigma: ptr(0)})
	t.pairs = []*Comparison{nil}
	t.maps = []map[int]chainMapF{nil}
	quantities := map[string]bool{}
	for k := 1; k < len(docs); k++ {
		c, err := Compare(docs[0], docs[k], names[0], names[k], s)
		if err != nil {
			return nil, surveyRefusal(err, 1, k+1)
		}
		t.pairs = append(t.pairs, c)
		quantities[c.DepthQuantity] = true
		sv := TrendSurvey{Survey: k + 1, Name: names[k], Matched: c.Matched}
		if len(c.Conductors) > 0 && c.Conductors[0].Ratio != nil {
			r := c.Conductors[0].Ratio
			sv.SupplyRatio, sv.SupplyRatioSigma, sv.SupplyChanged = ptr(r.Level), ptr(r.LevelSigma), r.LevelApplied
			if p := c.Conductors[0].Partial; p != nil && r.LevelApplied {
				sv.SupplyDoubt = p.LevelDoubt
			}
		}
		t.Surveys = append(t.Surveys, sv)
		for _, n := range c.Notes {
			t.Notes = append(t.Notes, fmt.Sprintf("survey %d against survey 1: %s", k+1, n))
		}
		// The comparison's own cautions (surveys that walked different
		// stretches) beyond the safety cautions.
		for _, ca := range c.Cautions[min(len(Cautions), len(c.Cautions)):] {
			t.Cautions = append(t.Cautions, fmt.Sprintf("Survey %d against survey 1: %s", k+1, ca))
		}
		// Survey k's chainage along each of its conductors to the
		// first's, by the matched stations.
		m := map[int]chainMapF{}
		for _, cc := range c.Conductors {
			var cps []chainPair
			for _, sc := range cc.Stations {
				cps = append(cps, chainPair{sc.NewChainage, sc.Chainage})
			}
			m[cc.New] = chainMapF{first: cc.Old, f: chainMap(cps)}
		}
		t.maps = append(t.maps, m)
		if c.MinCoverM != nil {
			t.MinCoverM = c.MinCoverM
		}
	}
	switch {
	case len(quantities) == 1 && quantities["cover"]:
		t.DepthQuantity = "cover"
	case len(quantities) == 1 && quantities["depth"]:
		t.DepthQuantity = "depth"
	case quantities[""]:
	default:
		// Some give the cover and some the depth: the depth below the
		// same reference, where every survey has one.
		t.DepthQuantity = "depth"
		for _, d := range docs[1:] {
			if d.DepthReference.Kind != docs[0].DepthReference.Kind {
				t.DepthQuantity = ""
			}
		}
	}
	if t.DepthQuantity == "" {
		t.Notes = append(t.Notes, "depths not given: the surveys' depths are not measured below one reference and not all give the cover (locate --sensor-height or --reference-z on every survey)")
	}
	t.table(docs)
	// Consecutive surveys.
	t.steps = []*Comparison{nil}
	for k := 1; k < len(docs); k++ {
		var c *Comparison
		if k == 1 {
			c = t.pairs[1]
		} else {
			var err error
			if c, err = Compare(docs[k-1], docs[k], names[k-1], names[k], s); err != nil {
				return nil, surveyRefusal(err, k, k+1)
			}
		}
		t.steps = append(t.steps, c)
		iv := TrendInterval{From: k, To: k + 1, Changes: len(c.Changes)}
		if len(c.Conductors) > 0 && c.Conductors[0].Ratio != nil {
			r := c.Conductors[0].Ratio
			iv.Ratio, iv.RatioSigma = ptr(r.Level), ptr(r.LevelSigma)
			if p := c.Conductors[0].Partial; p != nil && (r.LevelApplied || math.Abs(r.Level-1) > s.Sigmas*r.LevelSigma) {
				iv.RatioDoubt = p.LevelDoubt
				if cm, ok := t.maps[k-1][1]; ok && k > 1 {
					iv.RatioDoubt = doubtOnFirst(p.LevelDoubt, cm.f)
				}
			}
		}
		t.Intervals = append(t.Intervals, iv)
		if k > 1 {
			// The pair's own cautions (surveys that walked different
			// stretches), as against survey 1 above.
			for _, ca := range c.Cautions[min(len(Cautions), len(c.Cautions)):] {
				t.Cautions = append(t.Cautions, fmt.Sprintf("Survey %d against survey %d: %s", k+1, k, ca))
			}
		}
		for _, ch := range c.Changes {
			tc := TrendChange{From: k, To: k + 1, Change: ch}
			if k > 1 {
				// Survey k's (OLD here) conductor and chainage onto the
				// first's.
				if cm, ok := t.maps[k-1][max(ch.Conductor, 1)]; ok {
					if ch.Conductor > 0 {
						tc.Conductor = cm.first
					}
					if ch.Chainage != nil {
						tc.Chainage = ptr(cm.f(*ch.Chainage))
					}
					if ch.ChainageFrom != nil && ch.ChainageTo != nil {
						a, b := cm.f(*ch.ChainageFrom), cm.f(*ch.ChainageTo)
						tc.ChainageFrom, tc.ChainageTo = ptr(math.Min(a, b)), ptr(math.Max(a, b))
					}
				} else {
					// No frame to take it onto: the message has it.
					tc.Chainage, tc.ChainageFrom, tc.ChainageTo = nil, nil, nil
				}
			}
			t.Changes = append(t.Changes, tc)
		}
	}
	// Each current step over the surveys; across a survey that did not
	// cover a step, the surveys around it compared (once each pair).
	across := map[[2]int]*Comparison{}
	t.stepSeries(docs, s, func(a, b int) (*Comparison, error) {
		if c, ok := across[[2]int{a, b}]; ok {
			return c, nil
		}
		c, err := Compare(docs[a], docs[b], names[a], names[b], s)
		if err != nil {
			return nil, surveyRefusal(err, a+1, b+1)
		}
		across[[2]int{a, b}] = c
		return c, nil
	})
	return t, nil
}

// doubtAt finds the chainages in a ratio's doubt ("... first station at
// 200.0 m").
var doubtAt = regexp.MustCompile(`station at (-?[0-9]+\.[0-9]) m`)

// doubtOnFirst adds survey 1's chainage to each chainage of a ratio's
// doubt worded on another survey's (f maps that survey's chainage to
// survey 1's), where the two differ.
func doubtOnFirst(doubt string, f func(float64) float64) string {
	return doubtAt.ReplaceAllStringFunc(doubt, func(m string) string {
		x, err := strconv.ParseFloat(doubtAt.FindStringSubmatch(m)[1], 64)
		if err != nil {
			return m
		}
		if y := f(x); math.Abs(y-x) >= 0.05 {
			return fmt.Sprintf("%s (%.1f m on survey 1's chainage)", m, y)
		}
		return m
	})
}

// surveyRefusal names the survey numbers in a refusal of Compare between
// survey a (OLD) and survey b (NEW) of the series.
func surveyRefusal(err error, a, b int) error {
	var ce *CompareError
	if errors.As(err, &ce) {
		return &CompareError{Msg: fmt.Sprintf("survey %d (OLD) against survey %d (NEW): %s", a, b, ce.Msg)}
	}
	return err
}

func usedStations(d *Document) int {
	n := 0
	for _, r := range allRoutes(d) {
		for _, s := range r.r.Stations {
			if s.Used {
				n++
			}
		}
	}
	return n
}

type numberedRoute struct {
	n int
	r *Route
}

// allRoutes are d's route (conductor 1) and its further conductors'.
func allRoutes(d *Document) []numberedRoute {
	var out []numberedRoute
	if d.Route != nil {
		out = append(out, numberedRoute{1, d.Route})
	}
	for i := range d.Conductors {
		out = append(out, numberedRoute{d.Conductors[i].Number, &d.Conductors[i].Route})
	}
	return out
}

// chainMap maps along cps (NEW's chainage to OLD's, any order): linear
// between them, by the nearest pair's offset beyond them.
func chainMap(cps []chainPair) func(float64) float64 {
	cps = append([]chainPair(nil), cps...)
	sort.Slice(cps, func(a, b int) bool { return cps[a].n < cps[b].n })
	return func(x float64) float64 {
		if len(cps) == 0 {
			return x
		}
		if len(cps) == 1 || x <= cps[0].n {
			return cps[0].o + (x-cps[0].n)*dirOf(cps)
		}
		for i := 1; i < len(cps); i++ {
			if x <= cps[i].n {
				a, b := cps[i-1], cps[i]
				if b.n == a.n {
					return a.o
				}
				return a.o + (x-a.n)*(b.o-a.o)/(b.n-a.n)
			}
		}
		l := cps[len(cps)-1]
		return l.o + (x-l.n)*dirOf(cps)
	}
}

// table fills t.Conductors: the first survey's used stations and each
// survey's value at them.
func (t *Trend) table(docs []*Document) {
	depthOf := func(st *Station) (*float64, *float64) {
		switch t.DepthQuantity {
		case "cover":
			if st.Cover != nil && st.CoverSigma != nil {
				return ptr(*st.Cover), ptr(*st.CoverSigma)
			}
		case "depth":
			return ptr(st.Depth), ptr(st.DepthSigma)
		}
		return nil, nil
	}
	stationsOf := func(d *Document, n int) map[string]*Station {
		m := map[string]*Station{}
		for _, r := range allRoutes(d) {
			if r.n == n {
				for i := range r.r.Stations {
					if r.r.Stations[i].Used {
						m[r.r.Stations[i].Key] = &r.r.Stations[i]
					}
				}
			}
		}
		return m
	}
	for _, nr := range allRoutes(docs[0]) {
		tc := TrendConductor{Conductor: nr.n, InSurvey: make([]int, len(docs)), Stations: []TrendStation{}}
		tc.InSurvey[0] = nr.n
		// Per later survey: its comparison's stations of this conductor.
		matched := make([]map[string]StationChange, len(docs))
		newStations := make([]map[string]*Station, len(docs))
		for k := 1; k < len(docs); k++ {
			for _, cc := range t.pairs[k].Conductors {
				if cc.Old != nr.n {
					continue
				}
				tc.InSurvey[k] = cc.New
				matched[k] = map[string]StationChange{}
				for _, sc := range cc.Stations {
					matched[k][sc.OldKey] = sc
				}
				newStations[k] = stationsOf(docs[k], cc.New)
			}
		}
		for i := range nr.r.Stations {
			st := &nr.r.Stations[i]
			if !st.Used {
				continue
			}
			row := TrendStation{Key: st.Key, Chainage: st.Chainage}
			v := TrendValue{Survey: 1, Key: st.Key, Current: ptr(st.Current), CurrentSigma: ptr(st.CurrentSigma)}
			v.Cover, v.CoverSigma = depthOf(st)
			row.Surveys = append(row.Surveys, v)
			for k := 1; k < len(docs); k++ {
				v := TrendValue{Survey: k + 1}
				if sc, ok := matched[k][st.Key]; ok {
					v.Key, v.Current, v.CurrentSigma = sc.NewKey, ptr(sc.NewCurrent), ptr(sc.NewCurrentSig)
					if ns := newStations[k][sc.NewKey]; ns != nil {
						v.Cover, v.CoverSigma = depthOf(ns)
					}
				}
				row.Surveys = append(row.Surveys, v)
			}
			tc.Stations = append(tc.Stations, row)
		}
		sort.SliceStable(tc.Stations, func(a, b int) bool { return tc.Stations[a].Chainage < tc.Stations[b].Chainage })
		t.Conductors = append(t.Conductors, tc)
	}
}

// WriteTrendJSON writes t as indented JSON.
func WriteTrendJSON(w io.Writer, t *Trend) error {
	b, err := json.MarshalIndent(t, "", "  ")
	if err != nil {
		return err
	}
	_, err = w.Write(append(b, '\n'))
	return err
}

// WriteTrendText writes the trend for a terminal: the surveys and their
// supply ratios, each conductor's table of current and cover per survey,
// the changes between consecutive surveys and the cautions, first and
// last.
func WriteTrendText(w io.Writer, t *Trend) error {
	var b strings.Builder
	fmt.Fprintf(&b, "Trend over %d surveys of one route (%s), on survey 1's chainage.\n", len(t.Surveys), modeName(t.Mode))
	fmt.Fprintf(&b, "Caution: %s\n", CautionShort)
	for _, n := range t.Notes {
		fmt.Fprintf(&b, "note: %s\n", n)
	}
	b.WriteString("\nSurveys (supply ratio: the current on conductor 1 over survey 1's):\n")
	for _, s := range t.Surveys {
		r := "-"
		if s.SupplyRatio != nil {
			r = pm(*s.SupplyRatio, *s.SupplyRatioSigma)
			if s.SupplyChanged {
				if s.SupplyDoubt != "" {
					r += fmt.Sprintf(" (changed: the supply, or %s; NEW survey %d, OLD survey 1)", s.SupplyDoubt, s.Survey)
				} else {
					r += " (changed)"
				}
			}
		}
		fmt.Fprintf(&b, "  %d. %s: %d stations matched, supply ratio %s\n", s.Survey, s.Name, s.Matched, r)
	}
	q := orDepth(t.DepthQuantity)
	for _, tc := range t.Conductors {
		fmt.Fprintf(&b, "\nConductor %d: current (A) and %s (m) per survey, ± one sigma.\n", tc.Conductor, q)
		fmt.Fprintf(&b, "%-10s %9s", "station", "chainage")
		for _, s := range t.Surveys {
			fmt.Fprintf(&b, " | %-18s %-16s", fmt.Sprintf("%d current", s.Survey), fmt.Sprintf("%d %s", s.Survey, q))
		}
		b.WriteString("\n")
		for _, st := range tc.Stations {
			fmt.Fprintf(&b, "%-10s %9.1f", st.Key, st.Chainage)
			for _, v := range st.Surveys {
				cur, cov := "-", "-"
				if v.Current != nil {
					cur = pm(*v.Current, *v.CurrentSigma)
				}
				if v.Cover != nil {
					cov = pm(*v.Cover, *v.CoverSigma)
				}
				fmt.Fprintf(&b, " | %-18s %-16s", cur, cov)
			}
			b.WriteString("\n")
		}
	}
	if len(t.Steps) > 0 {
		b.WriteString("\nCurrent steps per survey (a loss negative, ± one sigma; its growth against survey 1, and its change since the survey before that walked both sides of it):\n")
		for _, ts := range t.Steps {
			fmt.Fprintf(&b, "  %s:\n", stepWhere(ts))
			for _, v := range ts.Surveys {
				line := fmt.Sprintf("    %d. %s", v.Survey, stepCell(v))
				if v.Status == stepFound && len(v.Groups) > 0 {
					line += " (" + strings.Join(v.Groups, "-") + ")"
				}
				for _, x := range []string{stepGrowthText(v), stepSinceText(v)} {
					if x != "" {
						line += "; " + x
					}
				}
				b.WriteString(line + "\n")
			}
		}
	}
	b.WriteString("\nBetween consecutive surveys:\n")
	for _, iv := range t.Intervals {
		r := ""
		if iv.Ratio != nil {
			r = ", ratio " + pm(*iv.Ratio, *iv.RatioSigma)
			if iv.RatioDoubt != "" {
				r += fmt.Sprintf(" (the supply, or %s; NEW survey %d, OLD survey %d)", iv.RatioDoubt, iv.To, iv.From)
			}
		}
		fmt.Fprintf(&b, "  %d -> %d%s: %s\n", iv.From, iv.To, r, plural(iv.Changes, "change"))
		for _, ch := range t.Changes {
			if ch.From == iv.From {
				fmt.Fprintf(&b, "     [%s] %s\n", ch.Kind, ch.Message)
			}
		}
		for _, n := range notCoveredIn(t, iv.To) {
			fmt.Fprintf(&b, "     %s\n", n)
		}
	}
	b.WriteString("\nCautions:\n")
	for _, s := range t.Cautions {
		fmt.Fprintf(&b, "  - %s\n", s)
	}
	_, err := io.WriteString(w, b.String())
	return err
}

// trendView is what trendTemplate shows.
type trendView struct {
	Title, CautionShort string
	T                   *Trend
	Cautions            []string
	Lead                string
	Thresholds          string
	Surveys             []trendSurveyRow
	Changes             []changeRow
	Conductors          []trendConductorView
	CoverHead           string
	Steps               []trendStepRow
}

// trendStepRow is one current step of the series: where, and per survey
// its size, growth against survey 1 and change since the survey before.
type trendStepRow struct {
	Where string
	Cells []trendStepCell
}

type trendStepCell struct {
	Size, Growth, Since string
}

// HasInterval is true: the trend's changes are between two surveys.
func (v *trendView) HasInterval() bool { return true }

type trendSurveyRow struct {
	N                 int
	Name, Ratio, Step string
	Matched           int
}

type trendConductorView struct {
	Number         int
	Current, Cover template.HTML
	Head           []int
	Rows           []trendRow
}

type trendRow struct {
	Key, Chainage string
	Cells         []string
}

// WriteTrendHTML writes the trend as a self-contained HTML page in the
// crew report's style: the cautions first, the surveys and their supply
// ratios, the changes between consecutive surveys, and per conductor the
// current and cover along survey 1's chainage (one line a survey, ± two
// sigma, the minimum cover drawn) with the table of every station. The
// page begins with TrendHTMLHead.
func WriteTrendHTML(w io.Writer, t *Trend) error {
	v := &trendView{Title: "Survey trend", CautionShort: CautionShort, T: t, Cautions: t.Cautions}
	if len(v.Cautions) == 0 {
		v.Cautions = Cautions
	}
	q := orDepth(t.DepthQuantity)
	v.CoverHead = strings.ToUpper(q[:1]) + q[1:]
	v.Lead = fmt.Sprintf("%d %s surveys of one route, on the first survey's chainage: %s between consecutive surveys beyond the thresholds%s.", len(t.Surveys), modeName(t.Mode), plural(len(t.Changes), "change"), belowNote(trendChangesBelow(t.Changes)))
	v.Thresholds = fmt.Sprintf("A change is listed only when it is beyond %g standard deviations (both surveys' in quadrature) and beyond the practical threshold (%g m of %s; for current, 5%% of the earlier survey's median current unless given). The standard deviations count the reading noise only. "+stepBelowText, t.Sigmas, t.MinCoverChangeM, q)
	for _, s := range t.Surveys {
		row := trendSurveyRow{N: s.Survey, Name: s.Name, Matched: s.Matched, Ratio: "–", Step: "–"}
		if s.SupplyRatio != nil {
			row.Ratio = pm(*s.SupplyRatio, *s.SupplyRatioSigma)
			if s.SupplyChanged {
				row.Ratio += " (the supply changed)"
				if s.SupplyDoubt != "" {
					row.Ratio = pm(*s.SupplyRatio, *s.SupplyRatioSigma) + fmt.Sprintf(" (the supply changed, or %s; NEW survey %d, OLD survey 1)", s.SupplyDoubt, s.Survey)
				}
			}
		}
		if s.Survey > 1 {
			iv := t.Intervals[s.Survey-2]
			row.Step = plural(iv.Changes, "change")
			if iv.Ratio != nil {
				doubt := ""
				if iv.RatioDoubt != "" {
					doubt = fmt.Sprintf(" (the supply, or %s; NEW survey %d, OLD survey %d)", iv.RatioDoubt, iv.To, iv.From)
				}
				row.Step = "ratio " + pm(*iv.Ratio, *iv.RatioSigma) + doubt + ", " + row.Step
			}
			for _, n := range notCoveredIn(t, s.Survey) {
				row.Step += "; " + n
			}
		}
		v.Surveys = append(v.Surveys, row)
	}
	for _, ts := range t.Steps {
		row := trendStepRow{Where: stepWhere(ts)}
		for _, sv := range ts.Surveys {
			c := trendStepCell{Size: stepCell(sv), Growth: stepGrowthText(sv), Since: stepSinceText(sv)}
			if sv.Status == stepFound && len(sv.Groups) > 0 {
				c.Size += " (" + strings.Join(sv.Groups, "–") + ")"
			}
			row.Cells = append(row.Cells, c)
		}
		v.Steps = append(v.Steps, row)
	}
	for i, ch := range t.Changes {
		v.Changes = append(v.Changes, changeRow{N: i + 1, Kind: ch.Kind, Where: changeWhere(ch.Change), Message: ch.Message, Interval: fmt.Sprintf("%d → %d", ch.From, ch.To)})
	}
	for _, tc := range t.Conductors {
		what := "the route"
		if tc.Conductor != 1 {
			what = fmt.Sprintf("conductor %d", tc.Conductor)
		}
		cur := make([]seriesLine, len(t.Surveys))
		cov := make([]seriesLine, len(t.Surveys))
		cv := trendConductorView{Number: tc.Conductor}
		for k, s := range t.Surveys {
			cur[k].name, cov[k].name = fmt.Sprintf("survey %d", s.Survey), fmt.Sprintf("survey %d", s.Survey)
			cv.Head = append(cv.Head, s.Survey)
		}
		for _, st := range tc.Stations {
			row := trendRow{Key: st.Key, Chainage: fmt.Sprintf("%.1f", st.Chainage)}
			for k, val := range st.Surveys {
				c1, c2 := "–", "–"
				if val.Current != nil {
					cur[k].x, cur[k].y, cur[k].e = append(cur[k].x, st.Chainage), append(cur[k].y, *val.Current), append(cur[k].e, *val.CurrentSigma)
					c1 = pm(*val.Current, *val.CurrentSigma)
				}
				if val.Cover != nil {
					cov[k].x, cov[k].y, cov[k].e = append(cov[k].x, st.Chainage), append(cov[k].y, *val.Cover), append(cov[k].e, *val.CoverSigma)
					c2 = pm(*val.Cover, *val.CoverSigma)
				}
				row.Cells = append(row.Cells, c1, c2)
			}
			cv.Rows = append(cv.Rows, row)
		}
		var err error
		if cv.Current, cv.Cover, err = seriesFigures(what, cur, cov, t.DepthQuantity, t.MinCoverM, t.Mode == SignalAC); err != nil {
			return err
		}
		v.Conductors = append(v.Conductors, cv)
	}
	return executePage(w, trendTemplate, v)
}

// twice returns 2n, for the table's colspans.
func twice(n int) int { return 2 * n }

var trendTemplate = template.Must(template.New("trend").Funcs(template.FuncMap{"twice": twice, "add": func(a, b int) int { return a + b }}).Parse(strings.TrimSuffix(TrendHTMLHead, "\n") + `
` + sidePageHead() + `<p class="sub">{{len .T.Surveys}} surveys, oldest first</p>
</header>
<main>
` + pageCautions + `
<section class="summary">
<h2>Summary</h2>
<p class="counts">{{.Lead}}{{if .Changes}} <a href="#changes">Go to what changed</a>.{{end}}</p>
<div class="wide"><table>
<thead><tr><th>Survey</th><th>Result</th><th>Stations matched</th><th>Supply ratio to survey 1</th><th>Since the survey before</th></tr></thead>
<tbody>
{{range .Surveys}}<tr><td class="num">{{.N}}</td><td><code>{{.Name}}</code></td><td class="num">{{.Matched}}</td><td class="num">{{.Ratio}}</td><td>{{.Step}}</td></tr>
{{end}}</tbody>
</table></div>
<p>The supply ratio is the current on conductor 1 over survey 1's, as compare reads its level: without a step in the ratio, the weighted mean of the stations that agree with the median ratio; with a step on a DC route, the reading on the side the current flows from; with a step whose feed end is not known (AC), the reading before the step, and compare then takes neither side as the supply's (see What changed). A ratio other than 1 along the whole route means the rectifier, transmitter or load feeding it changed, not a loss; a loss shows as a step in the ratio between two stations, listed under What changed. Where two surveys walked different stretches, a loss outside the stretch both walked moves the ratio as a changed supply does (the cautions say where).</p>
<p class="howsure">{{.Thresholds}}</p>
{{range .T.Notes}}<p class="note">{{.}}</p>
{{end}}</section>
` + pageChanges + `
<p class="values">Each change is as compare words it for the two surveys, its chainages in the earlier one's; the Where column gives them on survey 1's chainage.</p>
{{if .Steps}}<section id="steps">
<h2>Current steps, survey by survey</h2>
<div class="wide"><table class="findings">
<thead><tr><th>Where (survey 1's chainage)</th>{{range .T.Surveys}}<th>Survey {{.Survey}}</th>{{end}}</tr></thead>
<tbody>
{{range .Steps}}<tr><td class="where">{{.Where}}</td>{{range .Cells}}<td>{{.Size}}{{if .Growth}}<br>{{.Growth}}{{end}}{{if .Since}}<br>{{.Since}}{{end}}</td>{{end}}</tr>
{{end}}</tbody>
</table></div>
<p class="values">Each current step (current leaving the conductor, negative, or joining it) as each survey's locate sized it, ± one standard deviation; its growth against survey 1 (the size beyond the supply's factor between the two, as compare measures it) and its change since the survey before that walked both sides of it. A survey that did not walk both sides of a step is "not covered" there, and the surveys around it are compared instead. These show a step's history whatever the thresholds: the z (sigma) says how far each is beyond the reading noise.</p>
</section>
{{end}}{{range .Conductors}}<section>
<h2>{{if eq .Number 1}}Along the route{{else}}Conductor {{.Number}} along the route{{end}}</h2>
<figure>{{.Current}}
<figcaption>Fitted current of each survey at survey 1's stations (each survey's station matched to it), one line a survey, ± two standard deviations; the newest survey blue-green and solid, the earlier ones each with its own mark and line pattern. Current is signed along survey 1's direction of increasing chainage.</figcaption>
</figure>
{{if .Cover}}<figure>{{.Cover}}
<figcaption>{{$.CoverHead}} of each survey at the same stations, drawn as the current above{{if $.T.MinCoverM}}, with the ground and the minimum cover (dashed red){{end}}.</figcaption>
</figure>{{end}}
<div class="wide"><table class="groups">
<thead><tr class="print-only"><th colspan="{{add 2 (twice (len .Head))}}">{{$.CautionShort}}</th></tr>
<tr><th>Station</th><th>Chainage (m)</th>{{range .Head}}<th>{{.}}: current (A)</th><th>{{.}}: {{$.CoverHead}} (m)</th>{{end}}</tr></thead>
<tbody>
{{range .Rows}}<tr><th scope="row">{{.Key}}</th><td class="num">{{.Chainage}}</td>{{range .Cells}}<td class="num">{{.}}</td>{{end}}</tr>
{{end}}</tbody>
</table></div>
<p class="values">– where the survey has no station matched to survey 1's. Uncertainties are one standard deviation, from the reading noise only.</p>
</section>
{{end}}</main>
<footer>Made by undercurrent trend. Positions in metres, currents in amperes{{if eq .T.Mode "ac"}} (RMS){{end}}. {{.CautionShort}}</footer>
</body>
</html>
`))

// trendChangesBelow counts the trend's changes listed though under the
// practical threshold.
func trendChangesBelow(chs []TrendChange) int {
	n := 0
	for _, ch := range chs {
		if ch.BelowThreshold {
			n++
		}
	}
	return n
}
