package report

import (
	"bytes"
	"fmt"
	"html/template"
	"image/color"
	"math"
	"regexp"
	"sort"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgsvg"

	"undercurrent/inverse/route"
)

// The report's palette: neutral inks, one blue-green for fitted results,
// and three muted hues for the field components. Severity colours match the
// HTML.
var (
	colInk     = color.RGBA{0x1f, 0x29, 0x33, 0xff}
	colSurvey  = color.RGBA{0x9a, 0xa5, 0xb1, 0xff}
	colFit     = color.RGBA{0x1b, 0x6f, 0x8a, 0xff}
	colEast    = color.RGBA{0x1b, 0x6f, 0x8a, 0xff}
	colNorth   = color.RGBA{0x7a, 0x4e, 0x9c, 0xff}
	colUp      = color.RGBA{0xb5, 0x65, 0x1d, 0xff}
	colWarning = color.RGBA{0xb3, 0x26, 0x1e, 0xff}
	colCaution = color.RGBA{0xc9, 0x8a, 0x00, 0xff}
	colInfo    = color.RGBA{0x5f, 0x6b, 0x7a, 0xff}
	colGround  = color.RGBA{0x6b, 0x4f, 0x2a, 0xff}
	colTrack   = color.RGBA{0x3d, 0x47, 0x52, 0xff}
)

// trackDashes are the line styles of further conductors in the plan view,
// by number from 2: dashed, dotted, dash-dot, then round again. Plain
// patterns in one neutral ink, so that the conductors read apart in print
// without a colour code.
var trackDashes = [][]vg.Length{{6, 3}, {1.5, 2.5}, {6, 2.5, 1.5, 2.5}}

// trackGlyphs mark the stations of further conductors, in the same order.
var trackGlyphs = []draw.GlyphDrawer{draw.RingGlyph{}, draw.SquareGlyph{}, draw.CrossGlyph{}}

func severityColour(s string) color.Color {
	switch s {
	case SeverityWarning:
		return colWarning
	case SeverityCaution:
		return colCaution
	}
	return colInfo
}

// newPlot returns a plot with sans-serif text in the report's ink.
func newPlot(title, xlabel, ylabel string) *plot.Plot {
	p := plot.New()
	p.Title.Text = title
	p.X.Label.Text = xlabel
	p.Y.Label.Text = ylabel
	for _, st := range []*plot.Axis{&p.X, &p.Y} {
		st.Label.TextStyle.Font.Variant = "Sans"
		st.Label.TextStyle.Font.Size = vg.Points(10)
		st.Tick.Label.Font.Variant = "Sans"
		st.Tick.Label.Font.Size = vg.Points(9)
		st.Color = colInk
		st.Label.TextStyle.Color = colInk
		st.Tick.Label.Color = colInk
		st.Tick.Color = colInk
		st.Tick.Marker = exactTicks{}
	}
	p.Title.TextStyle.Font.Variant = "Sans"
	p.Title.TextStyle.Font.Size = vg.Points(11)
	p.Title.TextStyle.Color = colInk
	p.Legend.TextStyle.Font.Variant = "Sans"
	p.Legend.TextStyle.Font.Size = vg.Points(9)
	p.Legend.Top = true
	grid := plotter.NewGrid()
	grid.Vertical.Color = color.RGBA{0xe4, 0xe7, 0xeb, 0xff}
	grid.Horizontal.Color = grid.Vertical.Color
	p.Add(grid)
	return p
}

// exactTicks places ticks where plot.DefaultTicks does and labels each
// with as many decimals as the spacing of the labelled ticks needs, so
// that every label reads as its tick's value. plot.DefaultTicks formats its
// labels from the magnitude of the step alone and can round them off the
// ticks: on a range of 1.63 to 1.88 it puts "1.7" on the tick at 1.65.
type exactTicks struct{}

// Ticks implements plot.Ticker. Where plot.DefaultTicks labels fewer
// than minLabelled ticks (it labelled a depth axis of 0 to 3.7 m only "0"
// and "3"), the ticks are denseTicks' instead.
func (exactTicks) Ticks(min, max float64) []plot.Tick {
	ticks := plot.DefaultTicks{}.Ticks(min, max)
	n := 0
	for _, t := range ticks {
		if t.Label != "" {
			n++
		}
	}
	if n < minLabelled {
		if dense := denseTicks(min, max, denseLabelled); dense != nil {
			ticks = dense
		}
	}
	var vals []float64
	for _, t := range ticks {
		if t.Label != "" {
			vals = append(vals, t.Value)
		}
	}
	labels := tickLabels(vals, max-min)
	j := 0
	for i := range ticks {
		if ticks[i].Label != "" {
			ticks[i].Label = labels[j]
			j++
		}
	}
	return ticks
}

// minLabelled is the fewest labelled ticks an axis keeps from
// plot.DefaultTicks, and denseLabelled the fewest denseTicks gives in
// their place: enough to read a value off the axis to about a fifth of
// their spacing with the unlabelled ticks between.
const (
	minLabelled   = 5
	denseLabelled = 5
)

// denseTicks places labelled ticks at the largest step of 1, 2 or 5 times
// a power of ten that gives at least want of them between min and max,
// with unlabelled ticks between at a fifth of the step (a quarter for a
// step of 2); nil when the range is empty or not finite. Labels are left
// for tickLabels to write.
func denseTicks(min, max float64, want int) []plot.Tick {
	span := max - min
	if !(span > 0) || math.IsInf(span, 0) || math.IsNaN(span) {
		return nil
	}
	top := math.Floor(math.Log10(span))
	for e := top; e >= top-4; e-- {
		for _, m := range []float64{5, 2, 1} {
			step := m * math.Pow(10, e)
			first, last := math.Ceil(min/step), math.Floor(max/step)
			if last-first+1 < float64(want) {
				continue
			}
			sub := 5.0
			if m == 2 {
				sub = 4
			}
			minor := step / sub
			var ticks []plot.Tick
			for i := math.Ceil(min / minor); i <= math.Floor(max/minor); i++ {
				t := plot.Tick{Value: i * minor}
				if math.Mod(i, sub) == 0 {
					t.Value = i / sub * step
					t.Label = "x" // written by tickLabels
				}
				ticks = append(ticks, t)
			}
			return ticks
		}
	}
	return nil
}

// tickLabelTol is how far, as a fraction of the spacing of the labelled
// ticks, a label may read from its tick's value: far below what an eye can
// see on a chart, and well above the rounding error of the tick values
// themselves (1.6500000000000001).
const tickLabelTol = 1e-6

// tickLabels formats the values of labelled ticks, all with the fewest
// decimals (fixed notation) or significant digits (exponent notation, for
// values of a million and more or spacings under 1e-4) that bring every
// label within tickLabelTol of the spacing of its value. span stands in
// for the spacing with a single tick.
func tickLabels(vals []float64, span float64) []string {
	spacing := span
	for i := 1; i < len(vals); i++ {
		if d := math.Abs(vals[i] - vals[i-1]); d > 0 && (d < spacing || spacing <= 0) {
			spacing = d
		}
	}
	tol := tickLabelTol * spacing
	big := spacing < 1e-4
	for _, v := range vals {
		big = big || math.Abs(v) >= 1e6
	}
	format := func(prec int) ([]string, bool) {
		out := make([]string, len(vals))
		for i, v := range vals {
			if math.Abs(v) <= tol {
				v = 0 // not "-0.00" for a tick at -1e-17
			}
			if big {
				out[i] = strconv.FormatFloat(v, 'g', prec, 64)
			} else {
				out[i] = strconv.FormatFloat(v, 'f', prec, 64)
			}
			r, err := strconv.ParseFloat(out[i], 64)
			if err != nil || math.Abs(r-v) > tol {
				return out, false
			}
		}
		return out, true
	}
	lo := 0
	if big {
		lo = 1
	}
	for prec := lo; prec < 17; prec++ {
		if out, ok := format(prec); ok {
			return out
		}
	}
	out, _ := format(-1) // shortest exact form
	return out
}

var (
	svgProlog = regexp.MustCompile(`(?s)^<\?xml[^>]*\?>\s*(<!--.*?-->\s*)?`)
	svgSize   = regexp.MustCompile(`^<svg width="([0-9.]+)pt" height="([0-9.]+)pt"`)
)

