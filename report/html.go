package report

import (
	"fmt"
	"html/template"
	"io"
	"math"
	"slices"
	"sort"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"

	"undercurrent/inverse/route"
)

// MaxProfilePlots is the number of groups whose measured and fitted field
// the crew report plots.
const MaxProfilePlots = 4

// WriteHTML writes the crew report: one self-contained HTML page (no
// scripts, no external files) that opens offline and prints on A4 or
// Letter. It holds, in order: the cautions; a summary a crew lead reads in a
// minute (what was found, where, how sure) with the findings; a plan view of
// the fitted route over the readings; current and depth along the route
// with ±2σ bars, the ground and the minimum-cover line; measured against
// fitted field for up to MaxProfilePlots groups (those with findings first);
// a table of every group; and the inputs, corrections, frame and settings.
// Plots are drawn with gonum.org/v1/plot and embedded as inline SVG.
func WriteHTML(w io.Writer, d *Document) error {
	return writeHTML(w, d, CSVOptions{})
}

// writeHTML is WriteHTML for results.csv and findings.csv written in the
// style opt says, which the settings tell with how to open them.
func writeHTML(w io.Writer, d *Document, opt CSVOptions) error {
	if err := d.Validate(); err != nil {
		return err
	}
	v, err := newView(d)
	if err != nil {
		return err
	}
	v.CSVText = csvText(opt)
	// The page says it is UTF-8: text that is not (a name from an input
	// that was not) is written with U+FFFD for each bad byte run, in the
	// text, the attributes and the plots alike (TestWritersValidUTF8).
	return executePage(w, crewTemplate, v)
}

type view struct {
	D        *Document
	Title    string
	Headline []string
	HowSure  string
	// SigmaNote says what the fits' sigmas count (sigmaNoteHTML), and
	// SigmaFrom, for the table of fits, what they are from: the reading
	// noise only, or with it the positions' uncertainty given; Scatter
	// gives the between-station scatter when there is one.
	SigmaNote string
	SigmaFrom string
	Scatter   string
	// CSVText says how results.csv and findings.csv are written and how
	// to open them in a spreadsheet (csvText).
	CSVText string
	// ShowSite is true when the site name differs from the title.
	ShowSite bool
	// CoverNA is true when the ground is not known, so the table's cover
	// column reads "n/a".
	CoverNA bool
	// CoverHead and DepthHead head the table's cover and depth columns,
	// each naming what it is measured from; DepthCol is false when the
	// depths are below the ground given (--reference-z), where the depth
	// is the cover and the cover column alone gives it. The cover column
	// comes first: a crew acts on the first depth it reads, and a depth
	// below the sensors headed "Depth" read 0.30 m deeper than the cover
	// in the demo (found in review).
	CoverHead, DepthHead string
	DepthCol             bool
	// DepthCaption opens the depth plots' captions: what the plot's
	// depths are measured from.
	DepthCaption string
	// InputsNA is true when an input has no readings to count.
	InputsNA bool
	// Counts gives the findings by severity, and MostPressing names the
	// most pressing of them (kind, place, value): both lead the summary,
	// so that a phone's first screen says there are warnings and which
	// matters most. They came last in the summary, after the four-decimal
	// figures and the realistic spread, and the demo's first warning
	// started 2.1 phone screens down (found in review).
	Counts       string
	MostPressing string
	Findings     []findingRow
	Cautions     []string
	// CautionShort is the one-line caution printed on every page.
	CautionShort string
	// GroupCols is the number of columns of the table of every group.
	GroupCols int
	// LogCol is true when the groups come from more than one survey log:
	// the table of every group then names each group's log (Group.Log).
	LogCol  bool
	Plan    template.HTML
	Current template.HTML
	Depth   template.HTML
	// Phase is the AC phase along the route (empty for DC), and
	// FirstWalk the route's Route.FirstWalk, which the current plot's
	// caption names.
	Phase     template.HTML
	FirstWalk string
	DepthNote string
	Tracks    []trackView
	Profiles  []template.HTML
	Groups    []groupRow
	FitNotes  []string
	// FitDetails are the failed or poor groups' problems, group by group,
	// printed under the table of every group.
	FitDetails [][2]string
	DepthRef   string
	CoverSigma string // what the cover sigmas include; empty without cover
	FrameText  string
	SignalText string
	Settings   [][2]string

	// PlanShows says what the plan view draws, for its caption.
	PlanShows planShows
	// Zoomed is the sentence the plan's caption adds when the plan draws
	// the traverses too short to see (planZoomed); Insets are then the
	// places with findings drawn at a larger scale (planInsets), and
	// InsetsMore says how many more places there are, if any.
	Zoomed     string
	Insets     []insetView
	InsetsMore string
	// Quadrature is true when the AC profiles are drawn in two parts,
	// in-phase and quadrature.
	Quadrature bool
}

// planShows says what the plan view (planPlot) draws, so that its caption
// names only that: Fits when a group's fit is drawn as a fitted
// conductor or object, Route when the route is drawn between used
// stations, Gap when it is drawn dotted past a station not used, Failed
// when some group's fit failed and no conductor is drawn there, and Start
// when chainage 0 is marked.
type planShows struct {
	Fits, Route, Gap, Failed, Start bool
}

func planShowsOf(d *Document) planShows {
	var ps planShows
	for _, g := range d.Groups {
		if !g.OK {
			ps.Failed = true
		} else if len(g.Sources) > 0 {
			ps.Fits = true
		}
	}
	if r := d.Route; r != nil && len(r.Stations) > 1 {
		rp := planRoute(r)
		ps.Route, ps.Gap = len(rp.runs) > 0, len(rp.gaps) > 0
	}
	_, _, ps.Start = routeStart(d)
	return ps
}

// insetView is one inset of the plan view: its figure and caption.
type insetView struct {
	SVG     template.HTML
	Caption string
}

// trackView is the section of the crew report on one further conductor.
type trackView struct {
	Number         int
	Lead           string
	Current, Depth template.HTML
	// Phase and FirstWalk are as the view's, for this conductor.
	Phase     template.HTML
	FirstWalk string
	// PairNet is the track's Route.PairNet: its current is a pair's net
	// current.
	PairNet bool
}

type findingRow struct {
	// N is the finding's number, as the plan view marks it; for the row
	// that gathers the slight misfits (minorMisfitRow), theirs.
	N        string
	Severity string
	Kind     string
	Where    string
	Message  string
	Values   string
	// Items are the gathered findings' own messages, each with its
	// number (minorMisfitRow).
	Items []string
}

// groupRow is one line of the table of groups; the per-source columns hold
// one entry per source, shown one under the other.
type groupRow struct {
	Key, Chainage, RMS, Points, Status string
	Log                                string
	// StatusShort is Status without why a fit failed or is poor, for
	// print, where the column is too narrow for the why; empty for a
	// sound fit.
	StatusShort                           string
	Current, Phase, Depth, Cover, Azimuth []string
	// Position is each source's position (the point of the conductor
	// nearest the centre of the group's readings, point_m in the result
	// document, or the route station's where it lies elsewhere, as
	// results.csv gives it: rowPlace): WGS84 latitude and longitude,
	// signed decimal degrees, when the survey is geo-referenced, else east
	// and north in metres. Depth and Cover are taken at the same place.
	Position []string
	// Conductor numbers each source when further conductors are followed
	// along the route: 1 for the first, the track's number, or "–". A
	// further conductor's number is followed by its own chainage in
	// brackets (Document.sourceChainage), the one its findings give,
	// where it differs from the group's chainage along the route.
	Conductor []string
	Bad       bool
}

func newView(d *Document) (*view, error) {
	v := &view{D: d, Cautions: Cautions, CautionShort: CautionShort}
	v.GroupCols = 10
	if len(d.Conductors) > 0 {
		v.GroupCols++
	}
	if d.Signal.Mode == SignalAC {
		v.GroupCols++
	}
	logs := map[string]bool{}
	for _, g := range d.Groups {
		logs[g.Log] = true
	}
	if len(logs) > 1 {
		v.LogCol = true
		v.GroupCols++
	}
	v.Title = d.Title
	if v.Title == "" {
		v.Title = "Buried conductor estimate"
	}
	v.ShowSite = d.Site != "" && d.Site != v.Title
	_, groundKnown := d.cover(0)
	v.CoverNA = !groundKnown
	v.CoverHead, v.DepthHead, v.DepthCol = "Cover (m)", "Depth below sensors (m)", true
	if d.DepthReference.PerLog {
		// Not below every group's own sensors (logheight.go).
		v.DepthHead = "Depth below datum (m)"
	}
	switch {
	case d.DepthReference.Kind == DepthBelowGround:
		v.CoverHead, v.DepthCol = "Cover: depth below ground (m)", false
		v.GroupCols--
	case !groundKnown:
		v.CoverHead = "Cover (m)*"
	}
	v.DepthCaption = depthCaption(d)
	for _, in := range d.Inputs {
		v.InputsNA = v.InputsNA || in.Rows == 0
	}
	v.DepthRef = depthRefText(d)
	v.SigmaFrom = "the reading noise only"
	if d.PositionSigma != nil {
		v.SigmaFrom = d.PositionSigma.Words() + ", a magnetised object's without the positions'"
	}
	v.CoverSigma = coverSigmaText(d)
	v.FrameText = "local east, north, up, metres"
	if o := d.Frame.Origin; o != nil {
		v.FrameText += fmt.Sprintf("; origin at WGS84 %s, height %.2f m", latLon(o.Lat, o.Lon, 7), o.H)
	} else {
		v.FrameText += "; not geo-referenced"
	}
	v.SignalText = "DC field"
	if d.Signal.Mode == SignalAC {
		// An estimated frequency and its window are not round numbers:
		// four decimals of a hertz and a millisecond's precision, as the
		// console gives them.
		v.SignalText = fmt.Sprintf("AC at %s Hz, %s s windows; currents are RMS",
			strconv.FormatFloat(math.Round(d.Signal.FrequencyHz*1e4)/1e4, 'f', -1, 64),
			strconv.FormatFloat(math.Round(d.Signal.WindowS*1e4)/1e4, 'f', -1, 64))
		if len(d.Signal.NuisanceHz) > 0 {
			hz := make([]string, len(d.Signal.NuisanceHz))
			for i, f := range d.Signal.NuisanceHz {
				hz[i] = strconv.FormatFloat(f, 'g', -1, 64)
			}
			v.SignalText += fmt.Sprintf("; the mains fitted alongside at %s Hz", strings.Join(hz, ", "))
		}
	}
	v.Settings = settingRows(d.Settings)
	v.summarise()
	minor := minorMisfits(d)
	for i, f := range d.Findings {
		if len(minor) > 1 && slices.Contains(minor, i) {
			continue
		}
		var vals []string
		for _, x := range f.Values {
			vals = append(vals, valueText(x))
		}
		v.Findings = append(v.Findings, findingRow{
			N: strconv.Itoa(i + 1), Severity: f.Severity, Kind: kindLabel(f.Kind),
			Where: v.where(f), Message: f.Message, Values: strings.Join(vals, "; "),
		})
	}
	if len(minor) > 1 {
		v.Findings = append(v.Findings, minorMisfitRow(d, minor))
	}
	for i := range d.Groups {
		r := v.groupRow(&d.Groups[i])
		v.Groups = append(v.Groups, r)
		if r.StatusShort != "" {
			v.FitDetails = append(v.FitDetails, [2]string{r.Key, d.Groups[i].Problem})
		}
	}
	v.FitNotes = fitNotes(d)
	if err := v.plots(); err != nil {
		return nil, err
	}
	return v, nil
}

