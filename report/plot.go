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

// planPlot is the plan view, to be drawn side long square: survey
// points, the fitted route and conductors, and numbered findings.
func planPlot(d *Document, side vg.Length) (*plot.Plot, error) {
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
	s, err := scatter(p, xy{sx, sy}, draw.CircleGlyph{}, colSurvey, 1.2)
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
		for _, src := range g.Sources {
			if src.Kind == KindDipole {
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
		var rx, ry []float64
		for _, st := range r.Stations {
			rx, ry = append(rx, st.Point[0]), append(ry, st.Point[1])
		}
		l, err := polyline(p, xy{rx, ry}, colFit, 2.2)
		if err != nil {
			return nil, err
		}
		name := "fitted route"
		if len(d.Conductors) > 0 {
			name = "fitted route, conductor 1"
		}
		p.Legend.Add(name, l)
		if _, err := scatter(p, xy{rx, ry}, draw.CircleGlyph{}, colFit, 2.2); err != nil {
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
		s, err := scatter(p, xy{tx, ty}, trackGlyphs[k], colTrack, 2)
		if err != nil {
			return nil, err
		}
		p.Legend.Add(fmt.Sprintf("conductor %d", t.Number), l, s)
	}
	if err := addFindingMarks(p, d, side); err != nil {
		return nil, err
	}
	squareUp(p)
	return p, nil
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
	var out []markLabel
	var nums [][]string
	for i, f := range fs {
		joined := false
		for k := range out {
			if math.Hypot(f.Position[0]-out[k].x, f.Position[1]-out[k].y) <= markShare*scale {
				nums[k] = append(nums[k], strconv.Itoa(i+1))
				joined = true
				break
			}
		}
		if !joined {
			out = append(out, markLabel{x: f.Position[0], y: f.Position[1]})
			nums = append(nums, []string{strconv.Itoa(i + 1)})
		}
	}
	type box struct{ x0, y0, x1, y1 float64 }
	overlaps := func(a, b box) bool { return a.x0 < b.x1 && b.x0 < a.x1 && a.y0 < b.y1 && b.y0 < a.y1 }
	pt := func(l markLabel) (float64, float64) { return l.x / scale, l.y / scale }
	var placed []box
	for k := range out {
		out[k].text = strings.Join(nums[k], ",")
		w, h := float64(st.Width(out[k].text)), float64(st.Height(out[k].text))
		px, py := pt(out[k])
		r, g := float64(markRadius), float64(markGap)
		cands := [][2]float64{{r + g, g}, {r + g, -g - h}, {-r - g - w, g}, {-r - g - w, -g - h}}
		for n := 1; n <= 2*len(out)+2; n++ {
			cands = append(cands, [2]float64{r + g, g + float64(n)*h}, [2]float64{r + g, -g - h - float64(n)*h})
		}
		choice := cands[0]
	search:
		for _, c := range cands {
			b := box{px + c[0], py + c[1], px + c[0] + w, py + c[1] + h}
			for _, q := range placed {
				if overlaps(b, q) {
					continue search
				}
			}
			for _, f := range fs {
				mx, my := f.Position[0]/scale, f.Position[1]/scale
				if overlaps(b, box{mx - r, my - r, mx + r, my + r}) {
					continue search
				}
			}
			choice = c
			break
		}
		out[k].offset = vg.Point{X: vg.Length(choice[0]), Y: vg.Length(choice[1])}
		placed = append(placed, box{px + choice[0], py + choice[1], px + choice[0] + w, py + choice[1] + h})
	}
	return out
}

// addFindingMarks numbers the findings on the plan view: a triangle
// coloured by severity at each, drawn least pressing first so that a
// warning's is never hidden under a note's at the same place, and the
// labels of findingLabels over them all.
func addFindingMarks(p *plot.Plot, d *Document, side vg.Length) error {
	if len(d.Findings) == 0 {
		return nil
	}
	order := make([]int, len(d.Findings))
	for i := range order {
		order[i] = i
	}
	sort.SliceStable(order, func(a, b int) bool {
		return severityRank(d.Findings[order[a]].Severity) > severityRank(d.Findings[order[b]].Severity)
	})
	for _, i := range order {
		f := d.Findings[i]
		if _, err := scatter(p, xy{[]float64{f.Position[0]}, []float64{f.Position[1]}}, draw.TriangleGlyph{}, severityColour(f.Severity), markRadius); err != nil {
			return err
		}
	}
	// The scale squareUp will give the plan: the larger extent, widened.
	ext := math.Max(p.X.Max-p.X.Min, p.Y.Max-p.Y.Min)*1.08 + 1
	st := text.Style{Font: font.Font{Variant: "Sans", Size: vg.Points(9)}, Color: colInk, Handler: plot.DefaultTextHandler}
	for _, l := range findingLabels(d.Findings, ext/float64(side-planMargin), st) {
		lab, err := plotter.NewLabels(plotter.XYLabels{XYs: plotter.XYs{{X: l.x, Y: l.y}}, Labels: []string{l.text}})
		if err != nil {
			return err
		}
		lab.TextStyle[0] = st
		lab.Offset = l.offset
		p.Add(lab)
	}
	return nil
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
	var x, y, e, ux, uy []float64
	for _, st := range r.Stations {
		v, s := st.Current, st.CurrentSigma
		if which == "depth" {
			v, s = st.Depth, st.DepthSigma
		}
		if !st.Used {
			ux, uy = append(ux, st.Chainage), append(uy, v)
			continue
		}
		x, y, e = append(x, st.Chainage), append(y, v), append(e, 2*s)
	}
	title, ylabel := "Current along the route", "current (A)"
	if d.Signal.Mode == SignalAC {
		ylabel = "current, RMS (A)"
	}
	if which == "depth" {
		title = "Depth along the route"
		ylabel = "depth below " + depthRefShort(d) + " (m)"
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
		eb, err := plotter.NewYErrorBars(xyErr{xy{x, y}, e})
		if err != nil {
			return nil, err
		}
		eb.LineStyle.Color = colFit
		eb.LineStyle.Width = 1
		p.Add(eb)
		if _, err := polyline(p, xy{x, y}, colFit, 1); err != nil {
			return nil, err
		}
		s, err := scatter(p, xy{x, y}, draw.CircleGlyph{}, colFit, 2.5)
		if err != nil {
			return nil, err
		}
		p.Legend.Add("estimate, ±2σ", s)
	}
	if len(ux) > 0 {
		s, err := scatter(p, xy{ux, uy}, draw.RingGlyph{}, colSurvey, 3)
		if err != nil {
			return nil, err
		}
		p.Legend.Add("not used (poor fit or object)", s)
	}
	x0, x1 := 0.0, r.Length
	if which == "depth" {
		if g, ok := groundDepth(d); ok {
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
	// Mark current steps between their stations.
	if which == "current" {
		padY(p, 0.05, 0.1)
		for _, f := range d.Findings {
			if f.Kind != "current-step" || f.Conductor != conductor {
				continue
			}
			m := (f.ChainageFrom + f.ChainageTo) / 2
			lo, hi := p.Y.Min, p.Y.Max
			if _, err := polyline(p, xy{[]float64{m, m}, []float64{lo, hi}}, colWarning, 1, 4, 3); err != nil {
				return nil, err
			}
		}
	}
	return p, nil
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

func depthRefShort(d *Document) string {
	if d.DepthReference.Kind == DepthBelowGround {
		return "ground"
	}
	return "sensors"
}

// profilePlot plots a group's measured field against the fit across the
// conductor.
func profilePlot(d *Document, g *Group) (*plot.Plot, error) {
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
	if pr.Component == ComponentACInPhase {
		ylabel = "in-phase RMS field (nT)"
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
			m[i], f[i] = pr.Measured[i][a]-bg[a], pr.Predicted[i][a]-bg[a]
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