// svg renders p at w x h and returns inline SVG markup for the HTML report:
// no XML prolog, sizes that scale with the page, and a font list that falls
// back to the reader's sans-serif when Liberation Sans is absent. The
// legend is drawn below the plot, in a strip added to h, so that it never
// hides data or the labelled lines.
func svg(p *plot.Plot, w, h vg.Length, label string) (template.HTML, error) {
	leg := p.Legend
	leg.Padding = vg.Points(3)
	lr := leg.Rectangle(draw.New(vgsvg.New(w, h)))
	lh := lr.Max.Y - lr.Min.Y
	total := h
	if lh > 0 {
		total += lh + legendGap
	}
	c := vgsvg.New(w, total)
	dc := draw.New(c)
	if lh > 0 {
		p.Legend = plot.NewLegend()
		p.Draw(draw.Crop(dc, 0, 0, lh+legendGap, 0))
		p.Legend = leg
		leg.Top, leg.Left = true, true
		leg.Draw(draw.Crop(dc, legendIndent, 0, 0, -h-legendGap/2))
	} else {
		p.Draw(dc)
	}
	var buf bytes.Buffer
	if _, err := c.WriteTo(&buf); err != nil {
		return "", fmt.Errorf("report: rendering %s: %w", label, err)
	}
	s := svgProlog.ReplaceAllString(buf.String(), "")
	s = svgSize.ReplaceAllString(s, `<svg role="img" aria-label="`+template.HTMLEscapeString(label)+`" style="width:100%;max-width:${1}pt;height:auto"`)
	s = strings.ReplaceAll(s, "font-family:Liberation Sans;", "font-family:'Liberation Sans',Arial,Helvetica,sans-serif;")
	return template.HTML(s), nil // markup produced by vgsvg, not user text
}

// legendGap is the space between a plot and its legend below it, and
// legendIndent the legend's indent from the left edge (about the width of
// the y axis's labels).
const (
	legendGap    = 0.3 * vg.Centimeter
	legendIndent = 1.6 * vg.Centimeter
)

// xy is a plotter.XYer over two slices.
type xy struct{ x, y []float64 }

func (d xy) Len() int                    { return len(d.x) }
func (d xy) XY(i int) (float64, float64) { return d.x[i], d.y[i] }

// xyErr adds symmetric y errors.
type xyErr struct {
	xy
	e []float64
}

func (d xyErr) YError(i int) (float64, float64) { return d.e[i], d.e[i] }

// scatter adds points with the given glyph and colour and returns them.
func scatter(p *plot.Plot, d xy, shape draw.GlyphDrawer, c color.Color, radius vg.Length) (*plotter.Scatter, error) {
	if d.Len() == 0 {
		return nil, nil
	}
	s, err := plotter.NewScatter(d)
	if err != nil {
		return nil, err
	}
	s.GlyphStyle = draw.GlyphStyle{Color: c, Radius: radius, Shape: shape}
	p.Add(s)
	return s, nil
}

// polyline adds a line and returns it.
func polyline(p *plot.Plot, d xy, c color.Color, width vg.Length, dashes ...vg.Length) (*plotter.Line, error) {
	if d.Len() < 2 {
		return nil, nil
	}
	l, err := plotter.NewLine(d)
	if err != nil {
		return nil, err
	}
	l.LineStyle = draw.LineStyle{Color: c, Width: width, Dashes: dashes}
	p.Add(l)
	return l, nil
}

// planCell is the size of the cells of the plan view in which one reading
// stands for all: under a third of a reading's dot (2.4 pt across), so
// that thinning changes nothing the eye can see.
const planCell = 0.5 // pt

// insetCell is planCell for the plan's insets (planInsetPlot): half a
// reading's dot, so that the dots along a traverse still overlap into one
// grey stroke. Half-point cells drew a traverse 12 m long in an inset 40 m
// across as about 240 dots, 130 kB of SVG an inset.
const insetCell = 1.2 // pt

// thinToCells keeps one reading (the first) in each planCell-sized cell of a
// figure side wide, and the readings at the extremes of east and north,
// so that the plan view's readings grow with the ground they cover, not
// with their number. Every group's profile readings drawn one by one made
// a 600-traverse survey's report 32 MB, 144 000 dots in 3 000 visible
// places, drawn twice (wide and phone). The cells are the readings' own
// extent divided by side/planCell: the plot's axes span at least that
// extent over less than side, so a cell is never wider than planCell on
// the page.
func thinToCells(x, y []float64, side vg.Length) (tx, ty []float64) {
	return thinToCellsBy(x, y, side, planCell)
}

// thinToCellsBy is thinToCells with cells cell points across.
func thinToCellsBy(x, y []float64, side vg.Length, cell float64) (tx, ty []float64) {
	n := len(x)
	if n < 2 || side <= 0 {
		return x, y
	}
	ext := math.Max(maxOf(x)-minOf(x), maxOf(y)-minOf(y))
	if !(ext > 0) || math.IsInf(ext, 0) {
		return x[:1], y[:1]
	}
	cell = ext * cell / float64(side.Points())
	x0, y0 := minOf(x), minOf(y)
	extreme := map[int]bool{}
	lo, hi, south, north := 0, 0, 0, 0
	for i := range x {
		if x[i] < x[lo] {
			lo = i
		}
		if x[i] > x[hi] {
			hi = i
		}
		if y[i] < y[south] {
			south = i
		}
		if y[i] > y[north] {
			north = i
		}
	}
	for _, i := range []int{lo, hi, south, north} {
		extreme[i] = true
	}
	seen := map[[2]int64]bool{}
	for i := range x {
		c := [2]int64{int64(math.Floor((x[i] - x0) / cell)), int64(math.Floor((y[i] - y0) / cell))}
		if seen[c] && !extreme[i] {
			continue
		}
		seen[c] = true
		tx, ty = append(tx, x[i]), append(ty, y[i])
	}
	return tx, ty
}

// planPlot is the plan view, to be drawn side long square: survey
// points, the fitted route and conductors, and numbered findings. On a
// route much longer than its traverses (planZoomed) findings close
// together share a label that lists their numbers in runs ("1–3, 5"),
// and planInsetPlot draws the places with findings again at a larger
// scale.
func planPlot(d *Document, side vg.Length) (*plot.Plot, error) {
	return drawPlan(d, side, nil, planZoomed(d))
}

// drawPlan draws the plan view side long square: the whole survey when
// frame is nil, else only the square frame of it (an inset, without a
// legend, with a scale bar). ranges is planPlot's: findings' shared
// labels list their numbers in runs.
func drawPlan(d *Document, side vg.Length, frame *planFrame, ranges bool) (*plot.Plot, error) {
	p := newPlot("", "east (m)", "north (m)")
	var sx, sy []float64
	for _, g := range d.Groups {
		if g.Profile == nil {
			continue
		}
		for _, q := range g.Profile.Positions {
			sx, sy = append(sx, q[0]), append(sy, q[1])
		}
	}
	tx, ty := sx, sy
	if frame != nil {
		tx, ty = frame.keep(sx, sy)
	}
	cell := planCell
	if frame != nil {
		cell = insetCell
	}
	tx, ty = thinToCellsBy(tx, ty, side, cell)
	s, err := scatter(p, xy{tx, ty}, draw.CircleGlyph{}, colSurvey, 1.2)
	if err != nil {
		return nil, err
	}
	if s != nil {
		p.Legend.Add("readings", s)
	}
	// Conductors over the stretch each group's readings see. Without a
	// route they are drawn at least a quarter of the survey's extent long,
	// so that a conductor crossing a single traverse shows; along a route
	// the route itself shows the way and long strokes would clutter it.
	minHalf := 1.0
	if len(sx) > 0 && (d.Route == nil || len(d.Route.Stations) < 2) {
		ext := math.Hypot(maxOf(sx)-minOf(sx), maxOf(sy)-minOf(sy))
		minHalf = math.Max(minHalf, ext/8)
	}
	var shown bool
	for _, g := range d.Groups {
		if !g.OK {
			// A failed fit (no current found, or nothing fitted): its
			// lines' positions and directions mean nothing, and drawn
			// as fitted conductors they showed a conductor where none
			// was found. Its readings show where the group was.
			continue
		}
		for _, src := range g.Sources {
			if src.Kind == KindDipole {
				if frame != nil && !frame.has(src.Point[0], src.Point[1]) {
					continue
				}
				if _, err := scatter(p, xy{[]float64{src.Point[0]}, []float64{src.Point[1]}}, draw.BoxGlyph{}, colInfo, 3.5); err != nil {
					return nil, err
				}
				continue
			}
			lo, hi := src.Span[0], src.Span[1]
			if mid := (lo + hi) / 2; hi-lo < 2*minHalf {
				lo, hi = mid-minHalf, mid+minHalf
			}
			a, b := along(src.Point, src.Direction, lo), along(src.Point, src.Direction, hi)
			l, err := polyline(p, xy{[]float64{a[0], b[0]}, []float64{a[1], b[1]}}, colFit, 1.2)
			if err != nil {
				return nil, err
			}
			if l != nil && !shown {
				p.Legend.Add("fitted conductor", l)
				shown = true
			}
		}
	}
	if r := d.Route; r != nil && len(r.Stations) > 1 {
		rp := planRoute(r)
		name := "fitted route"
		if len(d.Conductors) > 0 {
			name = "fitted route, conductor 1"
		}
		var named bool
		for _, run := range rp.runs {
			l, err := polyline(p, run, colFit, 2.2)
			if err != nil {
				return nil, err
			}
			if l != nil && !named {
				p.Legend.Add(name, l)
				named = true
			}
		}
		var gapNamed bool
		for _, gap := range rp.gaps {
			l, err := polyline(p, gap, colFit, 1, 1.5, 2.5)
			if err != nil {
				return nil, err
			}
			if l != nil && !gapNamed {
				p.Legend.Add("route past a station not used", l)
				gapNamed = true
			}
		}
		used := rp.used
		if frame != nil {
			used.x, used.y = frame.keep(used.x, used.y)
		}
		if _, err := scatter(p, used, draw.CircleGlyph{}, colFit, 2.2); err != nil {
			return nil, err
		}
	}
	for _, t := range d.Conductors {
		if len(t.Route.Stations) < 2 {
			continue
		}
		var tx, ty []float64
		for _, st := range t.Route.Stations {
			tx, ty = append(tx, st.Point[0]), append(ty, st.Point[1])
		}
		k := (t.Number - 2) % len(trackDashes)
		if k < 0 {
			k = 0
		}
		l, err := polyline(p, xy{tx, ty}, colTrack, 1.4, trackDashes[k]...)
		if err != nil {
			return nil, err
		}
		gx, gy := tx, ty
		if frame != nil {
			gx, gy = frame.keep(tx, ty)
		}
		s, err := scatter(p, xy{gx, gy}, trackGlyphs[k], colTrack, 2)
		if err != nil {
			return nil, err
		}
		if s != nil {
			p.Legend.Add(fmt.Sprintf("conductor %d", t.Number), l, s)
		} else {
			p.Legend.Add(fmt.Sprintf("conductor %d", t.Number), l)
		}
	}
	if at, dir, ok := routeStart(d); ok && (frame == nil || frame.has(at[0], at[1])) {
		m := chainageStart{at: at, dir: dir}
		p.Add(m)
		p.Legend.Add("chainage 0, increasing along the arrow", m)
	}
	if err := addFindingMarks(p, d, side, frame, ranges); err != nil {
		return nil, err
	}
	if frame == nil {
		squareUp(p)
		return p, nil
	}
	p.Legend = plot.NewLegend()
	frame.axes(p)
	p.Add(frame.bar())
	return p, nil
}