// csvText says how results.csv and findings.csv are written in the style
// opt and how a spreadsheet reads them right. A spreadsheet set to a
// language that writes decimals with a comma takes a comma-separated
// file's "60.015" for 60015 and "0.40045" for text; one set to English
// takes a semicolon-separated file's "60,015" for 60015 (found in review).
func csvText(opt CSVOptions) string {
	if opt.DecimalComma {
		return "results.csv and findings.csv separate their fields with semicolons and write decimals with a comma (60,015), for a spreadsheet set to a language that writes them so (German, French, ...), which opens them as they are. A spreadsheet set to English reads 60,015 as 60015: import them naming the semicolon as separator and such a language for the numbers."
	}
	return "results.csv and findings.csv separate their fields with commas and write decimals with a point (60.015). A spreadsheet set to a language that writes decimals with a comma (German, French, ...) reads 60.015 as 60015 or as text: import them naming the comma as separator and English for the numbers, or write them with --csv-decimal-comma (semicolons and decimal commas)."
}

// settingShown are the options of a run that the rows above the settings
// list already say in words (signal, depth reference, cover uncertainty,
// minimum cover, corrections, the page's title): each is shown once.
var settingShown = map[string]bool{
	"freq": true, "window": true, "sensor-height": true, "reference-z": true, "ground-sigma": true,
	"min-cover": true, "cover-code": true, "calibration": true, "base": true, "title": true,
}

// settingWords names the other options of a run in words.
var settingWords = map[string]string{
	"count":               "Conductors per group",
	"group-by":            "Groups fitted separately, by column",
	"noise":               "Reading noise per axis, nT",
	"robust":              "Outlying readings down-weighted",
	"despike":             "Spikes removed",
	"step-k":              "Current steps reported beyond, in standard deviations",
	"mains":               "Mains fitted beside the signal, Hz",
	"min-step":            "Smallest change in current taken as a step, per cent",
	"column":              "Columns mapped",
	"columns":             "Columns mapped",
	"unit":                "Column units",
	"units":               "Column units",
	"delimiter":           "Field delimiter",
	"comment":             "Comment lines start with",
	"header":              "Header line",
	"frame":               "Frame of the readings",
	"origin":              "Origin of local positions",
	"decimal-comma":       "Decimal comma",
	"allow-unterminated":  "Arrow stream without its end marker read",
	"time-order":          "Time order",
	"iaga-baseline-frame": "IAGA-2002 baseline frame",
	"drop-missing":        "Readings with missing values dropped",
	"position-sigma":      "Position uncertainty in the fits (one sigma), m across the plan, in height",
}

// settingRows lists the options of a run for the report, each once and in
// words, sorted by their wording: those the rows above already say are left
// out, true and false read yes and no, and an option without wording shows
// its name with spaces for hyphens.
func settingRows(set map[string]string) [][2]string {
	var rows [][2]string
	for k, val := range set {
		if settingShown[k] {
			continue
		}
		name, ok := settingWords[k]
		if !ok {
			name = strings.ReplaceAll(k, "-", " ")
			if name != "" {
				name = strings.ToUpper(name[:1]) + name[1:]
			}
		}
		switch val {
		case "true":
			val = "yes"
		case "false":
			val = "no"
		}
		rows = append(rows, [2]string{name, val})
	}
	sort.Slice(rows, func(i, j int) bool {
		if rows[i][0] != rows[j][0] {
			return rows[i][0] < rows[j][0]
		}
		return rows[i][1] < rows[j][1]
	})
	return rows
}

func depthRefText(d *Document) string {
	if d.DepthReference.Kind == DepthBelowGround {
		return fmt.Sprintf("below the ground surface given (up = %s m)", fix(d.DepthReference.Z, 2))
	}
	// fix: a mean height of -1e-17 m reads "0.00", not "-0.00".
	s := fmt.Sprintf("below the sensors' mean height (up = %s m)", fix(d.DepthReference.Z, 2))
	if d.DepthReference.PerGroup {
		s = "below each traverse's own sensors (their mean height, given as the up of each traverse's centre; with the sensor height given, the sensors' height where they pass over each line when the logged heights differ there), not one height for the survey"
		if lo, hi, ok := groupHeights(d); ok {
			s = fmt.Sprintf("below each traverse's own sensors (their mean height, up = %s to %s m from traverse to traverse; with the sensor height given, the sensors' height where they pass over each line when the logged heights differ there), not one height for the survey", fix(lo, 2), fix(hi, 2))
		}
	}
	if h := d.DepthReference.SensorHeight; h > 0 && d.DepthReference.PerLog {
		s += fmt.Sprintf("; the logs' sensors stood at different heights above the ground, so the depths are referred to one datum %.2f m above the ground (for a log whose sensors stood at another height, its depths below them less that height plus %.2f m; see the notes), and cover = depth − %.2f m", h, h, h)
	} else if h > 0 {
		s += fmt.Sprintf("; sensors %.2f m above ground, so cover = depth − %.2f m", h, h)
	} else {
		s += "; sensor height above ground not given, so cover is not computed"
	}
	return s
}

// depthCaption says what the depth plots draw: the cover (depth below
// ground, the ground at 0) when the ground is known, else the depth below
// the sensors, with the cover shallower by their height (alongPlot).
func depthCaption(d *Document) string {
	switch h := d.DepthReference.SensorHeight; {
	case d.DepthReference.Kind == DepthBelowGround:
		return "Fitted cover (depth below the ground, which is at 0) per group with ± two standard deviations."
	case h > 0:
		return fmt.Sprintf("Fitted cover (depth below the ground, which is at 0) per group with ± two standard deviations: the fitted depth below the sensors less their %.2f m height above the ground.", h)
	}
	return "Fitted depth below the sensors per group with ± two standard deviations: not the cover, which is less by the sensors' height above the ground (not given)."
}

// coverSigmaText says what the cover sigmas include; empty when cover is not
// computed.
func coverSigmaText(d *Document) string {
	if d.DepthReference.Kind != DepthBelowGround && d.DepthReference.SensorHeight <= 0 {
		return ""
	}
	if g := d.DepthReference.GroundSigma; g > 0 {
		return fmt.Sprintf("the fitted depth uncertainties combined with %s m (one sigma) for the ground level (in quadrature)", num(g))
	}
	return "the fitted depth uncertainties only, which cover " + d.PositionSigma.Words() + "; no uncertainty of the ground level was given"
}

// sigmaNoteHTML is the report's note on what the fits' ± figures count
// (view.SigmaNote): the reading noise, and the positions' uncertainty
// where the fits were given one (Document.PositionSigma); without, a hint
// that --position-sigma counts the positions' scatter.
func sigmaNoteHTML(pos *PositionSigma) string {
	if pos == nil {
		return "The ± figures of the fits (one standard deviation) count the reading noise only, " +
			"not the error of the model: bends, a neighbouring conductor, the straight infinite line fitted " +
			"to a real conductor, errors in the sensor positions (--position-sigma counts their scatter where it is known). " +
			"Real errors are often many times larger."
	}
	return "The ± figures of the fits (one standard deviation) count " + pos.Words() + ", " + pos.Given() + " " +
		"(a magnetised object's leave the positions' uncertainty out), " +
		"not the error of the model: bends, a neighbouring conductor, the straight infinite line fitted " +
		"to a real conductor, errors in the sensor positions beyond the uncertainty given (a shift that many readings share). " +
		"Real errors are often many times larger."
}

func valueText(x Value) string {
	s := x.Name + " " + pm(x.Value, x.Sigma)
	if x.Unit != "" {
		s += " " + x.Unit
	}
	return s
}

// pm formats a value and its one-sigma uncertainty for a crew to read: the
// sigma to two significant digits and the value to the same decimal place
// ("112.7 ± 0.18", "41.9046 ± 0.0046", "-0.000332 ± 0.000013"), in plain
// decimals, however small the sigma (route.PlusMinus, which the findings'
// messages use too); a zero, infinite or missing sigma shows the value
// alone.
func pm(v, sigma float64) string {
	if !(sigma > 0) || math.IsInf(sigma, 0) {
		return num(v)
	}
	return route.PlusMinus(v, sigma)
}

// PlusMinus formats a value and its one-sigma uncertainty as the crew
// report does (pm): the sigma to two significant digits, the value to the
// same decimal place, plain decimals. Command-line tables use it too.
func PlusMinus(v, sigma float64) string { return pm(v, sigma) }

// sigText formats a sigma alone to two significant digits in plain
// decimals (route.SigmaText: "0.030", "0.00046"), however small.
func sigText(sigma float64) string {
	if !(sigma > 0) || math.IsInf(sigma, 0) {
		return num(sigma)
	}
	return route.SigmaText(sigma)
}

// num formats a value with about three significant digits, in plain
// decimals.
func num(v float64) string {
	a := math.Abs(v)
	switch {
	case a == 0:
		return "0"
	case a >= 100:
		return fmt.Sprintf("%.0f", v)
	case a >= 10:
		return fmt.Sprintf("%.1f", v)
	case a >= 1:
		return fmt.Sprintf("%.2f", v)
	case a >= 0.01:
		return fmt.Sprintf("%.3f", v)
	case a < 1e-8:
		return "0"
	}
	return fix(v, 1-int(math.Floor(math.Log10(a))))
}

// latLon writes a WGS84 position with its hemispheres, latitude first:
// "lat 54.312511° N, lon 2.084482° W".
func latLon(lat, lon float64, prec int) string {
	ns, ew := "N", "E"
	if lat < 0 {
		ns = "S"
	}
	if lon < 0 {
		ew = "W"
	}
	return fmt.Sprintf("lat %s° %s, lon %s° %s", fix(math.Abs(lat), prec), ns, fix(math.Abs(lon), prec), ew)
}

// kindLabel is a finding's kind as the crew report's findings table names
// it: the kind with spaces for hyphens, and "magnetised object" for
// dipole-anomaly (the kind findings.csv and results.json keep), a
// magnetised object being fitted as a point dipole.
func kindLabel(kind string) string {
	if kind == string(route.KindDipole) {
		return "magnetised object"
	}
	return strings.ReplaceAll(kind, "-", " ")
}

