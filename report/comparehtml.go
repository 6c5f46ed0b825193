package report

import (
	"bytes"
	"fmt"
	"html/template"
	"image/color"
	"io"
	"math"
	"strings"
	"unicode/utf8"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// The comparison's page (undercurrent compare OLD NEW -o FILE.html): what
// a maintenance manager reads. It is the crew report's house style (its
// CSS, inline SVG plots drawn with the same helpers, no scripts): the
// safety cautions first, the ratio NEW/OLD and what it means, the list of
// what changed, then per conductor the current and the cover of both
// surveys on OLD's chainage, and the matched stations' table.

// ComparisonHTMLHead and TrendHTMLHead are how the pages compare and trend
// write begin: an existing -o FILE.html is replaced only when it begins so.
const (
	ComparisonHTMLHead = "<!DOCTYPE html>\n<html lang=\"en\" data-undercurrent=\"compare\">\n"
	TrendHTMLHead      = "<!DOCTYPE html>\n<html lang=\"en\" data-undercurrent=\"trend\">\n"
)

// crewStyle is the crew report's <style> element, shared by the pages of
// compare and trend. It holds the template actions {{.Title}} and
// {{.CautionShort}} (the printed pages' running footer).
func crewStyle() string {
	a, b := strings.Index(crewHTML, "<style>"), strings.Index(crewHTML, "</style>")
	return crewHTML[a : b+len("</style>")]
}

// seriesLine is one survey's stations along a route, for seriesPlot: x
// chainage, y the value and e one sigma.
type seriesLine struct {
	name    string
	x, y, e []float64
}

// seriesStyles tell the surveys apart by mark and line pattern as well as
// colour, so that they read apart in a grey print: the first survey grey
// and dashed with open rings, the last the report's blue-green, solid
// with dots.
var seriesStyles = []struct {
	c      color.Color
	glyph  draw.GlyphDrawer
	dashes []vg.Length
}{
	{colInfo, draw.RingGlyph{}, []vg.Length{5, 3}},
	{colNorth, draw.SquareGlyph{}, []vg.Length{1.5, 2.5}},
	{colUp, draw.TriangleGlyph{}, []vg.Length{6, 2.5, 1.5, 2.5}},
	{colInk, draw.CrossGlyph{}, []vg.Length{2, 2}},
}

// seriesStyle is the style of line k of n: the last is always the
// report's solid blue-green (the newest survey), the others in turn.
func seriesStyle(k, n int) (color.Color, draw.GlyphDrawer, []vg.Length) {
	if k == n-1 {
		return colFit, draw.CircleGlyph{}, nil
	}
	s := seriesStyles[k%len(seriesStyles)]
	return s.c, s.glyph, s.dashes
}

// seriesPlot draws lines (one a survey) of a quantity along the route,
// each station with ± two sigma bars; depth turns the axis downward and,
// with minCover set, draws the ground (0) and the minimum-cover line.
func seriesPlot(title, xlabel, ylabel string, lines []seriesLine, depth bool, ground bool, minCover *float64) (*plot.Plot, error) {
	p := newPlot(title, xlabel, ylabel)
	if depth {
		p.Y.Scale = plot.InvertedScale{Normalizer: plot.LinearScale{}}
	}
	x0, x1 := math.Inf(1), math.Inf(-1)
	for k, l := range lines {
		if len(l.x) == 0 {
			continue
		}
		c, glyph, dashes := seriesStyle(k, len(lines))
		e := make([]float64, len(l.e))
		for i := range l.e {
			e[i] = 2 * l.e[i]
		}
		eb, err := plotter.NewYErrorBars(xyErr{xy{l.x, l.y}, e})
		if err != nil {
			return nil, err
		}
		eb.LineStyle.Color = c
		eb.LineStyle.Width = 1
		p.Add(eb)
		if _, err := polyline(p, xy{l.x, l.y}, c, 1, dashes...); err != nil {
			return nil, err
		}
		s, err := scatter(p, xy{l.x, l.y}, glyph, c, 2.5)
		if err != nil {
			return nil, err
		}
		if s != nil {
			p.Legend.Add(l.name+", ±2σ", s)
		}
		x0, x1 = math.Min(x0, minOf(l.x)), math.Max(x1, maxOf(l.x))
	}
	if depth && ground && x0 <= x1 {
		l, err := polyline(p, xy{[]float64{x0, x1}, []float64{0, 0}}, colGround, 1)
		if err != nil {
			return nil, err
		}
		if l != nil {
			p.Legend.Add("ground", l)
		}
		if minCover != nil && *minCover > 0 {
			l, err := polyline(p, xy{[]float64{x0, x1}, []float64{*minCover, *minCover}}, colWarning, 1.2, 5, 3)
			if err != nil {
				return nil, err
			}
			if l != nil {
				p.Legend.Add(fmt.Sprintf("minimum cover %.2f m", *minCover), l)
			}
		}
	}
	return p, nil
}

// seriesFigures renders the current and the cover (or depth) plots of one
// conductor, wide and narrow (figure).
func seriesFigures(what string, cur, cov []seriesLine, quantity string, minCover *float64, ac bool) (curFig, covFig template.HTML, err error) {
	xlabel := "chainage (m)"
	if what != "the route" {
		xlabel = "chainage along " + what + " (m)"
	}
	ylabel := "current (A)"
	if ac {
		ylabel = "current, RMS (A)"
	}
	build := func(title, ylabel string, lines []seriesLine, depth bool) func(bool) (*plot.Plot, error) {
		return func(bool) (*plot.Plot, error) {
			return seriesPlot(title, xlabel, ylabel, lines, depth, quantity == "cover", minCover)
		}
	}
	curFig, err = figure(build("Current along "+what, ylabel, cur, false), 20*vg.Centimeter, 8.5*vg.Centimeter, smallSide, smallAlong, "current along "+what+", each survey")
	if err != nil {
		return "", "", fmt.Errorf("report: current plot of %s: %w", what, err)
	}
	n := 0
	for _, l := range cov {
		n += len(l.x)
	}
	if n == 0 || quantity == "" {
		return curFig, "", nil
	}
	title, yl := "Cover along "+what, "cover: depth below ground (m)"
	if quantity == "depth" {
		title, yl = "Depth along "+what, "depth below the sensors (m)"
	}
	covFig, err = figure(build(title, yl, cov, true), 20*vg.Centimeter, 8.5*vg.Centimeter, smallSide, smallAlong, strings.ToLower(title)+", each survey")
	if err != nil {
		return "", "", fmt.Errorf("report: cover plot of %s: %w", what, err)
	}
	return curFig, covFig, nil
}

// compareView is what compareTemplate shows.
type compareView struct {
	Title, CautionShort string
	C                   *Comparison
	Cautions            []string
	Lead                string
	Thresholds          string
	Changes             []changeRow
	Conductors          []compareConductorView
}

// changeRow is one line of the list of what changed.
type changeRow struct {
	N        int
	Kind     string
	Where    string
	Message  string
	Interval string // trend: "1 → 2"
}

type compareConductorView struct {
	Number, NewNumber int
	MatchedBy         string
	Ratio             string
	Current, Cover    template.HTML
	Rows              []compareRow
	CoverHead         string
	// CurHead and CovChangeHead head the change columns (currentHead,
	// coverHead).
	CurHead, CovChangeHead string
}

type compareRow struct {
	Old, New, Chainage        string
	OldI, NewI, DI            string
	OldC, NewC, DC            string
	CurFlag, CovFlag, Shallow bool
}

// ratioMeaning words a conductor's ratio NEW/OLD for a manager as
// compare's list of changes does: without a step its level (the stations
// that agree with the median ratio); with a step on DC the supply's factor
// read on the side the current flows from (LevelFrom "upstream"); with a
// step whose feed end is not known (AC) both sides' readings, neither
// taken as the factor (LevelFrom "unknown"); and, when the surveys walked
// different stretches, that the level may be a loss outside the stretch
// both walked (PartialCoverage.LevelDoubt).
func ratioMeaning(cc *ConductorComparison, ac bool) string {
	r := cc.Ratio
	if r == nil {
		return "Too few stations with a current clear of zero in both surveys to test the ratio NEW/OLD."
	}
	supply := "the rectifier or transmitter driving it was set differently"
	if ac {
		supply = "the load or the transmitter driving it changed"
	}
	doubt := ""
	if cc.Partial != nil {
		doubt = cc.Partial.LevelDoubt
	}
	fit := fmt.Sprintf("chi-square %.1f for %d degrees of freedom over the %d stations with a current clear of zero in both surveys", r.Chi2, r.Dof, r.Stations)
	var b strings.Builder
	switch r.LevelFrom {
	case "upstream":
		st := r.Step
		side, from := "before", st.ChainageFrom
		if st.Downstream == "before" {
			side, from = "past", st.ChainageTo
		}
		fmt.Fprintf(&b, "The ratio NEW/OLD steps from %s to %s between %s and %s (chainage %.1f–%.1f m, %.1f σ; %s). ",
			pm(st.Before, st.BeforeSigma), pm(st.After, st.AfterSigma), st.FromKey, st.ToKey, st.ChainageFrom, st.ChainageTo, st.Z, fit)
		fmt.Fprintf(&b, "The supply's factor is read on the side the current flows from, %s chainage %.1f m: %s. ", side, from, pm(r.Level, r.LevelSigma))
		if r.LevelApplied {
			fmt.Fprintf(&b, "That differs from 1 beyond both thresholds: %s; the changes at stations are measured beyond it (NEW − %s × OLD). ", supply, fix(r.Level, 4))
		} else {
			b.WriteString("That is 1 within the thresholds: the supply did not change. ")
		}
		if doubt != "" {
			fmt.Fprintf(&b, "It may also be %s, which that survey did not walk. ", doubt)
		}
		if st.CurrentAlongFlowA != nil {
			fmt.Fprintf(&b, "Past the step, along the flow, the stations read %s, that factor less the change of loss: along the flow the current changes there by about %+.3g A more than in OLD, a loss that changed.",
				pm(otherSide(r), otherSideSigma(r)), *st.CurrentAlongFlowA)
		}
		if st.BelowThreshold {
			fmt.Fprintf(&b, " The step is under the current threshold of %.2g A but %.1f σ out: a loss that changed by a little, found so that the supply is read upstream of it.", cc.MinCurrentChangeA, st.Z)
		}
	case "unknown":
		st := r.Step
		fmt.Fprintf(&b, "The ratio NEW/OLD reads %s before chainage %.1f m and %s past %.1f m (between %s and %s, %.1f σ; %s). ",
			pm(st.Before, st.BeforeSigma), st.ChainageFrom, pm(st.After, st.AfterSigma), st.ChainageTo, st.FromKey, st.ToKey, st.Z, fit)
		fmt.Fprintf(&b, "The supply's factor is the reading on the side the current is fed from, which %s does not tell: neither side is taken as the factor, and each station's change is measured against its own side's reading (NEW − that side's ratio × OLD). ",
			map[bool]string{true: "an AC magnitude", false: "a current of no clear sign"}[ac])
		if doubt != "" {
			fmt.Fprintf(&b, "Either reading may also hold %s, which that survey did not walk. ", doubt)
		}
		fmt.Fprintf(&b, "The step itself is about %+.3g A if the current is fed from the start of the route (the reverse if from the far end): a loss that changed there.", st.CurrentA)
		if st.BelowThreshold {
			fmt.Fprintf(&b, " It is under the current threshold of %.2g A but %.1f σ out.", cc.MinCurrentChangeA, st.Z)
		}
	default:
		fmt.Fprintf(&b, "The current now is %s times what it was (NEW/OLD, the weighted mean of the stations that agree with the median ratio; %s). ", pm(r.Level, r.LevelSigma), fit)
		switch {
		case r.LevelApplied && doubt != "":
			p := cc.Partial
			fmt.Fprintf(&b, "That differs from 1 beyond both thresholds on the stretch both surveys walked (chainage %.1f–%.1f m): either %s, or it is %s, which that survey did not walk; the changes at stations are measured beyond that factor (NEW − %s × OLD). ", p.BothFrom, p.BothTo, supply, doubt, fix(r.Level, 4))
		case r.LevelApplied:
			fmt.Fprintf(&b, "That differs from 1 beyond both thresholds: the whole route's current changed by one factor, which means %s, not a loss; the changes at stations are measured beyond that factor (NEW − %s × OLD). ", supply, fix(r.Level, 4))
		default:
			b.WriteString("That is 1 within the thresholds: the current feeding the route did not change. ")
		}
		if r.Constant {
			b.WriteString("It holds along the route (no step beyond the thresholds): no loss changed between the stations both surveys walked.")
		} else {
			b.WriteString("It does not hold along the route: the stations scatter about it beyond their sigmas, yet no single step explains that (a ratio drifting along the route, or more than one loss that changed); read the stations' changes one by one.")
		}
	}
	return b.String()
}

// currentHead and coverHead are the headings of the station table's
// change columns: the change beyond the level (or each side's ratio) and
// beyond the common depth offset where those apply, as compare's text
// table.
func currentHead(r *RatioProfile) string {
	switch {
	case r != nil && r.SideLevels && r.LevelApplied:
		return "Change beyond its side's ratio (A)"
	case r != nil && r.LevelApplied:
		return fmt.Sprintf("Change beyond level, NEW − %s × OLD (A)", fix(r.Level, 4))
	}
	return "Change NEW − OLD (A)"
}

func coverHead(o *DepthOffset) string {
	if o != nil && o.Applied {
		return fmt.Sprintf("Change beyond the common %+.3f m (m)", o.Offset)
	}
	return "Change NEW − OLD (m)"
}

func changeWhere(ch Change) string {
	var parts []string
	if ch.Conductor > 1 {
		parts = append(parts, fmt.Sprintf("conductor %d", ch.Conductor))
	}
	switch {
	case ch.ChainageFrom != nil && ch.ChainageTo != nil:
		parts = append(parts, fmt.Sprintf("chainage %.1f–%.1f m", *ch.ChainageFrom, *ch.ChainageTo))
	case ch.Chainage != nil:
		parts = append(parts, fmt.Sprintf("chainage %.1f m", *ch.Chainage))
	}
	return strings.Join(parts, ", ")
}

// comparisonLines are OLD's and NEW's current and cover of the matched
// stations of cc, on OLD's chainage.
func comparisonLines(cc *ConductorComparison) (cur, cov []seriesLine) {
	cur = []seriesLine{{name: "OLD"}, {name: "NEW"}}
	cov = []seriesLine{{name: "OLD"}, {name: "NEW"}}
	for _, s := range cc.Stations {
		cur[0].x, cur[0].y, cur[0].e = append(cur[0].x, s.Chainage), append(cur[0].y, s.OldCurrent), append(cur[0].e, s.OldCurrentSig)
		cur[1].x, cur[1].y, cur[1].e = append(cur[1].x, s.Chainage), append(cur[1].y, s.NewCurrent), append(cur[1].e, s.NewCurrentSig)
		if s.OldCover != nil && s.OldCoverSig != nil {
			cov[0].x, cov[0].y, cov[0].e = append(cov[0].x, s.Chainage), append(cov[0].y, *s.OldCover), append(cov[0].e, *s.OldCoverSig)
		}
		if s.NewCover != nil && s.NewCoverSig != nil {
			cov[1].x, cov[1].y, cov[1].e = append(cov[1].x, s.Chainage), append(cov[1].y, *s.NewCover), append(cov[1].e, *s.NewCoverSig)
		}
	}
	return cur, cov
}

// WriteComparisonHTML writes the comparison as a self-contained HTML page
// in the crew report's style: the cautions first, the ratio and its
// meaning, the list of what changed, and per conductor the current and
// cover of OLD and NEW along OLD's chainage (± two sigma, the minimum
// cover drawn) with the table of matched stations. The page begins with
// ComparisonHTMLHead.
func WriteComparisonHTML(w io.Writer, c *Comparison) error {
	v := &compareView{Title: "Survey comparison", CautionShort: CautionShort, C: c, Cautions: c.Cautions}
	if len(v.Cautions) == 0 {
		v.Cautions = Cautions
	}
	v.Lead = fmt.Sprintf("%s survey compared with the earlier one: %d stations matched on %s, %s.", modeName(c.Mode), c.Matched, plural(len(c.Conductors), "conductor"), plural(len(c.Changes), "change")+" beyond the thresholds"+belowNote(changesBelow(c.Changes)))
	v.Thresholds = fmt.Sprintf("A change is listed only when it is beyond %g standard deviations (both surveys' in quadrature) and beyond the practical threshold: %g m of %s, and the conductor's current threshold given with it below. The standard deviations count the reading noise only. "+stepBelowText,
		c.Sigmas, c.MinCoverChangeM, orDepth(c.DepthQuantity))
	for i, ch := range c.Changes {
		v.Changes = append(v.Changes, changeRow{N: i + 1, Kind: ch.Kind, Where: changeWhere(ch), Message: ch.Message})
	}
	ac := c.Mode == SignalAC
	for k := range c.Conductors {
		cc := &c.Conductors[k]
		what := "the route"
		if cc.Old != 1 {
			what = fmt.Sprintf("conductor %d", cc.Old)
		}
		cv := compareConductorView{Number: cc.Old, NewNumber: cc.New, MatchedBy: cc.MatchedBy, CoverHead: strings.ToUpper(orDepth(c.DepthQuantity)[:1]) + orDepth(c.DepthQuantity)[1:]}
		cv.CurHead, cv.CovChangeHead = currentHead(cc.Ratio), coverHead(cc.DepthOffset)
		cv.Ratio = ratioMeaning(cc, ac) + fmt.Sprintf(" Current threshold on this conductor: %.3g A.", cc.MinCurrentChangeA)
		cur, cov := comparisonLines(cc)
		var err error
		if cv.Current, cv.Cover, err = seriesFigures(what, cur, cov, c.DepthQuantity, c.MinCoverM, ac); err != nil {
			return err
		}
		for _, s := range cc.Stations {
			d, sd := s.CurrentChange, s.CurrentSigma
			if s.BeyondLevel != nil {
				d, sd = *s.BeyondLevel, *s.BeyondLevelSigma
			}
			row := compareRow{Old: s.OldKey, New: s.NewKey, Chainage: fmt.Sprintf("%.1f", s.Chainage),
				OldI: pm(s.OldCurrent, s.OldCurrentSig), NewI: pm(s.NewCurrent, s.NewCurrentSig), DI: signedPM(d, sd),
				CurFlag: s.CurrentFlag, CovFlag: s.CoverFlag, Shallow: s.NowShallow, OldC: "–", NewC: "–", DC: "–"}
			if s.OldCover != nil && s.OldCoverSig != nil {
				row.OldC = pm(*s.OldCover, *s.OldCoverSig)
			}
			if s.NewCover != nil && s.NewCoverSig != nil {
				row.NewC = pm(*s.NewCover, *s.NewCoverSig)
			}
			switch {
			case s.CoverBeyondOffset != nil && s.CoverBeyondOffsetSigma != nil:
				row.DC = signedPM(*s.CoverBeyondOffset, *s.CoverBeyondOffsetSigma)
			case s.CoverChange != nil && s.CoverSigma != nil:
				row.DC = signedPM(*s.CoverChange, *s.CoverSigma)
			}
			cv.Rows = append(cv.Rows, row)
		}
		v.Conductors = append(v.Conductors, cv)
	}
	return executePage(w, compareTemplate, v)
}

// signedPM is pm with a sign always written.
func signedPM(v, sigma float64) string {
	s := pm(v, sigma)
	if v >= 0 && !strings.HasPrefix(s, "+") {
		s = "+" + s
	}
	return s
}

// executePage renders t with v, valid UTF-8 (as writeHTML), to w.
func executePage(w io.Writer, t *template.Template, v any) error {
	var page bytes.Buffer
	if err := t.Execute(&page, v); err != nil {
		return fmt.Errorf("report: writing HTML: %w", err)
	}
	b := page.Bytes()
	if !utf8.Valid(b) {
		b = bytes.ToValidUTF8(b, []byte("\uFFFD"))
	}
	if _, err := w.Write(b); err != nil {
		return fmt.Errorf("report: writing HTML: %w", err)
	}
	return nil
}

// pageCautions is the cautions box and the list of what changed, shared
// by the pages of compare and trend.
const pageCautions = `<section class="cautions">
<h2>Read before acting on this report</h2>
<ol>
{{range .Cautions}}<li>{{.}}</li>
{{end}}</ol>
</section>
`

const pageChanges = `<section id="changes">
<h2>What changed</h2>
{{if .Changes}}<div class="wide"><table class="findings">
<thead><tr><th>#</th>{{if .HasInterval}}<th>Between surveys</th>{{end}}<th>What</th><th>Where</th><th>Detail</th></tr></thead>
<tbody>
{{range .Changes}}<tr><td class="num">{{.N}}</td>{{if $.HasInterval}}<td>{{.Interval}}</td>{{end}}<td>{{.Kind}}</td><td class="where">{{.Where}}</td><td class="detail">{{.Message}}</td></tr>
{{end}}</tbody>
</table></div>{{else}}<p>No change beyond the thresholds.</p>{{end}}
</section>
`

// HasInterval is false for a comparison of two surveys.
func (v *compareView) HasInterval() bool { return false }

// sidePageHead is compare's and trend's pages' head and the start of
// their header (title), in the crew report's style; each page goes on with
// its own sub-title.
func sidePageHead() string {
	return `<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>{{.Title}}</title>
` + crewStyle() + `
</head>
<body>
<header>
<h1>{{.Title}}</h1>
`
}

var compareTemplate = template.Must(template.New("compare").Parse(strings.TrimSuffix(ComparisonHTMLHead, "\n") + `
` + sidePageHead() + `<p class="sub">OLD <code>{{.C.Old}}</code> · NEW <code>{{.C.New}}</code></p>
</header>
<main>
` + pageCautions + `
<section class="summary">
<h2>Summary</h2>
<p class="counts">{{.Lead}}{{if .Changes}} <a href="#changes">Go to what changed</a>.{{end}}</p>
{{range .Conductors}}<p{{if eq .Number 1}} class="lead"{{end}}><strong>{{if eq .Number 1}}The route{{else}}Conductor {{.Number}}{{end}}, ratio NEW/OLD.</strong> {{.Ratio}}</p>
{{end}}<p class="howsure">{{.Thresholds}}</p>
{{range .C.Notes}}<p class="note">{{.}}</p>
{{end}}</section>
` + pageChanges + `
{{range .Conductors}}<section>
<h2>{{if eq .Number 1}}Along the route{{else}}Conductor {{.Number}} (NEW's {{.NewNumber}}) along the route{{end}}</h2>
<figure>{{.Current}}
<figcaption>Fitted current of each survey at the stations matched in both (by {{.MatchedBy}}), on OLD's chainage, with ± two standard deviations: OLD grey, dashed, open rings; NEW blue-green, solid, dots. Current is signed along OLD's direction of increasing chainage.</figcaption>
</figure>
{{if .Cover}}<figure>{{.Cover}}
<figcaption>{{.CoverHead}} of each survey at the same stations, drawn as the current above{{if $.C.MinCoverM}}, with the ground and the minimum cover (dashed red){{end}}.</figcaption>
</figure>{{end}}
<div class="wide"><table class="groups">
<thead><tr class="print-only"><th colspan="9">{{$.CautionShort}}</th></tr>
<tr><th>OLD</th><th>NEW</th><th>Chainage (m)</th><th>Current OLD (A)</th><th>Current NEW (A)</th><th>{{.CurHead}}</th><th>{{.CoverHead}} OLD (m)</th><th>{{.CoverHead}} NEW (m)</th><th>{{.CovChangeHead}}</th></tr></thead>
<tbody>
{{range .Rows}}<tr><th scope="row">{{.Old}}</th><td>{{.New}}</td><td class="num">{{.Chainage}}</td><td class="num">{{.OldI}}</td><td class="num">{{.NewI}}</td><td class="num">{{if .CurFlag}}<strong>{{.DI}} *</strong>{{else}}{{.DI}}{{end}}</td><td class="num">{{.OldC}}</td><td class="num">{{.NewC}}</td><td class="num">{{if .CovFlag}}<strong>{{.DC}} *</strong>{{else}}{{.DC}}{{end}}{{if .Shallow}} now under the minimum cover{{end}}</td></tr>
{{end}}</tbody>
</table></div>
<p class="values">* a change beyond the thresholds (listed under What changed). Uncertainties are one standard deviation, from the reading noise only.</p>
</section>
{{end}}</main>
<footer>Made by undercurrent compare. Positions in metres, currents in amperes{{if eq .C.Mode "ac"}} (RMS){{end}}. {{.CautionShort}}</footer>
</body>
</html>
`))

// stepBelowText says on the compare and trend pages that a current step
// along the route, or its growth, is listed on its standard deviations
// alone (Change.BelowThreshold), so that a slowly growing loss is seen.
const stepBelowText = "A step of the current along the route, and a step's growth, is listed beyond the standard deviations alone and marked as under the practical threshold, so that a loss growing slowly from survey to survey is seen."

// changesBelow counts the changes listed though under the practical
// threshold.
func changesBelow(chs []Change) int {
	n := 0
	for _, ch := range chs {
		if ch.BelowThreshold {
			n++
		}
	}
	return n
}

// belowNote words changesBelow's count for a page's lead line.
func belowNote(n int) string {
	if n == 0 {
		return ""
	}
	return fmt.Sprintf(" (%d of them beyond the standard deviations but under the practical threshold)", n)
}