// planRoutePath is how the plan view draws a route: runs of two or more
// successive used stations (Station.Used) as the fitted route, the
// stretches between used stations across stations not used as gaps (a
// thin dotted line), as are unsurveyed gaps (RouteGaps), and the used
// stations' points. A station not used
// (a failed fit, no current found, an object) has no conductor point of
// its own (a failed fit's is the centre of its readings), so the route is
// broken there as route.geojson breaks it, and is drawn no further than
// its first and last used stations: before, it ran on through the failed
// fits past a conductor's end, and through every station of a survey
// where nothing was found.
type planRoutePath struct {
	runs, gaps []xy
	used       xy
}

func planRoute(r *Route) planRoutePath {
	var out planRoutePath
	var run xy
	prev := -1 // the last used station
	flush := func() {
		if run.Len() > 1 {
			out.runs = append(out.runs, run)
		}
		run = xy{}
	}
	unsurveyed := RouteGaps(r)
	for i, st := range r.Stations {
		if !st.Used {
			continue
		}
		// Across stations not used, and across an unsurveyed gap
		// (RouteGaps), which route.geojson draws apart too: dotted.
		if prev >= 0 && (prev != i-1 || inGap(unsurveyed, math.Min(r.Stations[prev].Chainage, st.Chainage), math.Max(r.Stations[prev].Chainage, st.Chainage))) {
			flush()
			a := r.Stations[prev].Point
			out.gaps = append(out.gaps, xy{[]float64{a[0], st.Point[0]}, []float64{a[1], st.Point[1]}})
		}
		run.x, run.y = append(run.x, st.Point[0]), append(run.y, st.Point[1])
		out.used.x, out.used.y = append(out.used.x, st.Point[0]), append(out.used.y, st.Point[1])
		prev = i
	}
	flush()
	return out
}

func minOf(x []float64) float64 {
	m := math.Inf(1)
	for _, v := range x {
		m = math.Min(m, v)
	}
	return m
}

func maxOf(x []float64) float64 {
	m := math.Inf(-1)
	for _, v := range x {
		m = math.Max(m, v)
	}
	return m
}

// planSide is the side of the plan view's square (smallSide on a phone's
// screen), and planMargin about the room its axes take: labels on the
// plan are placed with the metres per point of the plotting area inside.
const (
	planSide   = 16 * vg.Centimeter
	planMargin = 1.5 * vg.Centimeter
)

// markLabel is the label of one or more findings on the plan view: their
// numbers, the position of the first (the most pressing), and the offset
// of the label's lower left corner from it, points.
type markLabel struct {
	x, y   float64
	text   string
	offset vg.Point
}

// Label geometry on the plan view, points: the triangles' radius, the gap
// between a mark and its label, and the distance within which marks share
// one label.
const (
	markRadius = 4
	markGap    = 2
	markShare  = 10
)

// ptBox is a rectangle on the plan view in points, at the scale its
// labels are placed with: lower left (x0, y0) to upper right (x1, y1).
type ptBox struct{ x0, y0, x1, y1 float64 }

func (a ptBox) overlaps(b ptBox) bool {
	return a.x0 < b.x1 && b.x0 < a.x1 && a.y0 < b.y1 && b.y0 < a.y1
}

// grow returns a widened by m points on every side.
func (a ptBox) grow(m float64) ptBox { return ptBox{a.x0 - m, a.y0 - m, a.x1 + m, a.y1 + m} }

// within reports whether a lies inside b.
func (a ptBox) within(b ptBox) bool {
	return a.x0 >= b.x0 && a.y0 >= b.y0 && a.x1 <= b.x1 && a.y1 <= b.y1
}

// hitsAny reports whether b overlaps any of the boxes avoid.
func hitsAny(b ptBox, avoid []ptBox) bool {
	for _, q := range avoid {
		if b.overlaps(q) {
			return true
		}
	}
	return false
}

// findingLabels numbers the findings for the plan view, at scale metres
// per point, with text style st. Findings are taken most pressing first
// (their order in the document); one whose mark lies within markShare
// points of an earlier label's mark joins that label ("1,8"), so that a
// note at the place of a warning does not print its number over the
// warning's. Each label then takes the first place beside its mark, right
// and above, right and below, left and above, left and below, then
// further up and down, that overlaps neither a label placed before it
// nor any finding's mark.
func findingLabels(fs []Finding, scale float64, st text.Style) []markLabel {
	out, _, _ := placeFindingLabels(fs, scale, st, nil)
	return out
}

// placeFindingLabels is findingLabels keeping clear of the boxes avoid
// too, where it can (the chainage-0 mark). It returns the labels, and the
// boxes, points, of the labels and of every finding's mark, which the
// plan's other labels keep clear of.
func placeFindingLabels(fs []Finding, scale float64, st text.Style, avoid []ptBox) (labels []markLabel, texts, marks []ptBox) {
	join := func(idx []int) string {
		nums := make([]string, len(idx))
		for k, i := range idx {
			nums[k] = strconv.Itoa(i + 1)
		}
		return strings.Join(nums, ",")
	}
	return placeLabelsOf(fs, scale, st, avoid, nil, join)
}