func (v *view) where(f Finding) string {
	var parts []string
	if v.D.Route != nil {
		along := ""
		if f.Conductor > 0 {
			along = fmt.Sprintf(" along conductor %d", f.Conductor)
		}
		if f.ChainageTo > f.ChainageFrom {
			parts = append(parts, fmt.Sprintf("chainage %.0f–%.0f m%s", f.ChainageFrom, f.ChainageTo, along))
		} else {
			parts = append(parts, fmt.Sprintf("chainage %.0f m%s", f.ChainageFrom, along))
		}
	}
	if f.Lone {
		// Its chainage is conductor 1's, but the line is not conductor 1.
		parts = append(parts, "a further line that no conductor's track follows, not conductor 1")
	}
	// A finding about the whole route's current has no place to dig:
	// its E/N (the route's middle) read as one (found in review).
	if !wholeRoute(&f) || v.D.Route == nil {
		parts = append(parts, en(f.Position))
		if lon, lat, ok := v.D.wgs84(f.Position); ok {
			parts = append(parts, latLon(lat, lon, 6))
		}
	}
	if len(f.Groups) > 0 {
		parts = append(parts, "groups "+strings.Join(f.Groups, ", "))
	}
	return strings.Join(parts, " · ")
}

func (v *view) groupRow(g *Group) groupRow {
	r := groupRow{Key: g.Key, Log: g.Log, Points: fmt.Sprint(g.Points), RMS: "–", Bad: !g.OK || g.Problem != ""}
	if rms, ok := GroupRMS(g); ok {
		r.RMS = rms
	}
	if r.Key == "" {
		r.Key = "(all)"
	}
	if g.Chainage != nil {
		r.Chainage = fmt.Sprintf("%.1f", *g.Chainage)
	}
	switch {
	case !g.OK:
		r.Status = "failed"
		if g.Problem != "" {
			r.StatusShort, r.Status = r.Status, r.Status+": "+g.Problem
		}
	case v.D.BaseGapOnly(g):
		// A sound fit over readings that fell in a gap of the base record:
		// the base correction under it needs review, not the fit, as the
		// terminal's summary counts it ("marked for a base gap").
		r.StatusShort = "sound; marked for review"
		r.Status = r.StatusShort + ": " + g.Problem
	case g.Problem != "" && !v.D.groupUsed(g):
		// Converged but left out of the route (past the conductor's end,
		// for one): "used with care" said the opposite of the findings.
		r.StatusShort = "poor or ambiguous, not used"
		r.Status = r.StatusShort + ": " + g.Problem
	case g.Problem != "":
		// Converged and used, but poor or ambiguous: the route's findings
		// say "used with care".
		r.StatusShort = "poor or ambiguous, used with care"
		r.Status = r.StatusShort + ": " + g.Problem
	default:
		r.Status = "ok"
		lines, objects := 0, 0
		for _, s := range g.Sources {
			if s.Kind == KindDipole {
				objects++
			} else {
				lines++
			}
		}
		switch {
		case objects > 0 && lines > 0:
			r.Status += ", with a magnetised object beside the conductor (fitted as a point dipole)"
		case objects > 0:
			r.Status += ": a magnetised object and no conductor (fitted as a point dipole)"
		}
	}
	if !g.OK {
		// A failed fit's current, depth, cover, direction and place mean
		// nothing (its problem says so): printed as numbers, a cover of
		// 0.636 m read as a plausible cable 14 m past the cable's end
		// (found in review). Dashes, and the Fit column says why.
		dash := []string{"–"}
		r.Current = []string{"fit failed, no value"}
		r.Depth, r.Cover, r.Azimuth, r.Position = dash, dash, dash, dash
		if v.D.Signal.Mode == SignalAC {
			r.Phase = dash
		}
		if len(v.D.Conductors) > 0 {
			r.Conductor = dash
		}
		return r
	}
	var cur, ph, dep, cov, az []string
	sum := v.D.summedStation(g)
	for i, s := range g.Sources {
		// Where the outputs place the source: a route station placed
		// elsewhere than its own point gives its place (rowPlace).
		at, depth, depthSigma, _ := v.D.rowPlace(g, i, &s)
		if p := g.Pair; p != nil && (i == p.Sources[0] || i == p.Sources[1]) {
			// An unresolved pair's lines are not placed; its centre is.
			at = p.Point
		}
		switch lon, lat, geo := v.D.wgs84(at); {
		case g.Pair != nil && i == g.Pair.Sources[1],
			sum != nil && i == g.SummedSources[1]:
			r.Position = append(r.Position, "–")
		case geo:
			r.Position = append(r.Position, fix(lat, 7)+", "+fix(lon, 7))
		default:
			r.Position = append(r.Position, fix(at[0], 2)+", "+fix(at[1], 2))
		}
		if len(v.D.Conductors) > 0 {
			c := "–"
			switch {
			case s.Conductor > 0:
				c = fmt.Sprint(s.Conductor)
				if own := v.D.sourceChainage(g, &s); own != nil && g.Chainage != nil {
					if o := fmt.Sprintf("%.1f", *own); o != r.Chainage {
						c += " (" + o + " m)"
					}
				}
			case i == 0 && s.Kind != KindDipole, sum != nil && i == g.SummedSources[1]:
				c = "1"
			}
			r.Conductor = append(r.Conductor, c)
		}
		if s.Kind == KindDipole {
			cur = append(cur, "object")
			dep = append(dep, pm(s.Depth, s.DepthSigma))
			// The object's cover, as results.csv, route.geojson and its
			// finding give it.
			if c, ok := v.D.cover(s.Depth); ok {
				cov = append(cov, pm(c, v.D.sourceCoverSigma(s.DepthSigma)))
			} else {
				cov = append(cov, "n/a")
			}
			continue
		}
		if p := g.Pair; p != nil && (i == p.Sources[0] || i == p.Sources[1]) {
			// An unresolved go-and-return pair: its lines' currents and
			// depths are not determined; the pair's centre and current
			// times spacing are (one entry for the pair, the net current
			// for its second line).
			if i == p.Sources[0] {
				cur = append(cur, "pair: current × spacing "+pm(p.CurrentTimesSpacing, p.CurrentTimesSpacingSigma)+" A·m (current and spacing not separable)")
				dep = append(dep, pm(p.Depth, p.DepthSigma)+" (centre)")
				if c, ok := v.D.cover(p.Depth); ok {
					cov = append(cov, pm(c, v.D.coverSigma(p.DepthSigma)))
				} else {
					cov = append(cov, "n/a")
				}
				az = append(az, pm(p.Azimuth, p.AzimuthSigma))
			} else {
				cur = append(cur, "net current of the pair "+pm(p.NetCurrent, p.NetCurrentSigma))
				dep, cov, az = append(dep, "–"), append(cov, "–"), append(az, "–")
			}
			if s.Phase != nil {
				if i == p.Sources[1] && p.NetCurrentPhase != nil && p.NetCurrentPhaseSigma != nil {
					// The net current's phase, along the pair's azimuth.
					ph = append(ph, pm(*p.NetCurrentPhase, *p.NetCurrentPhaseSigma))
				} else {
					ph = append(ph, "–")
				}
			}
			continue
		}
		if sum != nil && g.summedPart(i) {
			// A same-way split whose sum the route takes: the sum, at the
			// lines' centre, on the first line's entry, the shares on the
			// second's, as results.csv's sum_current_a and the route give
			// them.
			if i == g.SummedSources[0] {
				cur = append(cur, "sum "+pm(sum.Current, sum.CurrentSigma)+" (lines "+fmt.Sprint(i+1)+" and "+fmt.Sprint(g.SummedSources[1]+1)+")")
				if s.Phase != nil {
					if sum.Phase != nil && sum.PhaseSigma != nil {
						ph = append(ph, pm(*sum.Phase, *sum.PhaseSigma))
					} else {
						ph = append(ph, "–")
					}
				}
				dep = append(dep, pm(depth, depthSigma)+" (centre)")
				if c, ok := v.D.cover(depth); ok {
					cov = append(cov, pm(c, v.D.sourceCoverSigma(depthSigma)))
				} else {
					cov = append(cov, "n/a")
				}
			} else {
				a := g.Sources[g.SummedSources[0]]
				cur = append(cur, "of "+pm(a.Current, a.CurrentSigma)+" + "+pm(s.Current, s.CurrentSigma))
				if s.Phase != nil {
					ph = append(ph, "–")
				}
				dep, cov = append(dep, "–"), append(cov, "–")
			}
			if unresolved(&s, "azimuth") {
				az = append(az, fmt.Sprintf("%.1f (assumed)", s.Azimuth))
			} else {
				az = append(az, pm(s.Azimuth, s.AzimuthSigma))
			}
			continue
		}
		cur = append(cur, pm(s.Current, s.CurrentSigma))
		if s.Phase != nil {
			ps := 0.0
			if s.PhaseSigma != nil {
				ps = *s.PhaseSigma
			}
			ph = append(ph, pm(*s.Phase, ps))
		}
		dep = append(dep, pm(depth, depthSigma))
		if c, ok := v.D.cover(depth); ok {
			cov = append(cov, pm(c, v.D.sourceCoverSigma(depthSigma)))
		} else {
			cov = append(cov, "n/a")
		}
		if unresolved(&s, "azimuth") {
			az = append(az, fmt.Sprintf("%.1f (assumed)", s.Azimuth))
		} else {
			az = append(az, pm(s.Azimuth, s.AzimuthSigma))
		}
	}
	r.Current, r.Phase, r.Depth, r.Cover, r.Azimuth = cur, ph, dep, cov, az
	return r
}

// minorMisfits lists the indices in d.Findings of the notes on fits
// that miss their readings by more than the noise allows but by a small
// share of their signal (poor-fit findings of severity info, route
// quality.go): 12 of the demo's 18 findings were such notes, listed one
// by one, and they buried the note on a magnetised object among them
// (found in review).
func minorMisfits(d *Document) []int {
	var out []int
	for i := range d.Findings {
		if f := &d.Findings[i]; f.Kind == "poor-fit" && f.Severity == SeverityInfo {
			out = append(out, i)
		}
	}
	return out
}

// minorMisfitRow gathers the notes minor (minorMisfits, two or more) into
// one row of the findings table, the last: their numbers (those the plan
// view marks), the groups and chainages, one sentence on what they share,
// with the largest share of the signal any of them misses by, and each
// note's own words below it.
func minorMisfitRow(d *Document, minor []int) findingRow {
	var keys, msgs []string
	worst := 0.0
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, i := range minor {
		f := &d.Findings[i]
		keys = append(keys, f.Groups...)
		msgs = append(msgs, f.Message)
		lo, hi = math.Min(lo, f.ChainageFrom), math.Max(hi, f.ChainageTo)
		var res, sig float64
		for _, x := range f.Values {
			switch x.Name {
			case "rms residual":
				res = x.Value
			case "rms signal":
				sig = x.Value
			}
		}
		if sig > 0 {
			worst = math.Max(worst, res/sig)
		}
	}
	var where []string
	if d.Route != nil {
		where = append(where, fmt.Sprintf("chainage %.0f–%.0f m", lo, hi))
	}
	where = append(where, "groups "+strings.Join(keys, ", "))
	msg := fmt.Sprintf("%d fits miss their readings by more than the noise allows, but by little", len(minor))
	if worst > 0 {
		msg += fmt.Sprintf(" (at most %s%% of the signal)", sigText(100*worst))
	}
	msg += ": the straight-line model is only approximate there (a bend, a change of depth, a change of current or a nearby object, as each note says). Their estimates are used, but the share they miss by shows only part of the model's error: the estimates can be off by about twice it or more, which their ± figures are widened to count. A fit that misses by more is a caution."
	// The notes' own words, those of one kind (the same words with other
	// numbers and groups) merged into one item: their numbers, groups and
	// the range of each value.
	own := func(i int) map[string]bool {
		names := map[string]bool{}
		for _, g := range d.Findings[minor[i]].Groups {
			names[g] = true
		}
		return names
	}
	var items []string
	for _, m := range mergeNotes(msgs, own) {
		if len(m.at) == 1 {
			k := minor[m.at[0]]
			items = append(items, fmt.Sprintf("%d: %s", k+1, d.Findings[k].Message))
			continue
		}
		var idx []int
		var gs []string
		for _, a := range m.at {
			idx = append(idx, minor[a])
			gs = append(gs, d.Findings[minor[a]].Groups...)
		}
		items = append(items, fmt.Sprintf("%s (%d notes; groups %s): %s", numberRuns(idx), len(idx), strings.Join(gs, ", "), m.line()))
	}
	return findingRow{
		N: numberRuns(minor), Severity: SeverityInfo, Kind: "slight misfits",
		Where: strings.Join(where, " · "), Message: msg, Items: items,
	}
}