// placeLabelsOf is placeFindingLabels for the findings for which keep is
// true (all when it is nil), each label's text join of the indices of its
// findings (ascending).
func placeLabelsOf(fs []Finding, scale float64, st text.Style, avoid []ptBox, keep func(*Finding) bool, join func([]int) string) (labels []markLabel, texts, marks []ptBox) {
	var out []markLabel
	var nums [][]int
	shown := func(f *Finding) bool { return onPlan(f) && (keep == nil || keep(f)) }
	for i, f := range fs {
		if !shown(&f) {
			continue
		}
		joined := false
		for k := range out {
			if math.Hypot(f.Position[0]-out[k].x, f.Position[1]-out[k].y) <= markShare*scale {
				nums[k] = append(nums[k], i)
				joined = true
				break
			}
		}
		if !joined {
			out = append(out, markLabel{x: f.Position[0], y: f.Position[1]})
			nums = append(nums, []int{i})
		}
	}
	pt := func(l markLabel) (float64, float64) { return l.x / scale, l.y / scale }
	r, g := float64(markRadius), float64(markGap)
	for _, f := range fs {
		if !shown(&f) {
			continue
		}
		mx, my := f.Position[0]/scale, f.Position[1]/scale
		marks = append(marks, ptBox{mx - r, my - r, mx + r, my + r})
	}
	var placed []ptBox
	for k := range out {
		out[k].text = join(nums[k])
		w, h := float64(st.Width(out[k].text)), float64(st.Height(out[k].text))
		px, py := pt(out[k])
		cands := [][2]float64{{r + g, g}, {r + g, -g - h}, {-r - g - w, g}, {-r - g - w, -g - h}}
		for n := 1; n <= 2*len(out)+2; n++ {
			cands = append(cands, [2]float64{r + g, g + float64(n)*h}, [2]float64{r + g, -g - h - float64(n)*h})
		}
		// The first place clear of the other labels and the marks, and
		// of avoid too when there is one.
		choice, found := cands[0], false
		for _, strict := range []bool{true, false} {
			for _, c := range cands {
				b := ptBox{px + c[0], py + c[1], px + c[0] + w, py + c[1] + h}
				if hitsAny(b, placed) || hitsAny(b, marks) || strict && hitsAny(b, avoid) {
					continue
				}
				choice, found = c, true
				break
			}
			if found {
				break
			}
		}
		out[k].offset = vg.Point{X: vg.Length(choice[0]), Y: vg.Length(choice[1])}
		placed = append(placed, ptBox{px + choice[0], py + choice[1], px + choice[0] + w, py + choice[1] + h})
	}
	return out, placed, marks
}

// The chainage-0 mark on the plan view, points: the radius of the ring
// round the route's first station, and the length of the arrow from it
// along increasing chainage, of its head, and the head's half width.
const (
	startRing = 5.0
	arrowLen  = 32.0
	arrowHead = 8.0
	arrowHalf = 4.0
)

// chainageStart marks chainage 0 on the plan view: a ring round the
// route's first station, at (in metres), and an arrow from it towards
// increasing chainage, along the unit vector dir. It is drawn in points,
// so that it reads the same at every scale, in ink over a white halo so
// that it shows on the route's line.
type chainageStart struct {
	at, dir [2]float64
}

// Plot implements plot.Plotter.
func (c chainageStart) Plot(dc draw.Canvas, plt *plot.Plot) {
	trX, trY := plt.Transforms(&dc)
	p := vg.Point{X: trX(c.at[0]), Y: trY(c.at[1])}
	q := vg.Point{X: trX(c.at[0] + c.dir[0]), Y: trY(c.at[1] + c.dir[1])}
	drawStartMark(&dc, p, q.Sub(p), startRing, arrowLen, arrowHead, arrowHalf)
}

// Thumbnail implements plot.Thumbnailer: the mark in small, for the
// legend.
func (chainageStart) Thumbnail(c *draw.Canvas) {
	y := (c.Min.Y + c.Max.Y) / 2
	w := c.Max.X - c.Min.X
	drawStartMark(c, vg.Point{X: c.Min.X + 3, Y: y}, vg.Point{X: 1}, 2.5, w-3, 5, 2.6)
}

// drawStartMark draws a ring of radius ring at p and an arrow from it of
// length long, with a head head long and twice half wide, along d.
func drawStartMark(c *draw.Canvas, p, d vg.Point, ring, long, head, half vg.Length) {
	n := vg.Length(math.Hypot(float64(d.X), float64(d.Y)))
	if n == 0 {
		return
	}
	u := vg.Point{X: d.X / n, Y: d.Y / n}
	perp := vg.Point{X: -u.Y, Y: u.X}
	from, base, tip := p.Add(u.Scale(ring)), p.Add(u.Scale(long-head)), p.Add(u.Scale(long))
	headPts := []vg.Point{tip, base.Add(perp.Scale(half)), base.Sub(perp.Scale(half))}
	white := color.White
	var circle vg.Path
	circle.Move(p.Add(vg.Point{X: ring}))
	circle.Arc(p, ring, 0, 2*math.Pi)
	circle.Close()
	for _, sty := range []draw.LineStyle{{Color: white, Width: 3.4}, {Color: colInk, Width: 1.5}} {
		c.SetLineStyle(sty)
		c.Stroke(circle)
		c.StrokeLines(sty, []vg.Point{from, base})
	}
	c.StrokeLines(draw.LineStyle{Color: white, Width: 2}, append(headPts, tip))
	c.FillPolygon(colInk, headPts)
}

// startBoxes are the boxes, points, that the chainage-0 mark covers at p
// (points) with unit direction u.
func startBoxes(p, u [2]float64) []ptBox {
	r := startRing + 1
	out := []ptBox{{p[0] - r, p[1] - r, p[0] + r, p[1] + r}}
	for s := startRing; s <= arrowLen; s += arrowHalf {
		x, y := p[0]+s*u[0], p[1]+s*u[1]
		out = append(out, ptBox{x - arrowHalf, y - arrowHalf, x + arrowHalf, y + arrowHalf})
	}
	return out
}

// routeStart is the place of chainage 0 on the fitted route and the unit
// direction, east and north, in which chainage increases from there: the
// first used station (Station.Used) and the direction towards the next
// used one that is not its repeat (its own direction if there is none),
// with chainage 0 taken back along that direction by the station's
// chainage when stations before it were left out. ok is false without a
// route of two stations or more, or without a used station.
//
// A repeat is a station closer along the route than the route's repeat
// distance (route.RepeatGapAlong: a route walked again, the same
// traverse's crossing by the other walk, millimetres away). The bearing
// had been taken to the first station's own repeat, 1.4 mm off across
// the traverse, so on a route running east the summary said chainage
// set off 177° from north and the plan's arrow pointed across the route
// (found in review).
func routeStart(d *Document) (at, dir [2]float64, ok bool) {
	r := d.Route
	if r == nil || len(r.Stations) < 2 {
		return at, dir, false
	}
	// A station whose fit failed or was taken for an object takes no part
	// in the route's chain, chainage or orientation: its point is the
	// centroid of its readings, not the conductor's. Chainage 0 is then
	// found back along the route from the first used station.
	first := -1
	for i := range r.Stations {
		if r.Stations[i].Used {
			first = i
			break
		}
	}
	if first < 0 {
		return at, dir, false
	}
	s0 := r.Stations[first]
	p0 := [2]float64{s0.Point[0], s0.Point[1]}
	var used []float64
	for _, st := range r.Stations {
		if st.Used {
			used = append(used, st.Chainage)
		}
	}
	gap := route.RepeatGapAlong(used)
	for _, st := range r.Stations[first+1:] {
		if !st.Used || st.Chainage-s0.Chainage < gap {
			continue
		}
		dx, dy := st.Point[0]-p0[0], st.Point[1]-p0[1]
		if n := math.Hypot(dx, dy); n > 1e-6 {
			dir, ok = [2]float64{dx / n, dy / n}, true
			break
		}
	}
	if !ok {
		u := s0.Direction
		n := math.Hypot(u[0], u[1])
		if !(n > 0) {
			return at, dir, false
		}
		dir, ok = [2]float64{u[0] / n, u[1] / n}, true
	}
	at = [2]float64{p0[0] - s0.Chainage*dir[0], p0[1] - s0.Chainage*dir[1]}
	return at, dir, true
}

// labelBeyond is the box of a label w x h points that lies gap points
// beyond the point p (points) in the unit direction n.
func labelBeyond(p, n [2]float64, w, h, gap float64) ptBox {
	reach := gap + math.Abs(n[0])*w/2 + math.Abs(n[1])*h/2
	cx, cy := p[0]+n[0]*reach, p[1]+n[1]*reach
	return ptBox{cx - w/2, cy - h/2, cx + w/2, cy + h/2}
}

// labelAt makes the label text at (x, y) metres drawn in box b (points,
// at scale metres per point).
func labelAt(x, y float64, text string, b ptBox, scale float64) markLabel {
	return markLabel{x: x, y: y, text: text, offset: vg.Point{X: vg.Length(b.x0 - x/scale), Y: vg.Length(b.y0 - y/scale)}}
}

// startLabel places "chainage 0", after the name of the first group
// (key) when it has one ("T01, chainage 0"), beside the ring at the
// route's first station: behind it (against the arrow) where there is room, else on
// the side of the route away from the groups' labels (side, as
// labelSide), else on theirs, else at a corner (behind first, away from
// the groups' labels first), beyond the first group's readings (its
// traverse) in each of these directions, keeping clear of avoid
// and inside area; ok is false when there is no such place.
func startLabel(key string, at, dir [2]float64, readings [][3]float64, side, scale float64, st text.Style, avoid []ptBox, area ptBox) (markLabel, ptBox, bool) {
	texts := []string{"chainage 0"}
	if key != "" {
		texts = []string{key + ", chainage 0", "chainage 0"}
	}
	p := [2]float64{at[0] / scale, at[1] / scale}
	gap := startRing + markGap
	away := [2]float64{dir[1] * side, -dir[0] * side}
	mix := func(a, b float64) [2]float64 {
		x, y := a*dir[0]+b*away[0], a*dir[1]+b*away[1]
		n := math.Hypot(x, y)
		return [2]float64{x / n, y / n}
	}
	dirs := [][2]float64{mix(-1, 0), mix(0, 1), mix(0, -1), mix(-1, 1), mix(-1, -1), mix(1, 1), mix(1, -1)}
	for _, txt := range texts {
		w, h := float64(st.Width(txt)), float64(st.Height(txt))
		var cands []ptBox
		for _, more := range []float64{0, h} {
			for _, n := range dirs {
				// Beyond the first traverse's readings that way; above
				// or below, also flush with the ring's left or right,
				// where a centred label would leave the plot.
				reach := 0.0
				for _, q := range readings {
					reach = math.Max(reach, ((q[0]-at[0])*n[0]+(q[1]-at[1])*n[1])/scale)
				}
				b := labelBeyond(p, n, w, h, math.Max(gap, reach+groupLabelGap)+more)
				cands = append(cands, b)
				if math.Abs(n[1]) > 0.7 {
					for _, x0 := range []float64{p[0] - startRing, p[0] + startRing - w} {
						cands = append(cands, ptBox{x0, b.y0, x0 + w, b.y1})
					}
				}
			}
		}
		for _, b := range cands {
			if b.within(area) && !hitsAny(b, avoid) {
				return labelAt(at[0], at[1], txt, b, scale), b, true
			}
		}
	}
	return markLabel{}, ptBox{}, false
}

// groupLabelGap is the gap, points, between the end of a traverse's
// readings and its label on the plan view, and groupLabelSpace the least
// space between a group's label and another label or mark.
const (
	groupLabelGap   = 3.0
	groupLabelMore  = 2 * startRing
	groupLabelSpace = 9.0
)

// labelSteps are the steps, in stations, at which groups are labelled
// along the route: every station, every second, ..., the first that
// leaves room between their labels.
var labelSteps = []int{1, 2, 5, 10, 20, 50, 100, 200, 500, 1000}

// groupLabels names the groups on the plan view, at scale metres per
// point with text style st. Along a route, each label lies just beyond
// the end of its traverse's readings, on the side of the route away from
// further conductors (the left, looking along increasing chainage, when
// there are none), or on the other side where that is taken; every
// station is labelled when the labels fit, else every Nth from the first
// (N the least of labelSteps at which neighbouring labels keep
// groupLabelSpace apart), and the last station too where it fits.
// Without a route, each group with a name is labelled beside the centre
// of its readings. Where a label's place is taken it moves a little
// further out, then to the other side; a label that would still overlap
// marks (the findings' and the chainage-0 mark), come within
// groupLabelSpace of texts (the other labels) or another group's label,
// or leave area is left out. The first station is not labelled when
// firstNamed (the chainage-0 label names it). It returns the labels and
// their boxes.
func groupLabels(d *Document, scale float64, st text.Style, marks, texts []ptBox, area ptBox, firstNamed bool) ([]markLabel, []ptBox) {
	byKey := map[string]*Group{}
	for i := range d.Groups {
		if _, dup := byKey[d.Groups[i].Key]; !dup {
			byKey[d.Groups[i].Key] = &d.Groups[i]
		}
	}
	readings := func(key string) [][3]float64 {
		if g := byKey[key]; g != nil && g.Profile != nil {
			return g.Profile.Positions
		}
		return nil
	}
	var out []markLabel
	var boxes []ptBox
	fits := func(b ptBox) bool {
		g := b.grow(groupLabelSpace)
		return b.within(area) && !hitsAny(b, marks) && !hitsAny(g, texts) && !hitsAny(g, boxes)
	}
	r := d.Route
	if r == nil || len(r.Stations) < 2 {
		named := 0
		for _, g := range d.Groups {
			if g.Key != "" {
				named++
			}
		}
		if named < 2 {
			return nil, nil
		}
		for _, g := range d.Groups {
			if g.Key == "" {
				continue
			}
			w, h := float64(st.Width(g.Key)), float64(st.Height(g.Key))
			p := [2]float64{g.Centroid[0] / scale, g.Centroid[1] / scale}
			for _, n := range [][2]float64{{0, 1}, {0, -1}, {1, 0}, {-1, 0}} {
				if b := labelBeyond(p, n, w, h, groupLabelGap); fits(b) {
					out, boxes = append(out, labelAt(g.Centroid[0], g.Centroid[1], g.Key, b, scale)), append(boxes, b)
					break
				}
			}
		}
		return out, boxes
	}
	side := labelSide(d)
	// Each station's two places, the preferred side first.
	type spot struct {
		box  [4]ptBox // preferred side, further out, other side, further out
		x, y float64
	}
	spots := make([]spot, len(r.Stations))
	for i, s := range r.Stations {
		u := [2]float64{s.Direction[0], s.Direction[1]}
		if n := math.Hypot(u[0], u[1]); n > 0 {
			u = [2]float64{u[0] / n, u[1] / n}
		} else {
			u = [2]float64{1, 0}
		}
		w, h := float64(st.Width(s.Key)), float64(st.Height(s.Key))
		sp := spot{x: s.Point[0], y: s.Point[1]}
		for k, sg := range []float64{side, -side} {
			n := [2]float64{-u[1] * sg, u[0] * sg}
			reach := 0.0
			for _, q := range readings(s.Key) {
				reach = math.Max(reach, (q[0]-s.Point[0])*n[0]+(q[1]-s.Point[1])*n[1])
			}
			end := [2]float64{(s.Point[0] + reach*n[0]) / scale, (s.Point[1] + reach*n[1]) / scale}
			sp.box[2*k] = labelBeyond(end, n, w, h, groupLabelGap)
			sp.box[2*k+1] = labelBeyond(end, n, w, h, groupLabelGap+groupLabelMore)
		}
		spots[i] = sp
	}
	step := labelSteps[len(labelSteps)-1]
	for _, n := range labelSteps {
		clear := true
		for i := n; i < len(spots) && clear; i += n {
			clear = !spots[i].box[0].overlaps(spots[i-n].box[0].grow(groupLabelSpace))
		}
		if clear {
			step = n
			break
		}
	}
	var pick []int
	for i := 0; i < len(spots); i += step {
		pick = append(pick, i)
	}
	if last := len(spots) - 1; pick[len(pick)-1] != last {
		pick = append(pick, last)
	}
	for _, i := range pick {
		if i == 0 && firstNamed {
			continue
		}
		for _, b := range spots[i].box {
			if fits(b) {
				out = append(out, labelAt(spots[i].x, spots[i].y, r.Stations[i].Key, b, scale))
				boxes = append(boxes, b)
				break
			}
		}
	}
	return out, boxes
}

// labelSide is the side of the route the plan view labels its groups
// on, looking along increasing chainage: away from the further
// conductors, the right (-1) when they all lie to the left, else the left
// (+1).
func labelSide(d *Document) float64 {
	left, right := 0, 0
	for _, t := range d.Conductors {
		switch {
		case t.Offset < 0:
			left++
		case t.Offset > 0:
			right++
		}
	}
	if left > 0 && right == 0 {
		return -1
	}
	return 1
}

// onPlan reports whether the plan view marks finding f at its position:
// every finding but one about the whole route's current (attenuation, a
// steady fall from end to end), which has no place of its own. Marked at
// the route's middle it shared the current step's triangle on a welded
// main ("1,2"), a dig site for a finding that says there is none (found
// in review). The findings table gives it its chainage only.
func onPlan(f *Finding) bool { return !wholeRoute(f) }

// wholeRoute reports whether f is about the route's current as a whole,
// not about a place on it.
func wholeRoute(f *Finding) bool { return f.Kind == "attenuation" }