// numberRuns writes the findings' numbers of the indices idx (ascending),
// runs of three or more joined by a dash: "6, 8–18".
func numberRuns(idx []int) string {
	var parts []string
	for k := 0; k < len(idx); {
		j := k
		for j+1 < len(idx) && idx[j+1] == idx[j]+1 {
			j++
		}
		switch {
		case j-k >= 2:
			parts = append(parts, fmt.Sprintf("%d–%d", idx[k]+1, idx[j]+1))
		default:
			for m := k; m <= j; m++ {
				parts = append(parts, strconv.Itoa(idx[m]+1))
			}
		}
		k = j + 1
	}
	return strings.Join(parts, ", ")
}

// fitNotes gathers the fits' notes, each text once with the groups it
// applies to, in order of first appearance, and notes of one kind (the
// same words with other numbers) in one line with the range of each
// number (mergeNotes).
func fitNotes(d *Document) []string {
	var order []string
	groups := map[string][]string{}
	add := func(text, key string) {
		if _, seen := groups[text]; !seen {
			order = append(order, text)
		}
		if key == "" {
			key = "(all)"
		}
		if g := groups[text]; len(g) == 0 || g[len(g)-1] != key {
			groups[text] = append(g, key)
		}
	}
	for _, g := range d.Groups {
		for _, n := range g.Notes {
			add(n, g.Key)
		}
		for i, s := range g.Sources {
			for _, n := range s.Notes {
				switch {
				case len(g.Sources) > 1 && s.Conductor > 0:
					n = fmt.Sprintf("conductor %d: %s", s.Conductor, n)
				case len(g.Sources) > 1 && len(d.Conductors) > 0 && i > 0:
					// Not followed: its number would read as a track's.
					n = fmt.Sprintf("source %d: %s", i+1, n)
				case len(g.Sources) > 1:
					n = fmt.Sprintf("conductor %d: %s", i+1, n)
				}
				add(n, g.Key)
			}
		}
	}
	// Notes of one kind, the same words with other numbers, merged into
	// one line (mergeNotes): the range of each number, and the groups of
	// them all in the groups' order.
	rank := map[string]int{"(all)": -1}
	for i := range d.Groups {
		rank[d.Groups[i].Key] = i
	}
	var out []string
	for _, m := range mergeNotes(order, nil) {
		text := order[m.at[0]]
		if len(m.at) > 1 {
			text = m.line()
		}
		var gs []string
		seen := map[string]bool{}
		for _, a := range m.at {
			for _, g := range groups[order[a]] {
				if !seen[g] {
					seen[g] = true
					gs = append(gs, g)
				}
			}
		}
		sort.SliceStable(gs, func(a, b int) bool { return rank[gs[a]] < rank[gs[b]] })
		if len(d.Groups) == 1 {
			out = append(out, text)
			continue
		}
		out = append(out, text+" ("+plural(len(gs), "group")+": "+strings.Join(gs, ", ")+")")
	}
	return out
}

// mostPressing names the first of the most severe findings, as the
// findings table numbers it: its severity, kind, place (the chainage, or
// where there is no route its east and north) and first value. Empty
// when there are no findings, or only notes.
func (v *view) mostPressing() string {
	best := -1
	for i := range v.D.Findings {
		if best < 0 || severityRank(v.D.Findings[i].Severity) < severityRank(v.D.Findings[best].Severity) {
			best = i
		}
	}
	if best < 0 || v.D.Findings[best].Severity == SeverityInfo {
		return ""
	}
	f := v.D.Findings[best]
	place := en(f.Position)
	if v.D.Route != nil {
		place = strings.SplitN(v.where(f), " · ", 2)[0]
	}
	s := fmt.Sprintf("Most pressing: finding %d, a %s, %s at %s", best+1, f.Severity, kindLabel(f.Kind), place)
	if len(f.Values) > 0 {
		s += ": " + valueText(f.Values[0])
	}
	return s + "."
}

// en formats a local plan position east and north, in metres, without
// negative zeros: "E 59.9 m, N -4.5 m".
func en(p [3]float64) string { return "E " + fix(p[0], 1) + " m, N " + fix(p[1], 1) + " m" }

// unresolved reports whether the readings leave quantity q of s undetermined.
func unresolved(s *Source, q string) bool {
	for _, u := range s.Unidentifiable {
		if u == q {
			return true
		}
	}
	return false
}