// addFindingMarks numbers the findings on the plan view: a triangle
// coloured by severity at each, drawn least pressing first so that a
// warning's is never hidden under a note's at the same place, and the
// labels of findingLabels over them all. It then names chainage 0 beside
// its mark (chainageStart, which planPlot draws) and the groups
// (groupLabels), each clear of the findings' marks and labels.
//
// Inside a frame (an inset) it marks only the findings there, and its
// labels keep clear of the frame's scale bar too.
func addFindingMarks(p *plot.Plot, d *Document, side vg.Length, frame *planFrame, ranges bool) error {
	order := make([]int, len(d.Findings))
	for i := range order {
		order[i] = i
	}
	sort.SliceStable(order, func(a, b int) bool {
		return severityRank(d.Findings[order[a]].Severity) > severityRank(d.Findings[order[b]].Severity)
	})
	for _, i := range order {
		f := d.Findings[i]
		if !onPlan(&f) || frame != nil && !frame.has(f.Position[0], f.Position[1]) {
			continue
		}
		if _, err := scatter(p, xy{[]float64{f.Position[0]}, []float64{f.Position[1]}}, draw.TriangleGlyph{}, severityColour(f.Severity), markRadius); err != nil {
			return err
		}
	}
	var lay planLayout
	if frame == nil {
		lay = layOutPlan(d, [2]float64{p.X.Min, p.X.Max}, [2]float64{p.Y.Min, p.Y.Max}, side, ranges)
	} else {
		lay = frame.layOut(d)
	}
	for _, set := range []struct {
		ls []markLabel
		st text.Style
	}{{lay.findings, lay.st}, {lay.start, lay.st}, {lay.groups, lay.gst}} {
		for _, l := range set.ls {
			lab, err := plotter.NewLabels(plotter.XYLabels{XYs: plotter.XYs{{X: l.x, Y: l.y}}, Labels: []string{l.text}})
			if err != nil {
				return err
			}
			lab.TextStyle[0] = set.st
			lab.Offset = l.offset
			p.Add(lab)
		}
	}
	return nil
}

// planLayout is where the plan view's labels go: the findings' numbers,
// "chainage 0" (none or one) and the groups' names, in text styles st
// (findings, chainage 0) and gst (groups), placed at scale metres per
// point inside area (points). marks are the boxes of the findings' marks
// and the chainage-0 mark.
type planLayout struct {
	scale                   float64
	area                    ptBox
	st, gst                 text.Style
	findings, start, groups []markLabel
	marks                   []ptBox
}

// layOutPlan places the labels of the plan view of d, whose data span
// xr east and yr north (metres) before squareUp, drawn side long: the
// findings' numbers first (placeFindingLabels, clear of the chainage-0
// mark where they can be), then "chainage 0" (startLabel), then the
// groups' names (groupLabels), each clear of those before it.
//
// ranges is true on a plan drawn zoomed out (planZoomed): findings that
// share a label are listed in runs, "1–3, 5" for 1,2,3,5.
func layOutPlan(d *Document, xr, yr [2]float64, side vg.Length, ranges bool) planLayout {
	// The scale squareUp will give the plan: the larger extent, widened,
	// and the square it will show, in points.
	ext := math.Max(xr[1]-xr[0], yr[1]-yr[0])*1.08 + 1
	cx, cy := (xr[0]+xr[1])/2, (yr[0]+yr[1])/2
	return layOutSquare(d, cx, cy, ext, side, nil, nil, ranges)
}

// layOutSquare is layOutPlan for a plan that shows the square ext metres
// across centred on (cx, cy), drawn side long: only the findings for
// which keep is true (all when keep is nil) are labelled, and every label
// keeps clear of the boxes avoid (points) too.
func layOutSquare(d *Document, cx, cy, ext float64, side vg.Length, keep func(*Finding) bool, avoid []ptBox, ranges bool) planLayout {
	scale := ext / float64(side-planMargin)
	lay := planLayout{
		scale: scale,
		area:  ptBox{(cx - ext/2) / scale, (cy - ext/2) / scale, (cx + ext/2) / scale, (cy + ext/2) / scale},
		st:    text.Style{Font: font.Font{Variant: "Sans", Size: vg.Points(9)}, Color: colInk, Handler: plot.DefaultTextHandler},
	}
	lay.gst = lay.st
	lay.gst.Color = colInfo
	var start []ptBox
	at, dir, hasStart := routeStart(d)
	if hasStart {
		start = startBoxes([2]float64{at[0] / scale, at[1] / scale}, dir)
	}
	var texts []ptBox
	join := func(idx []int) string {
		nums := make([]string, len(idx))
		for k, i := range idx {
			nums[k] = strconv.Itoa(i + 1)
		}
		return strings.Join(nums, ",")
	}
	if ranges {
		join = numberRuns
	}
	lay.findings, texts, lay.marks = placeLabelsOf(d.Findings, scale, lay.st, append(start, avoid...), keep, join)
	lay.marks = append(lay.marks, start...)
	lay.marks = append(lay.marks, avoid...)
	if hasStart {
		first := d.Route.Stations[0].Key
		var readings [][3]float64
		for _, g := range d.Groups {
			if g.Key == first && g.Profile != nil {
				readings = g.Profile.Positions
				break
			}
		}
		if l, b, ok := startLabel(first, at, dir, readings, labelSide(d), scale, lay.st, append(lay.marks, texts...), lay.area); ok {
			lay.start = []markLabel{l}
			texts = append(texts, b)
		}
	}
	lay.groups, _ = groupLabels(d, scale, lay.gst, lay.marks, texts, lay.area, len(lay.start) > 0)
	return lay
}

func (d xy) toXYs() plotter.XYs {
	out := make(plotter.XYs, len(d.x))
	for i := range d.x {
		out[i].X, out[i].Y = d.x[i], d.y[i]
	}
	return out
}

// squareUp widens the shorter axis range so that a metre east and a metre
// north are about the same length on a square plot.
func squareUp(p *plot.Plot) {
	cx, cy := (p.X.Min+p.X.Max)/2, (p.Y.Min+p.Y.Max)/2
	half := math.Max(p.X.Max-p.X.Min, p.Y.Max-p.Y.Min)/2*1.08 + 0.5
	p.X.Min, p.X.Max = cx-half, cx+half
	p.Y.Min, p.Y.Max = cy-half, cy+half
}

// alongPlot plots current (which = "current") or depth along route r
// with +-2 sigma bars; the depth plot has the ground and minimum-cover
// lines when they are known. r is d.Route when conductor is 0, else the
// route of that further conductor, whose steps it marks. narrow is true
// for the figure drawn for a phone's screen, whose legend leaves out the
// minimum cover's code (the caption's depth reference and the settings
// give it) to stay within the plot's width.
func alongPlot(d *Document, r *Route, conductor int, which string, narrow bool) (*plot.Plot, error) {
	// A station left out because its group's fit failed (no current
	// found, nothing fitted) has no value: results.json gives it none.
	// Drawn at the fit's numbers it put a "not used" ring at 38 A and
	// 38 m past a conductor's end, and stretched the axes to them; it is
	// marked on the chainage axis instead. A station left out as a
	// magnetised object keeps its ring at its value, and one past the
	// conductor's end (whose sound fit finds only the field beyond the
	// end) a triangle at its value: both were rings under "not used (poor
	// fit or object)", then under "not used (object)", which called the
	// stations past an end objects where no object was found.
	var x, y, e, fx []float64
	var objects, pastEnd, other xy
	// across[k] is true when a station not used lies between used
	// station k and the used station before it: the line between them is
	// drawn dotted, as the plan view draws the route past such stations.
	var across []bool
	skipped := false
	// On a route walked again at another current (Route.FirstWalk) the
	// current plot draws every used station at the first walk's level,
	// as the steps and the summary take it, and the later walks' own
	// readings apart (later), not joined: drawn raw and joined in
	// station order, the line saw-toothed between the walks' levels at
	// every station (25 and 27.5 A) and showed no loss (found in
	// review). used are the used stations drawn, in route order.
	levelled := r.FirstWalk != "" && which == "current"
	var used []*Station
	var later xy
	// The phase plot (AC) draws each station's phase unwrapped along
	// the route from the one before it.
	prevPhase, havePhase := 0.0, false
	// The depth plot draws the cover, the ground at 0, where the ground
	// is known: drawn below the sensors, the ground at 0.3 m unlabelled
	// on the axis, the depth a crew reads off it was 0.30 m deeper than
	// the cover (found in review).
	shift := 0.0
	if g, ok := groundDepth(d); ok && which == "depth" {
		shift = g
	}
	// A used station whose fit is poor or ambiguous (used with care, as
	// its finding says) is drawn apart from the sound ones: the demo's
	// poor fit at a bend, 1.7 A over its neighbours, read as a rise in
	// current drawn as they are (found in review).
	doubted := map[string]bool{}
	for i := range d.Groups {
		if g := &d.Groups[i]; d.fitDoubted(g) {
			doubted[g.Key] = true
		}
	}
	var care []bool
	for i := range r.Stations {
		st := &r.Stations[i]
		v, s := st.Current, st.CurrentSigma
		switch which {
		case "depth":
			v, s = st.Depth-shift, st.DepthSigma
		case "phase":
			if st.Phase == nil || st.PhaseSigma == nil {
				continue
			}
			v, s = *st.Phase, *st.PhaseSigma
			if havePhase {
				v = prevPhase + wrapDeg(v-prevPhase)
			}
		}
		why := d.whyLeftOut(st, conductor)
		if why != leftUsed {
			skipped = true
		}
		switch why {
		case leftUsed:
			if which == "phase" {
				prevPhase, havePhase = v, true
			}
			if levelled {
				if st.CurrentFirstWalk != nil && *st.CurrentFirstWalk != st.Current {
					later.x, later.y = append(later.x, st.Chainage), append(later.y, v)
				}
				v, s = st.levelCurrent()
			}
			x, y, e = append(x, st.Chainage), append(y, v), append(e, 2*s)
			care = append(care, doubted[st.Key])
			across = append(across, skipped && len(x) > 1)
			used = append(used, st)
			skipped = false
		case leftFailed:
			fx = append(fx, st.Chainage)
		case leftObject:
			objects.x, objects.y = append(objects.x, st.Chainage), append(objects.y, v)
		case leftPastEnd:
			pastEnd.x, pastEnd.y = append(pastEnd.x, st.Chainage), append(pastEnd.y, v)
		default:
			other.x, other.y = append(other.x, st.Chainage), append(other.y, v)
		}
	}
	// A station not used whose value lies far outside the used stations'
	// range is drawn at the axis's edge, not at its value (valueRange.off):
	// past a conductor's end the fits' depths grow without bound (8.7
	// and 19.3 m beyond the end of a spur 1.5 m below the sensors), and
	// the axis ran to 20 m, pressing the conductor's profile into the
	// top twelfth of the figure. The table gives every value.
	keep := usedRange(x, y, e)
	if which == "depth" {
		if g, ok := groundDepth(d); ok && keep.ok {
			g -= shift
			keep.lo, keep.hi = math.Min(keep.lo, g), math.Max(keep.hi, g)
			if mc := d.MinCover; mc != nil && mc.Depth > 0 {
				keep.hi = math.Max(keep.hi, g+mc.Depth)
			}
		}
	}
	var beyond xy // off the scale: their chainage and value
	for _, set := range []*xy{&objects, &pastEnd, &other} {
		var in xy
		for i := range set.x {
			if keep.off(set.y[i]) {
				beyond.x, beyond.y = append(beyond.x, set.x[i]), append(beyond.y, set.y[i])
				continue
			}
			in.x, in.y = append(in.x, set.x[i]), append(in.y, set.y[i])
		}
		*set = in
	}
	// A go-and-return pair's route carries the pair's net current (the
	// current that does not return through it), not a core's: labelled
	// "current", a pair of 10 A cores read as a cable carrying 1 A.
	title, ylabel := "Current along the route", "current"
	if r.PairNet {
		title, ylabel = "Net current of the pair along the route", "net current"
	}
	if d.Signal.Mode == SignalAC {
		ylabel += ", RMS"
	}
	ylabel += " (A)"
	switch which {
	case "depth":
		title = "Depth along the route"
		ylabel = "depth below the sensors (m)"
		if _, ok := groundDepth(d); ok {
			title, ylabel = "Cover along the route", "cover: depth below ground (m)"
		}
	case "phase":
		title, ylabel = "Phase along the route", "phase of the current (°)"
	}
	xlabel := "chainage (m)"
	if conductor > 0 {
		title = fmt.Sprintf("Conductor %d: %s along it", conductor, strings.ToLower(strings.TrimSuffix(title, " along the route")))
		xlabel = fmt.Sprintf("chainage along conductor %d (m)", conductor)
	}
	p := newPlot(title, xlabel, ylabel)
	if which == "depth" {
		p.Y.Scale = plot.InvertedScale{Normalizer: plot.LinearScale{}}
	}
	if len(x) > 0 {
		var sound, doubt xyErr
		for k := range x {
			set := &sound
			if care[k] {
				set = &doubt
			}
			set.x, set.y, set.e = append(set.x, x[k]), append(set.y, y[k]), append(set.e, e[k])
		}
		for _, set := range []struct {
			at xyErr
			c  color.Color
		}{{sound, colFit}, {doubt, colCaution}} {
			if len(set.at.x) == 0 {
				continue
			}
			eb, err := plotter.NewYErrorBars(set.at)
			if err != nil {
				return nil, err
			}
			eb.LineStyle.Color = set.c
			eb.LineStyle.Width = 1
			p.Add(eb)
		}
		// The used stations joined solidly where they are neighbours,
		// and by a dotted line across stations not used: drawn solid
		// across three failed fits it read as a steady current measured
		// where the report says none could be (found in review). On a
		// route walked again at another current the line joins each
		// station's repeats pooled at the first walk's level (endLevel,
		// endPhase), one point a station.
		lx, ly, lacross := x, y, across
		if r.FirstWalk != "" && which != "depth" {
			lx, ly, lacross = nil, nil, nil
			for k := 0; k < len(x); {
				j := k + 1
				gap := across[k]
				for j < len(x) && math.Abs(x[j]-x[k]) < r.RepeatGap {
					gap = gap || across[j]
					j++
				}
				v := y[k]
				switch which {
				case "current":
					v, _ = r.endLevel(used[k])
				case "phase":
					if ph, _, ok := r.endPhase(used[k]); ok {
						v = y[k] + wrapDeg(ph-y[k])
					}
				}
				lx, ly, lacross = append(lx, x[k]), append(ly, v), append(lacross, gap)
				k = j
			}
		}
		var gapNamed bool
		for k0 := 0; k0 < len(lx); {
			k1 := k0 + 1
			for k1 < len(lx) && !lacross[k1] {
				k1++
			}
			if _, err := polyline(p, xy{lx[k0:k1], ly[k0:k1]}, colFit, 1); err != nil {
				return nil, err
			}
			if k1 < len(lx) {
				l, err := polyline(p, xy{lx[k1-1 : k1+1], ly[k1-1 : k1+1]}, colFit, 1, 1.5, 2.5)
				if err != nil {
					return nil, err
				}
				if l != nil && !gapNamed {
					p.Legend.Add("across stations not used", l)
					gapNamed = true
				}
			}
			k0 = k1
		}
		s, err := scatter(p, sound.xy, draw.CircleGlyph{}, colFit, 2.5)
		if err != nil {
			return nil, err
		}
		name := "estimate, ±2σ"
		if levelled {
			name = "at the level of " + firstWalkName(r.FirstWalk) + ", ±2σ"
			if narrow {
				name = "at the first walk's level, ±2σ"
			}
		}
		if s != nil {
			p.Legend.Add(name, s)
		}
		if s, err = scatter(p, doubt.xy, draw.BoxGlyph{}, colCaution, 2.5); err != nil {
			return nil, err
		}
		if s != nil {
			p.Legend.Add("poor fit, used with care, ±2σ", s)
		}
		if levelled && later.Len() > 0 {
			// The later walks as they read, unjoined: their own
			// currents, which hold for their own time only.
			s, err := scatter(p, later, draw.TriangleGlyph{}, colFit, 3)
			if err != nil {
				return nil, err
			}
			p.Legend.Add("later walks as read (not joined)", s)
		}
	}
	for _, m := range []struct {
		at    xy
		glyph draw.GlyphDrawer
		name  string
	}{
		// A poor fit is used (drawn as an estimate); what is left out
		// with a value is an object, a station past the end, or (no
		// finding names it) a station left out otherwise.
		{objects, draw.RingGlyph{}, "not used (object)"},
		{pastEnd, draw.PyramidGlyph{}, "not used (past the end)"},
		{other, draw.SquareGlyph{}, "not used"},
	} {
		if m.at.Len() == 0 {
			continue
		}
		s, err := scatter(p, m.at, m.glyph, colSurvey, 3)
		if err != nil {
			return nil, err
		}
		p.Legend.Add(m.name, s)
	}
	if (len(fx) > 0 || beyond.Len() > 0) && !(p.Y.Min <= p.Y.Max) {
		p.Y.Min, p.Y.Max = 0, 1 // no value to plot at all
	}
	x0, x1 := 0.0, r.Length
	if which == "depth" {
		if g, ok := groundDepth(d); ok {
			g -= shift
			l, err := polyline(p, xy{[]float64{x0, x1}, []float64{g, g}}, colGround, 1)
			if err != nil {
				return nil, err
			}
			p.Legend.Add("ground", l)
			if mc := d.MinCover; mc != nil && mc.Depth > 0 {
				v := g + mc.Depth
				l, err := polyline(p, xy{[]float64{x0, x1}, []float64{v, v}}, colWarning, 1.2, 5, 3)
				if err != nil {
					return nil, err
				}
				name := fmt.Sprintf("minimum cover %.2f m", mc.Depth)
				if mc.Code != "" && !narrow {
					name += " (" + mc.Code + ")"
				}
				p.Legend.Add(name, l)
			}
		}
		padY(p, 0.05, 0.08)
	}
	// Mark current steps where their findings place them (on the phase
	// plot too: where current leaves at an angle to the line current the
	// phase turns there).
	if which != "depth" {
		padY(p, 0.05, 0.1)
		lo, hi := p.Y.Min, p.Y.Max
		stepNamed := false
		for _, f := range d.Findings {
			if f.Kind != "current-step" || f.Conductor != conductor {
				continue
			}
			at, sigma := stepMark(&f)
			if sigma > 0 {
				// The step's one-sigma band, clipped to the route.
				a, b := math.Max(at-sigma, 0), math.Min(at+sigma, r.Length)
				if b > a {
					band, err := plotter.NewPolygon(plotter.XYs{{X: a, Y: lo}, {X: b, Y: lo}, {X: b, Y: hi}, {X: a, Y: hi}})
					if err != nil {
						return nil, err
					}
					band.Color = colStepBand
					band.LineStyle.Width = 0
					p.Add(band)
				}
			}
			l, err := polyline(p, xy{[]float64{at, at}, []float64{lo, hi}}, colWarning, 1, 4, 3)
			if err != nil {
				return nil, err
			}
			if l != nil && !stepNamed {
				// Named in the legend, not in the caption alone (found
				// in review).
				name := "step in current (a finding): likely chainage, ±1σ shaded"
				if narrow {
					name = "step in current, ±1σ shaded"
				}
				p.Legend.Add(name, l)
				stepNamed = true
			}
		}
	}
	// Shade each unsearched stretch the route's caution names: the
	// current there is not known, and a step within it could not be
	// searched for (before, nothing on the plots marked it).
	{
		lo, hi := p.Y.Min, p.Y.Max
		var named bool
		for _, f := range d.Findings {
			if f.Kind != "unsearched" || f.Conductor != conductor || f.Lone || !(f.ChainageTo > f.ChainageFrom) || !(hi > lo) {
				continue
			}
			band, err := plotter.NewPolygon(plotter.XYs{{X: f.ChainageFrom, Y: lo}, {X: f.ChainageTo, Y: lo}, {X: f.ChainageTo, Y: hi}, {X: f.ChainageFrom, Y: hi}})
			if err != nil {
				return nil, err
			}
			band.Color = colUnsearched
			band.LineStyle.Width = 0
			p.Add(band)
			if !named {
				p.Legend.Add("unsearched stretch: no usable current", band)
				named = true
			}
		}
	}
	if len(fx) > 0 {
		// On the chainage axis: the bottom of the plot, which is the
		// greatest depth on the depth plot's inverted scale.
		edge := p.Y.Min
		if which == "depth" {
			edge = p.Y.Max
		}
		fy := make([]float64, len(fx))
		for i := range fy {
			fy[i] = edge
		}
		s, err := scatter(p, xy{fx, fy}, draw.CrossGlyph{}, colInfo, 3.5)
		if err != nil {
			return nil, err
		}
		p.Legend.Add("fit failed, no value (on the axis)", s)
	}
	if beyond.Len() > 0 {
		// At the edge the value lies beyond: on the depth plot's
		// inverted scale Y.Max is the bottom.
		at := xy{x: beyond.x, y: make([]float64, beyond.Len())}
		for i, v := range beyond.y {
			at.y[i] = p.Y.Min
			if v > keep.hi {
				at.y[i] = p.Y.Max
			}
		}
		// Not the failed fits' cross (colInfo): a value that lies off
		// the axis, grey as the other stations not used.
		s, err := scatter(p, at, draw.PlusGlyph{}, colSurvey, 3.5)
		if err != nil {
			return nil, err
		}
		p.Legend.Add("not used, off the scale (at its edge)", s)
	}
	return p, nil
}