// summarise writes the few sentences a crew lead reads first.
func (v *view) summarise() {
	d := v.D
	ok := 0
	for _, g := range d.Groups {
		if g.OK {
			ok++
		}
	}
	var warn, caut, info int
	for _, f := range d.Findings {
		switch f.Severity {
		case SeverityWarning:
			warn++
		case SeverityCaution:
			caut++
		default:
			info++
		}
	}
	switch {
	case warn+caut+info == 0:
		v.Counts = "No findings: nothing in these estimates calls for action beyond the cautions."
		if _, known := d.cover(0); known && d.MinCover == nil {
			// Nothing was checked against a minimum cover: a shallow
			// conductor gives no finding, so say so beside "no findings".
			v.Counts = "No findings: nothing in these estimates calls for action beyond the cautions; no minimum cover was given, so no cover was checked (the least cover is given above)."
		}
	default:
		v.Counts = fmt.Sprintf("%s, %s and %s (listed below, most pressing first).",
			plural(warn, "warning"), plural(caut, "caution"), plural(info, "note"))
		if m := len(minorMisfits(d)); m > 1 {
			v.Counts = fmt.Sprintf("%s, %s and %s (listed below, most pressing first; %d of the notes, on fits that miss their readings slightly, in one row at the end).",
				plural(warn, "warning"), plural(caut, "caution"), plural(info, "note"), m)
		}
	}
	if n := len(d.Warnings); n > 0 {
		v.Counts += fmt.Sprintf(" See also %s about the run at the end of the report.", plural(n, "warning"))
	}
	v.MostPressing = v.mostPressing()
	var curSig, curRel, depSig []float64
	if r := d.Route; r != nil && len(r.Stations) > 1 {
		var used []Station
		for _, s := range r.Stations {
			if s.Used {
				used = append(used, s)
			}
		}
		var line string
		switch len(used) {
		case 0:
			// No station entered the checks: nothing was traced, and the
			// route's points are those of fits that found no current.
			line = fmt.Sprintf("No conductor was found along the route: none of the %s gave a usable fit (see the findings)", plural(len(d.Groups), "group"))
		case 1:
			line = fmt.Sprintf("A conductor was found at one station only, chainage %.0f m, fitted in %d of %d groups", used[0].Chainage, ok, len(d.Groups))
		default:
			a, b := used[0].Chainage, used[len(used)-1].Chainage
			line = fmt.Sprintf("A conductor was traced for %.0f m along the route", b-a)
			if a > 0.5 || r.Length-b > 0.5 {
				line += fmt.Sprintf(" (chainage %.0f–%.0f m of %.0f m)", a, b, r.Length)
			}
			line += fmt.Sprintf(", fitted in %d of %d groups", ok, len(d.Groups))
		}
		if sound, obj := SoundGroups(d); len(used) > 0 && sound < ok {
			line += fmt.Sprintf(", %d of them soundly (", sound)
			if obj > 0 {
				line += fmt.Sprintf("%d left out as holding a magnetised object; ", obj)
			}
			line += "see the findings for the others)"
		}
		if g := gapWords(r); g != "" && len(used) > 1 {
			// A stretch with no station is no part of what was traced:
			// "traced for 180 m" ran across a river's 60 m where no
			// traverse was made (found in review).
			line += "; no station over " + g + " (see below)"
		}
		v.Headline = append(v.Headline, line+".")
		if z := ChainageZero(d); z != "" {
			v.Headline = append(v.Headline, z)
		}
		if len(used) > 0 {
			a, b := used[0], used[len(used)-1]
			what := "Current"
			if r.PairNet {
				v.Headline = append(v.Headline, PairNetSentence)
				what = "Net current"
			}
			// A route walked again at another current: both ends at the
			// first walk's level, each pooled over its repeats, not the
			// start from one walk and the end from another (a 0.435 A
			// fall along the route read as 0.299 A; found in review).
			// On an AC route each end with its phase (endCurrent).
			sentence := fmt.Sprintf("%s is %s and %s%s",
				what, endClause(d, r, &a, "chainage "), endClause(d, r, &b, ""), firstWalkClause(r))
			if strings.Contains(sentence, "∠") {
				sentence += " (phase angles " + PhaseWords(d.Signal) + ")"
			}
			v.Headline = append(v.Headline, sentence+".")
			// The shallowest station is taken from every used one (cover is
			// a safety matter); the deepest from those whose fit is sound,
			// when there are any: a bend's poor fit read 1.34 m where the
			// others reach 1.29 m in the demo (found in review).
			poor := map[string]bool{}
			for i := range d.Groups {
				if g := &d.Groups[i]; d.fitDoubted(g) {
					poor[g.Key] = true
				}
			}
			lo := used[0]
			var hi *Station
			deepPoor := false
			for i, s := range used {
				if s.Depth < lo.Depth {
					lo = s
				}
				switch {
				case poor[s.Key]:
					deepPoor = deepPoor || hi == nil || s.Depth > hi.Depth
				case hi == nil || s.Depth > hi.Depth:
					hi = &used[i]
				}
				curSig = append(curSig, s.CurrentSigma)
				if s.Current != 0 {
					curRel = append(curRel, s.CurrentSigma/math.Abs(s.Current))
				}
				depSig = append(depSig, s.DepthSigma)
			}
			if hi == nil {
				hi, deepPoor = &lo, false
				for i, s := range used {
					if s.Depth > hi.Depth {
						hi = &used[i]
					}
				}
			} else if deepPoor {
				// Some poor fit lies deeper than every sound one?
				deepPoor = false
				for _, s := range used {
					deepPoor = deepPoor || poor[s.Key] && s.Depth > hi.Depth
				}
			}
			// With further conductors this line is conductor 1's alone, and
			// the least-cover sentence gives the least cover over all of
			// them. When the ground is known the line gives the cover
			// first, the depth below the sensors after it and named so:
			// "depth below the sensors is 0.70 to 1.29 m" led the demo's
			// summary where the cover is 0.40 to 0.99 m (found in review).
			who := ""
			sidePairs := len(d.sidePairs()) > 0
			if len(d.Conductors) > 0 || sidePairs {
				who = "Conductor 1: "
			}
			clo, coverKnown := d.cover(lo.Depth)
			chi, _ := d.cover(hi.Depth)
			subj, what := "Depth below the sensors", "depth below the sensors"
			from, to := lo.Depth, hi.Depth
			if coverKnown {
				subj, what = "Cover (depth below ground)", "cover (depth below ground)"
				from, to = clo, chi
			}
			if who != "" {
				subj = who + what
			}
			var line string
			switch rng, one := span(from, to); {
			case one && !deepPoor:
				line = fmt.Sprintf("%s is %s m at every station", subj, rng)
			case one:
				line = fmt.Sprintf("%s is %s m at every station that fits soundly (deeper only where the fit is poor)", subj, rng)
			case !deepPoor:
				line = fmt.Sprintf("%s is %s m (shallowest at chainage %.0f m)", subj, rng, lo.Chainage)
			default:
				line = fmt.Sprintf("%s is %s m (shallowest at chainage %.0f m; deeper only where the fit is poor)", subj, rng, lo.Chainage)
			}
			if coverKnown && d.DepthReference.Kind != DepthBelowGround {
				rng, _ := span(lo.Depth, hi.Depth)
				line += fmt.Sprintf("; that is %s m below the sensors", rng)
			}
			// The least cover with its doubts, always: a single
			// conductor's summary gave a bare "least cover 0.846 ± 0.013
			// m" from a poor fit by a conductor's end, 11.8 sigma shallow,
			// where the terminal gave LeastCover's caveat and the cover
			// at the sound stations (found in review).
			lc := LeastCover(d)
			if c, ok := d.cover(lo.Depth); ok && lc == "" {
				line += fmt.Sprintf("; least cover %s m", pm(c, d.coverSigma(lo.DepthSigma)))
			}
			if g := gapWords(r); g != "" && lc == "" {
				// LeastCover names the gap when it has a sentence.
				if coverKnown {
					line += "; cover not known over " + g
				} else {
					line += "; depth not known over " + g
				}
			}
			v.Headline = append(v.Headline, line+".")
			if lc != "" {
				v.Headline = append(v.Headline, lc)
			}
			if gs := RouteGapSentence(d); gs != "" {
				v.Headline = append(v.Headline, gs)
			}
			if !coverKnown {
				v.Headline = append(v.Headline, NoCoverSentence)
			}
		}
		if r.StationScatterCurrent != nil && r.StationScatterDepth != nil {
			// Its size beside the fits' own sigmas, in numbers: the
			// summary said "often far more than the fits' own ±
			// figures" where the spread was the route's real fall in
			// current and the fits' sigmas were honest (found in
			// review).
			vsFits := ""
			if si, sd := medianUsedSigmas(r); si > 0 && sd > 0 {
				vsFits = fmt.Sprintf(", %.1f and %.1f times the fits' median ± figures of %s A and %s m",
					*r.StationScatterCurrent/si, *r.StationScatterDepth/sd, sigText(si), sigText(sd))
			}
			v.Scatter = fmt.Sprintf("Realistic spread: stations scatter about the line through their neighbours by %s A in current (%s of the median current) and %s m in depth, one standard deviation of a single station (robust, from %d runs of three successive stations, leaving out current steps and current anomalies)%s; expect a single station's current and depth to be off by up to about that much (the scatter also holds any real change that is not steady over two intervals, such as a bend or a sudden change of depth).",
				sigText(*r.StationScatterCurrent), pct(*r.StationScatterCurrent, medianAbsCurrent(r)), sigText(*r.StationScatterDepth), r.StationScatterTriples, vsFits)
			if r.SmallestStepSeen != nil {
				// How large a loss that scatter hides (found in
				// review: a real 40% loss under a current varying in
				// time went unreported, and nothing said so).
				v.Scatter += fmt.Sprintf(" At this scatter a change of current between two successive stations smaller than about %s A (%s of the median current) is not reported as a step: no step reported does not rule out a loss that size.",
					sigText(*r.SmallestStepSeen), pct(*r.SmallestStepSeen, medianAbsCurrent(r)))
			}
			v.Headline = append(v.Headline, v.Scatter)
		}
		for _, t := range d.Conductors {
			v.Headline = append(v.Headline, trackSummary(d, &t))
		}
	} else {
		for _, g := range d.Groups {
			for i, s := range g.Sources {
				if s.Kind == KindDipole {
					v.Headline = append(v.Headline, fmt.Sprintf("Source %d is a magnetised object, not a current, at %s, %s.",
						i+1, en(s.Point), depthWords(d, s.Depth, 0, 0, func(v, _ float64) string { return num(v) })))
					continue
				}
				line := fmt.Sprintf("Conductor %d: %s A", i+1, pm(s.Current, s.CurrentSigma))
				if s.Phase != nil {
					line += fmt.Sprintf(" RMS at %.0f°", *s.Phase)
				}
				line += ", " + depthWords(d, s.Depth, s.DepthSigma, d.sourceCoverSigma(s.DepthSigma), pm) + ", "
				if unresolved(&s, "azimuth") {
					line += fmt.Sprintf("crossing the traverse at %s (its direction is assumed, not measured: one traverse cannot tell).", en(s.Point))
				} else {
					line += fmt.Sprintf("running %.0f° from north, passing %s.", s.Azimuth, en(s.Point))
				}
				v.Headline = append(v.Headline, line)
				curSig = append(curSig, s.CurrentSigma)
				if s.Current != 0 {
					curRel = append(curRel, s.CurrentSigma/math.Abs(s.Current))
				}
				depSig = append(depSig, s.DepthSigma)
			}
		}
		if len(v.Headline) == 0 {
			v.Headline = append(v.Headline, "No conductor was found in these readings.")
		} else if _, known := d.cover(0); !known {
			v.Headline = append(v.Headline, NoCoverSentence)
		}
	}
	if len(curSig) > 0 {
		v.SigmaNote = sigmaNoteHTML(d.PositionSigma)
		noise := d.PositionSigma.Words()
		if d.BaseStation != nil {
			// The base record's own noise is in the fits' sigmas
			// (cmd/undercurrent basenoise.go).
			v.SigmaNote += " With the base-station correction they count the base record's own noise too, which every reading taken between two of its readings shares."
			noise = "the reading noise and the base station's"
			if p := d.PositionSigma; p != nil {
				noise = "the reading noise, the base station's" + strings.TrimPrefix(p.Words(), "the reading noise")
			}
		}
		what := "current"
		if d.Route != nil && d.Route.PairNet {
			what = "the pair's net current"
		}
		if d.PositionSigma == nil {
			noise += " only"
		}
		v.HowSure = fmt.Sprintf("Fit uncertainty (one standard deviation from %s, median over the fits): %s ± %s A (%s %%), depth ± %s m. Plots show ± two of these standard deviations.",
			noise, what, sigText(median(curSig)), sigText(100*median(curRel)), sigText(median(depSig)))
	}
	if ok < len(d.Groups) {
		v.HowSure = strings.TrimSpace(v.HowSure + fmt.Sprintf(" %d of %d fits failed and are not used.", len(d.Groups)-ok, len(d.Groups)))
	}
}

// ChainageZero says in a sentence where chainage 0 is on the ground and
// which way chainage runs: the route's first station (the fitted
// conductor's crossing of the first traverse along it), its position in
// the local frame and in WGS84 when the survey is geo-referenced, the
// group chainage increases towards, and the bearing it sets off on. A
// crew measuring from its own pegs must add their distance to the first
// traverse. When the first group's fit is not used (Station.Used), its
// point is not the conductor's: chainage 0 is then placed on the route
// back from the first used station, and the bearing is the route's from
// there (routeStart). It is empty without a route of two stations or
// more, or without a used station (or d is nil).
func ChainageZero(d *Document) string {
	if d == nil {
		return ""
	}
	at, dir, ok := routeStart(d)
	if !ok {
		return ""
	}
	r := d.Route
	first, last := r.Stations[0], r.Stations[len(r.Stations)-1]
	// On a route walked again the last station is one of the last
	// traverse's repeats, in the order of the walks (route.Build): the
	// route runs towards the first walk's, as it starts at the first
	// walk's.
	var used []float64
	for _, s := range r.Stations {
		if s.Used {
			used = append(used, s.Chainage)
		}
	}
	gap := route.RepeatGapAlong(used)
	end := last.Chainage
	for k := len(r.Stations) - 2; k >= 0 && r.Stations[k].Chainage > end-gap; k-- {
		last = r.Stations[k]
	}
	u := first // the first used station (routeStart found one)
	for _, s := range r.Stations {
		if s.Used {
			u = s
			break
		}
	}
	p := [3]float64{at[0], at[1], u.Point[2]}
	where := en(p)
	if lon, lat, ok := d.wgs84(p); ok {
		where += " (" + latLon(lat, lon, 6) + ")"
	}
	// Rounded to the degree first, then taken round: 359.98° reads 0°,
	// not 360°.
	bearing := math.Mod(math.Round(math.Atan2(dir[0], dir[1])*180/math.Pi)+360, 360)
	cross := "where the fitted conductor crosses the first traverse along the route, " + first.Key
	if first.Used && first.UnderCentre {
		// The first group's readings are not a traverse across the
		// conductor (route.Station.UnderCentre): its station is the
		// conductor's point under their centre.
		cross = "where the fitted conductor passes under the centre of the first group's readings along the route, " + first.Key + " (not a traverse across it)"
	}
	if !first.Used {
		// The first group's fit failed (or found an object): its point is
		// the centroid of its readings, not the conductor's, and chainage
		// 0 lies on the route taken back from the first used station.
		cross = fmt.Sprintf("on the fitted conductor level with the first traverse along the route, %s (whose fit is not used), %.1f m back along the route from %s, the first group whose fit is used",
			first.Key, u.Chainage, u.Key)
	}
	return fmt.Sprintf("Chainage 0 is %s, at %s; "+
		"chainage increases from there towards %s, setting off %.0f° from north (%s), "+
		"and is measured along the fitted route in plan (horizontal distance, shorter than a tape along sloping ground), not from the survey's pegs or marks.",
		cross, where, last.Key, bearing, compassPoint(bearing))
}

// compassPoint names the nearest of the eight principal points of the
// compass to a bearing in degrees from north: "north-east".
func compassPoint(bearing float64) string {
	names := [8]string{"north", "north-east", "east", "south-east", "south", "south-west", "west", "north-west"}
	k := int(math.Floor(math.Mod(bearing+22.5+360, 360)/45)) % 8
	return "about " + names[k]
}

// NoCoverSentence says, where the ground is not known, that the depths
// given are below the sensors and the cover shallower than them: without
// it a crew read "depth 1.75 m" as the cover over a cable 1.50 m down
// (Kestrel Moor without --sensor-height; found in review).
const NoCoverSentence = "Cover not computed: the sensors' height above the ground was not given, so every depth here is below the sensors, and the cover (the depth below the ground) is less than it by that height; give it with --sensor-height, or the ground level with --reference-z."

// PairNetSentence says what the route's current is when conductor 1 is a
// go-and-return pair (Route.PairNet).
const PairNetSentence = "The conductor is a go-and-return pair (two cores close together carrying opposite currents): the route follows the pair's centre, and its current is the pair's net current, the sum of the two cores' currents (the current that does not return through the pair), so a step in it is current leaving or joining the circuit; the cores' own currents, where the readings part them, are in the table of fits. Depth and cover are the centre's: where the readings do not part the cores, their spacing is not known, and a core laid above the other lies shallower by half of it."

// leastCoverOf is the shallowest used station of route r, its cover and
// the cover's one-sigma uncertainty (the depth sigma and the ground's in
// quadrature, as the cover findings use); ok is false when the ground is
// not known or r has no used station.
func leastCoverOf(d *Document, r *Route) (lo Station, cover, sigma float64, ok bool) {
	found := false
	for _, s := range r.Stations {
		if s.Used && (!found || s.Depth < lo.Depth) {
			lo, found = s, true
		}
	}
	if !found {
		return lo, 0, 0, false
	}
	cover, ok = d.cover(lo.Depth)
	return lo, cover, d.coverSigma(lo.DepthSigma), ok
}

// preciseCoverOf words the best determined of the used stations of r
// beside lo, its shallowest, when lo's cover is loose (route.BestDetermined:
// lo's sigma over a fifth of its cover; a sigma under half of lo's, within
// two combined sigmas of it), as "T06: 0.347 ±
// 0.0046"; empty when there is none or the ground is not known.
func preciseCoverOf(d *Document, r *Route, lo Station) string {
	var covers, sigmas []float64
	var keys []string
	low := -1
	for _, s := range r.Stations {
		if !s.Used {
			continue
		}
		c, ok := d.cover(s.Depth)
		if !ok {
			return ""
		}
		if s.Key == lo.Key && s.Depth == lo.Depth && low < 0 {
			low = len(covers)
		}
		covers, sigmas, keys = append(covers, c), append(sigmas, d.coverSigma(s.DepthSigma)), append(keys, s.Key)
	}
	if low < 0 {
		return ""
	}
	b, ok := route.BestDetermined(covers, sigmas, low)
	if !ok {
		return ""
	}
	return keys[b] + ": " + pm(covers[b], sigmas[b])
}

// LeastCover says in a sentence the least cover over every conductor
// followed along the route (conductor 1 and the further ones) and the
// go-and-return pairs reported beside conductor 1 (Group.Pair, followed
// along no route), naming the conductor and its group: "Least cover over
// the 2 conductors followed: 0.349 ± 0.00033 m, conductor 2 at T05
// (chainage 20 m along conductor 2)." A pair's cover is its centre's, and
// the sentence says that a core may lie shallower (PairCoreNote). When the
// least cover is a further conductor's that may be a model artefact (a
// weak line, or one whose current is not consistent along its track:
// coverDoubt), the sentence says so and gives the least cover of the
// others too; the shallow reading is kept, as the safe side. It is empty
// when there is no route or the ground is not known (or d is nil). Only
// used stations count, as for the cover check.
func LeastCover(d *Document) string {
	if d == nil || d.Route == nil {
		return ""
	}
	var cands []coverAt
	var soundRoute *coverAt
	if s, c, sg, ok := leastCoverOf(d, d.Route); ok {
		doubt := ""
		if !d.Route.PairNet {
			doubt = routeCoverDoubt(d, d.Route, s)
		}
		cands = append(cands, coverAt{number: 1, key: s.Key, chainage: s.Chainage, cover: c, sigma: sg, doubt: doubt, precise: preciseCoverOf(d, d.Route, s)})
		if doubt != "" {
			if u, uc, usg, ok := soundCoverOf(d, d.Route); ok {
				soundRoute = &coverAt{number: 1, key: u.Key, chainage: u.Chainage, cover: uc, sigma: usg, sound: true}
			}
		}
	}
	n, first := len(cands), 1
	for i := range d.Conductors {
		t := &d.Conductors[i]
		if s, c, sg, ok := leastCoverOf(d, &t.Route); ok {
			doubt := ""
			if !t.Route.PairNet {
				// A go-and-return pair is told by its current times
				// spacing, not by its net current, which a balanced
				// pair keeps near zero.
				doubt = coverDoubt(d, t, s)
			}
			cands = append(cands, coverAt{number: t.Number, key: s.Key, chainage: s.Chainage, cover: c, sigma: sg, doubt: doubt, pair: t.Route.PairNet, precise: preciseCoverOf(d, &t.Route, s)})
			if n == 0 {
				first = t.Number
			}
			n++
		}
	}
	pairs, pairBest := 0, -1
	var pair coverAt
	for _, i := range d.sidePairs() {
		g := &d.Groups[i]
		c, ok := d.cover(g.Pair.Depth)
		if !ok {
			continue
		}
		if pairs == 0 || c < pair.cover {
			pair = coverAt{key: g.Key, cover: c, sigma: d.coverSigma(g.Pair.DepthSigma)}
			if g.Chainage != nil {
				pair.chainage = *g.Chainage
			}
		}
		pairs++
	}
	if pairs > 0 {
		cands = append(cands, pair)
		pairBest = len(cands) - 1
	}
	if soundRoute != nil {
		// Conductor 1's shallowest sound station, the one the doubtful
		// shallowest is weighed against; it is not one more conductor.
		cands = append(cands, *soundRoute)
	}
	best, sure := -1, -1
	for i, c := range cands {
		if best < 0 || c.cover < cands[best].cover {
			best = i
		}
		if c.doubt == "" && (sure < 0 || c.cover < cands[sure].cover) {
			sure = i
		}
	}
	if best < 0 {
		return ""
	}
	var over string
	switch {
	case n == 1 && pairs == 0:
		over = "Least cover: "
	case n == 1 && first == 1:
		over = fmt.Sprintf("Least cover over conductor 1 and the go-and-return pair beside it (seen in %s): ", plural(pairs, "group"))
	case n == 1:
		over = fmt.Sprintf("Least cover over conductor %d and the go-and-return pair beside conductor 1 (seen in %s): ", first, plural(pairs, "group"))
	case n > 1 && pairs == 0:
		over = fmt.Sprintf("Least cover over the %d conductors followed: ", n)
	case n > 1:
		over = fmt.Sprintf("Least cover over the %d conductors followed and the go-and-return pair beside conductor 1 (seen in %s): ", n, plural(pairs, "group"))
	default:
		over = fmt.Sprintf("Least cover over the go-and-return pair beside conductor 1 (seen in %s): ", plural(pairs, "group"))
	}
	b := cands[best]
	line := over + pm(b.cover, b.sigma) + " m, " + b.where()
	if b.precise != "" {
		// The shallowest is loosely fitted: the safe side is kept, and the
		// best determined station of the same conductor is given beside it.
		line += "; best determined at " + b.precise + " m"
	}
	if b.doubt != "" {
		line += ", " + b.doubt
		if sure >= 0 {
			o := cands[sure]
			switch {
			case o.sound:
				line += fmt.Sprintf("; at its sound stations (fits not poor, currents agreeing with their neighbours') conductor 1's least cover is %s m at %s (chainage %.0f m)", pm(o.cover, o.sigma), o.key, o.chainage)
			case o.number == 1:
				line += fmt.Sprintf("; conductor 1's least cover is %s m at %s (chainage %.0f m)", pm(o.cover, o.sigma), o.key, o.chainage)
			case b.number == 1:
				line += fmt.Sprintf("; the least cover elsewhere is %s m, %s", pm(o.cover, o.sigma), o.where())
			default:
				line += fmt.Sprintf("; the least cover of the others is %s m, %s", pm(o.cover, o.sigma), o.where())
			}
			if b.number == 1 && soundRoute != nil && !o.sound {
				line += fmt.Sprintf("; at its sound stations conductor 1's least cover is %s m at %s (chainage %.0f m)", pm(soundRoute.cover, soundRoute.sigma), soundRoute.key, soundRoute.chainage)
			}
		}
	}
	if pairBest >= 0 && best != pairBest {
		p := cands[pairBest]
		line += fmt.Sprintf("; the go-and-return pair's centre lies under %s m at its shallowest (%s), and %s", pm(p.cover, p.sigma), p.key, PairCoreNote)
	}
	if g := gapWords(d.Route); g != "" {
		// The least cover is over the stations surveyed: across a
		// stretch with no station the cover is not known at all, and a
		// bore is deepest, or a cable may rise, just there (found in
		// review: a river's 60 m left out of an HDD survey).
		line += "; cover not known over " + g + ", where no station was surveyed"
	}
	if l, ok := d.shallowLoneLine(); ok && l.cover < cands[best].cover {
		why := "seen at too few traverses: a crossing service, for example"
		if l.along {
			// A line along the route: a cable or pipe beside conductor
			// 1 that no track links, not a crossing service (review
			// rv28b; its finding says why).
			why = "not linked into a track of its own: a cable or pipe along the route, for example; see its cover finding"
		}
		if w := route.ShallowStrong(l.current, l.cover); w != "" {
			why = "seen at too few traverses: " + w
		}
		line += fmt.Sprintf("; a further line that no conductor follows (%s) lies shallower, under %s m at %s (chainage %.0f m)", why, pm(l.cover, l.sigma), l.key, l.chainage)
		if g := d.groupByKey(l.key); g != nil && d.BaseGapOnly(g) {
			// Its fit is sound; the base correction under it needs review.
			line += ", a traverse marked for review (a gap in the base record)"
		}
	}
	return line + "."
}