// valueRange is the span of values a along-route plot keeps on its axis
// (usedRange); ok is false when there is none.
type valueRange struct {
	lo, hi float64
	ok     bool
}

// usedRange is the range of the used stations' values y with their bars
// e (each ± e[i]).
func usedRange(x, y, e []float64) valueRange {
	r := valueRange{lo: math.Inf(1), hi: math.Inf(-1)}
	for i := range x {
		if math.IsNaN(y[i]) || math.IsInf(y[i], 0) {
			continue
		}
		b := e[i]
		if math.IsNaN(b) || math.IsInf(b, 0) {
			b = 0
		}
		r.lo, r.hi, r.ok = math.Min(r.lo, y[i]-b), math.Max(r.hi, y[i]+b), true
	}
	return r
}

// off reports whether a station not used with value v lies off the
// scale: farther outside r than r's own span (at least a tenth of its
// largest magnitude, and 0.1, for a flat profile), so that drawing it at
// its value would leave the used stations in under a third of the axis.
// A non-finite value is off the scale; without a range nothing is.
func (r valueRange) off(v float64) bool {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return true
	}
	if !r.ok {
		return false
	}
	span := math.Max(r.hi-r.lo, math.Max(0.1*math.Max(math.Abs(r.lo), math.Abs(r.hi)), 0.1))
	return v < r.lo-span || v > r.hi+span
}

// colUnsearched shades an unsearched stretch on the route plots: the
// caution's colour, mostly transparent, so that what is drawn there
// shows through it.
var colUnsearched = color.NRGBA{0xc9, 0x8a, 0x00, 0x30}

// colStepBand shades a current step's one-sigma band of chainage: the
// step line's colour, mostly transparent, so that the stations' bars show
// through it.
var colStepBand = color.NRGBA{0xb3, 0x26, 0x1e, 0x30}

// stepMark is where the current plot marks step finding f: at its most
// likely chainage with that chainage's one-sigma uncertainty, the finding's
// "location (chainage)" value (route.Finding), when it has one; else
// midway between the stations either side of the step, with no sigma.
func stepMark(f *Finding) (at, sigma float64) {
	for _, v := range f.Values {
		if v.Name == "location (chainage)" && !math.IsNaN(v.Value) && !math.IsInf(v.Value, 0) {
			return v.Value, v.Sigma
		}
	}
	return (f.ChainageFrom + f.ChainageTo) / 2, 0
}

// padY widens the y range by the fractions lo and hi of its span at the
// low and high ends, to leave room for a legend.
func padY(p *plot.Plot, lo, hi float64) {
	span := p.Y.Max - p.Y.Min
	if span <= 0 {
		span = math.Max(math.Abs(p.Y.Max), 1)
	}
	p.Y.Min -= lo * span
	p.Y.Max += hi * span
}

// groundDepth returns the depth of the ground below the depth reference.
func groundDepth(d *Document) (float64, bool) {
	switch {
	case d.DepthReference.Kind == DepthBelowGround:
		return 0, true
	case d.DepthReference.SensorHeight > 0:
		return d.DepthReference.SensorHeight, true
	}
	return 0, false
}

// profilePlot plots a group's measured field against the fit across the
// conductor: for AC the in-phase part, or with quadrature the quadrature
// part (Profile.MeasuredQuadrature), each in its own figure and named so
// in its title.
func profilePlot(d *Document, g *Group, quadrature bool) (*plot.Plot, error) {
	pr := g.Profile
	title := "Group " + g.Key
	if g.Key == "" {
		title = "All readings"
	}
	if g.Chainage != nil {
		title += fmt.Sprintf(" (chainage %.0f m)", *g.Chainage)
	}
	// The uniform background (the Earth's field, for DC) dwarfs the
	// conductor's field: plot both without it.
	ylabel := "field less fitted background (nT)"
	measured, predicted := pr.Measured, pr.Predicted
	if pr.Component == ComponentACInPhase {
		ylabel = "in-phase RMS field (nT)"
		if pr.hasQuadrature() {
			title += ": in-phase part"
		}
		if quadrature {
			ylabel = "quadrature RMS field (nT)"
			title = strings.TrimSuffix(title, ": in-phase part") + ": quadrature part"
			measured, predicted = pr.MeasuredQuadrature, pr.PredictedQuadrature
		}
	}
	bg := g.Background
	if pr.Component == ComponentACInPhase {
		bg = [3]float64{}
	}
	p := newPlot(title, "offset across the conductor (m)", ylabel)
	p.Legend.Top = true
	p.Legend.Left = false
	names := [3]string{"east", "north", "up"}
	cols := [3]color.Color{colEast, colNorth, colUp}
	glyphs := [3]draw.GlyphDrawer{draw.CircleGlyph{}, draw.SquareGlyph{}, draw.TriangleGlyph{}}
	for a := 0; a < 3; a++ {
		m := make([]float64, len(pr.Offset))
		f := make([]float64, len(pr.Offset))
		for i := range pr.Offset {
			m[i], f[i] = measured[i][a]-bg[a], predicted[i][a]-bg[a]
		}
		s, err := scatter(p, xy{pr.Offset, m}, glyphs[a], cols[a], 1.8)
		if err != nil {
			return nil, err
		}
		l, err := polyline(p, xy{pr.Offset, f}, cols[a], 1.2)
		if err != nil {
			return nil, err
		}
		if s != nil && l != nil {
			p.Legend.Add(names[a]+" measured / fitted", s, l)
		}
	}
	padY(p, 0.05, 0.45)
	return p, nil
}