// shallowLoneLine is the shallowest further line of a used group that no
// conductor's track follows (Source.Conductor 0) and that is not one of a
// go-and-return pair's lines (those count as the pair: sidePairs), whose
// current the readings determine and is at least weakCoverShare of its
// group's strongest (a weaker one may be a model artefact, coverDoubt),
// and that is not weak and steep (route.WeakSteep, as LoneCover), in a
// group whose fit has no Problem (not poor, not ambiguous): a service
// crossing the route seen at one or two traverses. The least
// cover headline is over the conductors followed, and before it gave a
// feeder's 0.93 m beside a crossing service at 0.35 m that was reported
// only in the findings (found in review). ok is false when there is none
// or the ground is not known.
func (d *Document) shallowLoneLine() (c coverAt, ok bool) {
	for i := range d.Groups {
		g := &d.Groups[i]
		if !g.OK || len(g.Sources) < 2 || !d.groupUsed(g) {
			continue
		}
		if d.fitDoubted(g) {
			// A fit the report itself doubts (poor, or ambiguous; not one
			// marked only for a base gap, whose fit is sound): its
			// further lines may be the fit's way of absorbing what the
			// model misses. Beside a 3 A loss on a go-and-return pair a
			// fit 10 times the noise split the field into three weak
			// lines 0.02-0.41 m down, and the headline sent the crew to a
			// crossing service at the surface that is not there (found in
			// review). The findings still give such lines' cover when a
			// minimum is set (addLoneCover).
			continue
		}
		main := math.Abs(g.Sources[0].Current)
		for j := 1; j < len(g.Sources); j++ {
			s := &g.Sources[j]
			if s.Kind != KindLine || s.Conductor != 0 || !finite(s.Depth) || !finite(s.DepthSigma) || s.DepthSigma < 0 {
				continue
			}
			if g.Pair != nil && (g.Pair.Sources[0] == j || g.Pair.Sources[1] == j) {
				continue
			}
			if g.summedPart(j) {
				// A share of conductor 1, whose station takes its sum
				// with line 1 (Group.SummedSources), is no further line:
				// on weld-main (seed 4) the headline sent the crew to a
				// crossing service 1.31 m down at T17, where one pipe
				// lies 1.74 m down (found in review).
				continue
			}
			if hasString(s.Unidentifiable, "current") || hasString(s.Unidentifiable, "depth") || !(math.Abs(s.Current) >= weakCoverShare*main) {
				continue
			}
			if route.WeakSteep(main, s.Current, s.Dip) {
				// Reported as a possible artefact (a bend or a change of
				// depth absorbed), and its cover not checked (LoneCover).
				continue
			}
			cv, okC := d.cover(s.Depth)
			if !okC || ok && cv >= c.cover {
				continue
			}
			c, ok = coverAt{key: g.Key, cover: cv, sigma: d.coverSigma(s.DepthSigma), current: s.Current}, true
			if a, okA := route.PlanAngle(s.Direction, g.Sources[0].Direction); okA && a < route.AlongAngle {
				c.along = true
			}
			if g.Chainage != nil {
				c.chainage = *g.Chainage
			}
		}
	}
	return c, ok
}

func hasString(list []string, v string) bool {
	for _, s := range list {
		if s == v {
			return true
		}
	}
	return false
}

// ConductorSummary says in a sentence, as the crew report's summary does,
// where further conductor t runs beside conductor 1, what it carries and
// which way, and how deep it lies; "" for a nil d or t.
func ConductorSummary(d *Document, t *Track) string {
	if d == nil || t == nil {
		return ""
	}
	return trackSummary(d, t)
}

// trackHeadline says in a sentence where a further conductor runs and
// what it carries.
func trackHeadline(d *Document, t *Track) string {
	side := "right"
	if t.Offset < 0 {
		side = "left"
	}
	what, current, depth, cover := "", "current", "depth", "cover"
	if t.Route.PairNet {
		what, current, depth, cover = ", a go-and-return pair,", "net current (the sum of its cores' currents)", "centre depth", "centre cover"
	}
	line := fmt.Sprintf("Conductor %d%s was followed for %.0f m in %d groups, %s m to the %s of conductor 1 (looking along the route)",
		t.Number, what, t.Route.Length, len(t.Route.Stations), num(math.Abs(t.Offset)), side)
	var used []Station
	for _, s := range t.Route.Stations {
		if s.Used {
			used = append(used, s)
		}
	}
	if len(used) > 0 {
		// Each end at the first walk's level on a route walked again at
		// another current, named by the first walk's station (endCurrent).
		a, b := used[0], used[len(used)-1]
		r := &t.Route
		line += fmt.Sprintf("; %s %s at %s and %s at %s%s", current,
			endCurrent(d, r, &a), r.endStation(&a).Key, endCurrent(d, r, &b), r.endStation(&b).Key, firstWalkClause(r))
		switch flowAgainst(d, used) {
		case 1:
			line += ", flowing the opposite way to conductor 1 (a return path, for example)"
		case -1:
			line += ", flowing the same way as conductor 1"
		}
		line += trackPhaseClause(t) + returnShareClause(t)
		lo, hi := used[0].Depth, used[0].Depth
		for _, s := range used {
			lo, hi = math.Min(lo, s.Depth), math.Max(hi, s.Depth)
		}
		_, one := span(lo, hi)
		line += "; " + depthRangeWords(d, lo, hi, depth, cover)
		if s, c, sg, ok := leastCoverOf(d, &t.Route); ok {
			line += fmt.Sprintf("; least cover %s m", pm(c, sg))
			if !one {
				line += " at " + s.Key
			}
			if t.Route.PairNet {
				line += " (the centre's: " + PairCoreNote + ")"
			}
		}
	}
	return line + "."
}

// flowAgainst tells whether a further conductor's DC current, over its
// used stations, flows against conductor 1's in the same groups (1), with
// it (-1), or neither can be told (0: AC, where the phases say it, no group
// in common where both currents are over two sigma, or such groups
// disagree). Each current is signed along its station's Direction, so the
// flows are compared as vectors, not by sign.
func flowAgainst(d *Document, used []Station) int {
	if d.Route == nil || d.Signal.Mode == SignalAC {
		return 0
	}
	main := map[string]Station{}
	for _, s := range d.Route.Stations {
		if s.Used {
			main[s.Key] = s
		}
	}
	against, with := 0, 0
	for _, s := range used {
		m, ok := main[s.Key]
		if !ok || s.Phase != nil || m.Phase != nil ||
			math.Abs(s.Current) <= 2*s.CurrentSigma || math.Abs(m.Current) <= 2*m.CurrentSigma {
			continue
		}
		dot := 0.0
		for k := range 2 {
			dot += s.Current * s.Direction[k] * m.Current * m.Direction[k]
		}
		switch {
		case dot < 0:
			against++
		case dot > 0:
			with++
		}
	}
	switch {
	case against > 0 && with == 0:
		return 1
	case with > 0 && against == 0:
		return -1
	}
	return 0
}

// span writes the range lo to hi with both ends to the same decimals (those
// num gives the end of larger magnitude): "0.70 to 1.34", and one value,
// with one true, when the ends agree at that precision: "1.20".
func span(lo, hi float64) (s string, one bool) {
	dec := numDecimals(math.Max(math.Abs(lo), math.Abs(hi)))
	a, b := fix(lo, dec), fix(hi, dec)
	if a == b {
		return a, true
	}
	return a + " to " + b, false
}

// numDecimals is the number of decimals num writes a value of magnitude
// a with.
func numDecimals(a float64) int {
	switch {
	case a == 0 || a >= 100:
		return 0
	case a >= 10:
		return 1
	case a >= 1:
		return 2
	case a >= 0.01:
		return 3
	}
	return 1 - int(math.Floor(math.Log10(a)))
}

// SoundGroups counts the groups whose fit is sound: converged, with no
// problem of its own, not called poor by a poor-fit caution or warning of
// the route (a misfit far above the noise), and not left out of the
// current and cover profile as a magnetised object (a point dipole
// source); objects counts the groups otherwise sound left out so. The
// report's headline and the terminal summaries count alike: the demo's
// terminal said "28 of 31 traverses fitted soundly (1 left out as holding
// a magnetised object)" and its report "31 of 31 groups, 29 of them
// soundly", counting neither the object nor the poor-fit findings (found
// in review).
func SoundGroups(d *Document) (sound, objects int) {
	poor := map[string]bool{}
	for _, f := range d.Findings {
		if f.Kind == string(route.KindPoorFit) && f.Severity != string(route.SeverityInfo) {
			for _, k := range f.Groups {
				poor[k] = true
			}
		}
	}
	for _, g := range d.Groups {
		if !g.OK || g.Problem != "" || poor[g.Key] {
			continue
		}
		if slices.ContainsFunc(g.Sources, func(s Source) bool { return s.Kind == KindDipole }) {
			objects++
		} else {
			sound++
		}
	}
	return sound, objects
}

// pct writes part as a percentage of whole, to two significant digits.
func pct(part, whole float64) string {
	if whole == 0 {
		return "n/a"
	}
	return sigText(100*part/whole) + " %"
}

// medianAbsCurrent is the median magnitude of current over r's used
// stations.
func medianAbsCurrent(r *Route) float64 {
	var a []float64
	for _, s := range r.Stations {
		if s.Used {
			v, _ := s.levelCurrent()
			a = append(a, math.Abs(v))
		}
	}
	return median(a)
}

// medianUsedSigmas is the median current sigma (at the first walk's
// level, as medianAbsCurrent) and depth sigma of route r's used stations.
func medianUsedSigmas(r *Route) (current, depth float64) {
	var si, sd []float64
	for _, s := range r.Stations {
		if s.Used {
			_, sig := s.levelCurrent()
			si, sd = append(si, sig), append(sd, s.DepthSigma)
		}
	}
	return median(si), median(sd)
}

// depthRangeWords words the depths lo to hi below the depth reference of
// a further conductor's stations for its summary sentence, the cover
// first where the ground is known and the depth below the sensors named
// so beside it, as conductor 1's line: "cover 0.70 to 0.73 m (depth
// below the sensors 1.00 to 1.03 m)", "depth below the sensors 1.00 to
// 1.03 m"; depth and cover name the quantities ("centre depth" for a
// pair).
func depthRangeWords(d *Document, lo, hi float64, depth, cover string) string {
	rng, _ := span(lo, hi)
	clo, ok := d.cover(lo)
	switch {
	case !ok:
		return fmt.Sprintf("%s %s %s m", depth, shortRef(d), rng)
	case d.DepthReference.Kind == DepthBelowGround:
		return fmt.Sprintf("%s (%s below ground) %s m", cover, depth, rng)
	}
	chi, _ := d.cover(hi)
	crng, _ := span(clo, chi)
	return fmt.Sprintf("%s %s m (%s below the sensors %s m)", cover, crng, depth, rng)
}

// depthWords words a depth for a summary sentence, the cover first when
// the ground is known: "cover 0.90 ± 0.02 m (depth below the sensors 1.20
// ± 0.01 m)", "cover 0.90 m (depth below the ground)", or "depth 1.20 m
// below the sensors"; f writes a value and its sigma.
func depthWords(d *Document, depth, depthSigma, coverSigma float64, f func(v, sigma float64) string) string {
	c, ok := d.cover(depth)
	switch {
	case !ok:
		return "depth " + f(depth, depthSigma) + " m below the sensors"
	case d.DepthReference.Kind == DepthBelowGround:
		return "cover " + f(c, coverSigma) + " m (depth below the ground)"
	}
	return "cover " + f(c, coverSigma) + " m (depth below the sensors " + f(depth, depthSigma) + " m)"
}

func shortRef(d *Document) string {
	if d.DepthReference.Kind == DepthBelowGround {
		return "below ground"
	}
	return "below the sensors"
}

func plural(n int, word string) string {
	if n == 1 {
		return "1 " + word
	}
	return fmt.Sprintf("%d %ss", n, word)
}

func median(x []float64) float64 {
	if len(x) == 0 {
		return 0
	}
	s := append([]float64(nil), x...)
	sort.Float64s(s)
	n := len(s)
	if n%2 == 1 {
		return s[n/2]
	}
	return (s[n/2-1] + s[n/2]) / 2
}

// plots renders the figures.
func (v *view) plots() error {
	d := v.D
	var err error
	plan := func(small bool) (*plot.Plot, error) {
		if small {
			return planPlot(d, smallSide)
		}
		return planPlot(d, planSide)
	}
	if v.Plan, err = figure(plan, planSide, planSide, smallSide, smallSide, "plan view of readings, fitted route and findings"); err != nil {
		return fmt.Errorf("report: plan view: %w", err)
	}
	v.PlanShows = planShowsOf(d)
	if err := v.insets(); err != nil {
		return err
	}
	if d.Route != nil && len(d.Route.Stations) > 1 {
		var err error
		if v.Current, v.Phase, v.Depth, err = alongPlots(d, d.Route, 0); err != nil {
			return err
		}
		v.FirstWalk = firstWalkName(d.Route.FirstWalk)
		if _, ok := groundDepth(d); !ok {
			v.DepthNote = "The ground and the minimum-cover line are not drawn: the sensors' height above ground was not given."
		} else if d.MinCover == nil {
			v.DepthNote = "No minimum cover was given, so none is drawn or checked."
		}
		for i := range d.Conductors {
			t := &d.Conductors[i]
			if len(t.Route.Stations) < 2 {
				continue
			}
			tv := trackView{Number: t.Number, Lead: trackSummary(d, t), PairNet: t.Route.PairNet, FirstWalk: firstWalkName(t.Route.FirstWalk)}
			if tv.Current, tv.Phase, tv.Depth, err = alongPlots(d, &t.Route, t.Number); err != nil {
				return err
			}
			v.Tracks = append(v.Tracks, tv)
		}
	}
	for _, g := range profileGroups(d) {
		build := func(bool) (*plot.Plot, error) { return profilePlot(d, g, false) }
		label := "measured and fitted field, group " + g.Key
		quad := g.Profile.hasQuadrature()
		if quad {
			label = "measured and fitted in-phase field, group " + g.Key
			v.Quadrature = true
		}
		s, err := figure(build, 20*vg.Centimeter, 8*vg.Centimeter, smallSide, smallProfile, label)
		if err != nil {
			return fmt.Errorf("report: profile of group %q: %w", g.Key, err)
		}
		v.Profiles = append(v.Profiles, s)
		if !quad {
			continue
		}
		// AC: the quadrature part too, where a fit of conductors that
		// differ in phase can miss most (a three-core cable's fit that
		// missed by 29% of the signal drew a passable in-phase part).
		build = func(bool) (*plot.Plot, error) { return profilePlot(d, g, true) }
		if s, err = figure(build, 20*vg.Centimeter, 8*vg.Centimeter, smallSide, smallProfile, "measured and fitted quadrature field, group "+g.Key); err != nil {
			return fmt.Errorf("report: quadrature profile of group %q: %w", g.Key, err)
		}
		v.Profiles = append(v.Profiles, s)
	}
	return nil
}

// alongPlots renders current, phase (AC routes with two used stations
// or more that have one; empty otherwise) and depth along route r, the
// primary route when conductor is 0, else the route of that further
// conductor.
func alongPlots(d *Document, r *Route, conductor int) (cur, ph, dep template.HTML, err error) {
	what := "the route"
	if conductor > 0 {
		what = fmt.Sprintf("conductor %d", conductor)
	}
	build := func(which string) func(bool) (*plot.Plot, error) {
		return func(narrow bool) (*plot.Plot, error) { return alongPlot(d, r, conductor, which, narrow) }
	}
	if cur, err = figure(build("current"), 20*vg.Centimeter, 8.5*vg.Centimeter, smallSide, smallAlong, "current along "+what); err != nil {
		return "", "", "", fmt.Errorf("report: current plot of %s: %w", what, err)
	}
	// AC: the phase along the route, where current leaving at an angle
	// to the line current shows as a turn that the RMS current alone
	// does not measure (found in review: the only plot was the RMS
	// current, which rose across a 3 A fault).
	if phasedStations(d, r, conductor) >= 2 {
		if ph, err = figure(build("phase"), 20*vg.Centimeter, 8.5*vg.Centimeter, smallSide, smallAlong, "phase along "+what); err != nil {
			return "", "", "", fmt.Errorf("report: phase plot of %s: %w", what, err)
		}
	}
	if dep, err = figure(build("depth"), 20*vg.Centimeter, 8.5*vg.Centimeter, smallSide, smallAlong, "depth along "+what); err != nil {
		return "", "", "", fmt.Errorf("report: depth plot of %s: %w", what, err)
	}
	return cur, ph, dep, nil
}

// phasedStations counts the used stations of route r (of conductor, 0
// for conductor 1) with an AC phase; 0 for DC.
func phasedStations(d *Document, r *Route, conductor int) int {
	if d.Signal.Mode != SignalAC {
		return 0
	}
	n := 0
	for i := range r.Stations {
		st := &r.Stations[i]
		if st.Phase != nil && st.PhaseSigma != nil && d.whyLeftOut(st, conductor) == leftUsed {
			n++
		}
	}
	return n
}

// Sizes of the figures on a phone's screen (the page's CSS shows them
// below 40rem): narrow enough that their 9-point text reads about 10 CSS
// pixels high across a phone's column of about 330 pixels, where the
// printed sizes, scaled down to it, read 5 to 7.
const (
	smallSide    = 10 * vg.Centimeter
	smallAlong   = 7 * vg.Centimeter
	smallProfile = 6.5 * vg.Centimeter
)

// insets draws the plan view's insets (planInsets) when the plan draws
// the traverses too short to see (planZoomed), and words the plan's
// caption for them.
func (v *view) insets() error {
	d := v.D
	if !planZoomed(d) {
		return nil
	}
	trav := planTraverse(d)
	ins, morePlaces, more := planInsets(d)
	v.Zoomed = fmt.Sprintf("At this scale the traverses, about %s m long, are too short to see, and findings close together share one label (1–3 for findings 1, 2 and 3)", roundTenth(trav))
	if len(ins) > 0 {
		v.Zoomed += fmt.Sprintf("; below, each place with findings is drawn %s m across, with the readings, the fitted conductor and route, the findings in it and a scale bar", roundTenth(ins[0].frame.side))
	}
	v.Zoomed += "."
	for k, in := range ins {
		p, err := planInsetPlot(d, in)
		if err != nil {
			return fmt.Errorf("report: plan inset %d: %w", k+1, err)
		}
		where := "findings " + numberRuns(in.findings)
		if len(in.findings) == 1 {
			where = fmt.Sprintf("finding %d", in.findings[0]+1)
		}
		if in.ok {
			where += fmt.Sprintf(" · chainage %.0f–%.0f m", in.chainage[0], in.chainage[1])
		}
		s, err := svg(p, insetSide, insetSide, "plan at a larger scale, "+where)
		if err != nil {
			return err
		}
		v.Insets = append(v.Insets, insetView{SVG: s, Caption: strings.ToUpper(where[:1]) + where[1:]})
	}
	if morePlaces > 0 {
		places, findings, are := "places", "findings", "are"
		if morePlaces == 1 {
			places, are = "place", "is"
		}
		if len(more) == 1 {
			findings = "finding"
		}
		v.InsetsMore = fmt.Sprintf("%d more %s with findings (%s %s) %s not drawn at a larger scale: the findings table above lists every finding with its chainage.",
			morePlaces, places, findings, numberRuns(more), are)
	}
	return nil
}

// roundTenth writes v to a tenth, without trailing zeros: "12", "2.5".
func roundTenth(v float64) string {
	return strconv.FormatFloat(math.Round(v*10)/10, 'f', -1, 64)
}

// figure renders the plot build makes at w x h, for wide screens and
// print, and again at sw x sh (build given true) for a phone's screen,
// each in a box the page's CSS shows on its own kind of screen
// (fig-wide, fig-narrow).
func figure(build func(small bool) (*plot.Plot, error), w, h, sw, sh vg.Length, label string) (template.HTML, error) {
	p, err := build(false)
	if err != nil {
		return "", err
	}
	wide, err := svg(p, w, h, label)
	if err != nil {
		return "", err
	}
	if p, err = build(true); err != nil {
		return "", err
	}
	narrow, err := svg(p, sw, sh, label)
	if err != nil {
		return "", err
	}
	return `<div class="fig-wide">` + wide + `</div><div class="fig-narrow">` + narrow + `</div>`, nil
}

// profileGroups picks up to MaxProfilePlots groups with profiles: one for
// each kind of finding (most pressing first), then the other groups named
// in findings, then the first, middle and last groups.
func profileGroups(d *Document) []*Group {
	byKey := map[string]*Group{}
	var with []*Group
	for i := range d.Groups {
		g := &d.Groups[i]
		if g.Profile != nil && len(g.Profile.Offset) > 0 {
			with = append(with, g)
			if _, dup := byKey[g.Key]; !dup {
				byKey[g.Key] = g
			}
		}
	}
	var out []*Group
	seen := map[*Group]bool{}
	add := func(g *Group) {
		if g != nil && !seen[g] && len(out) < MaxProfilePlots {
			seen[g] = true
			out = append(out, g)
		}
	}
	// One group for each kind of finding first (most pressing first): the
	// middle of the groups it names, where a run of them shows it best.
	kinds := map[string]bool{}
	for _, f := range d.Findings {
		if kinds[f.Kind] || len(f.Groups) == 0 {
			continue
		}
		if g := byKey[f.Groups[len(f.Groups)/2]]; g != nil && !seen[g] {
			kinds[f.Kind] = true
			add(g)
		}
	}
	for _, f := range d.Findings {
		if f.Severity == SeverityInfo {
			continue
		}
		for _, k := range f.Groups {
			add(byKey[k])
		}
	}
	if n := len(with); n > 0 {
		add(with[0])
		add(with[n/2])
		add(with[n-1])
	}
	sort.SliceStable(out, func(i, j int) bool {
		a, b := out[i].Chainage, out[j].Chainage
		return a != nil && b != nil && *a < *b
	})
	return out
}

// groupHeights is the range of the groups' mean sensor heights (their
// centroids' up), m; ok is false when no group has readings.
func groupHeights(d *Document) (lo, hi float64, ok bool) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for _, g := range d.Groups {
		if g.Points > 0 {
			lo, hi, ok = math.Min(lo, g.Centroid[2]), math.Max(hi, g.Centroid[2]), true
		}
	}
	return lo, hi, ok
}

// CoverColumn returns the cover of each of group g's sources as the crew
// report's table of every group gives it ("n/a" where the ground is not
// known, "–" where a source has none of its own), for the terminal's
// table; one entry, "–", for a failed fit. None for a nil d or g.
func (d *Document) CoverColumn(g *Group) []string {
	if d == nil || g == nil {
		return nil
	}
	return (&view{D: d}).groupRow(g).Cover
}

// Cover returns the cover (depth below the ground) of a depth below the
// depth reference; ok is false when the ground is not known.
func (d *Document) Cover(depth float64) (cover float64, ok bool) { return d.cover(depth) }
