package report

import (
	"image/color"
	"math"
	"sort"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgsvg"
)

// A route much longer than its traverses draws them a few points long
// on the plan view, which shows the whole survey in one square: a 2 km
// route of 350 traverses 12 m long drew each 2.3 pt long, the findings'
// numbers in one pile ("1,2,3,5,6,11,12,13,14") and nothing a crew could
// find them by (found in review). Such a plan (planZoomed) is drawn as
// before, its findings' shared labels listing their numbers in runs, and
// each place with findings is drawn again below it at a larger scale, in
// an inset a few tens of metres across (planInsets, planInsetPlot).

// insetBelow is the length, points, below which the wide plan view's
// traverses are too short to see as traverses: planZoomed draws insets
// below it.
const insetBelow = 10.0

// maxInsets is the most insets the report draws: the places with the most
// pressing findings. The findings table lists every finding.
const maxInsets = 12

// insetSide is the side of an inset's square, drawn once for every screen:
// on a phone's column of about 330 pixels it shows at about its printed
// size, 9-point text about 12 pixels high.
const insetSide = 8 * vg.Centimeter

// Inset frames, metres: at least insetFrameMin across, and three
// traverses' lengths; findings that share one lie within the middle
// insetInner of it.
const (
	insetFrameMin = 30.0
	insetInner    = 2.0 / 3
)

// planTraverse is the median length of the groups' readings (the
// diagonal of their extent east and north), metres; 0 without readings.
func planTraverse(d *Document) float64 {
	var ls []float64
	for _, g := range d.Groups {
		if g.Profile == nil || len(g.Profile.Positions) < 2 {
			continue
		}
		x0, y0, x1, y1 := math.Inf(1), math.Inf(1), math.Inf(-1), math.Inf(-1)
		for _, q := range g.Profile.Positions {
			x0, y0 = math.Min(x0, q[0]), math.Min(y0, q[1])
			x1, y1 = math.Max(x1, q[0]), math.Max(y1, q[1])
		}
		ls = append(ls, math.Hypot(x1-x0, y1-y0))
	}
	return median(ls)
}

// planZoomed reports whether the wide plan view draws d's traverses
// shorter than insetBelow: the scale layOutPlan takes, from the readings'
// extent, against the median traverse (planTraverse).
func planZoomed(d *Document) bool {
	trav := planTraverse(d)
	if !(trav > 0) {
		return false
	}
	x0, y0, x1, y1 := math.Inf(1), math.Inf(1), math.Inf(-1), math.Inf(-1)
	for _, g := range d.Groups {
		if g.Profile == nil {
			continue
		}
		for _, q := range g.Profile.Positions {
			x0, y0 = math.Min(x0, q[0]), math.Min(y0, q[1])
			x1, y1 = math.Max(x1, q[0]), math.Max(y1, q[1])
		}
	}
	scale := (math.Max(x1-x0, y1-y0)*1.08 + 1) / float64(planSide-planMargin)
	return trav/scale < insetBelow
}

// planFrame is the part of the plan an inset shows, metres: east x0 to
// x1 and north y0 to y1, a square side across widened along one axis so
// that a metre east and a metre north are the same length on the page,
// where the inset's plotting area, area points across the shorter way, is
// not square (the axes' labels take more room at the left than below).
type planFrame struct {
	x0, y0, x1, y1 float64
	side, area     float64
}

// newPlanFrame is the frame of an inset drawn insetSide long that shows
// at least the square side metres across centred on (cx, cy).
func newPlanFrame(cx, cy, side float64) planFrame {
	f := planFrame{x0: cx - side/2, y0: cy - side/2, x1: cx + side/2, y1: cy + side/2, side: side}
	// The plotting area of an empty inset of the same ranges: the axes'
	// room depends on their labels alone.
	p := newPlot("", "east (m)", "north (m)")
	f.axes(p)
	dc := p.DataCanvas(draw.New(vgsvg.New(insetSide, insetSide)))
	w, h := float64(dc.Max.X-dc.Min.X), float64(dc.Max.Y-dc.Min.Y)
	if !(w > 0 && h > 0) {
		f.area = float64(insetSide - planMargin)
		return f
	}
	f.area = math.Min(w, h)
	mpp := side / f.area
	f.x0, f.x1 = cx-mpp*w/2, cx+mpp*w/2
	f.y0, f.y1 = cy-mpp*h/2, cy+mpp*h/2
	return f
}

// axes sets p's axes to show f, without padding, ticked every scale
// bar's length.
func (f *planFrame) axes(p *plot.Plot) {
	p.X.Min, p.X.Max = f.x0, f.x1
	p.Y.Min, p.Y.Max = f.y0, f.y1
	p.X.Padding, p.Y.Padding = 0, 0
	t := insetTicks{f.bar().metres}
	p.X.Tick.Marker, p.Y.Tick.Marker = t, t
}

// has reports whether (x, y) lies in f.
func (f *planFrame) has(x, y float64) bool {
	return x >= f.x0 && x <= f.x1 && y >= f.y0 && y <= f.y1
}

// keep returns the points of x, y that lie in f.
func (f *planFrame) keep(x, y []float64) (kx, ky []float64) {
	for i := range x {
		if f.has(x[i], y[i]) {
			kx, ky = append(kx, x[i]), append(ky, y[i])
		}
	}
	return kx, ky
}

// bar is f's scale bar.
func (f *planFrame) bar() scaleBar {
	l := 1.0
	for _, v := range []float64{2, 5, 10, 20, 50, 100, 200, 500} {
		if v <= f.side/4 {
			l = v
		}
	}
	return scaleBar{metres: l}
}

// layOut places the labels of the inset of f: the findings in f,
// chainage 0 if it is there and the groups' names, clear of the scale
// bar, within the square f.side across at its middle.
func (f *planFrame) layOut(d *Document) planLayout {
	scale := f.side / f.area
	b := f.bar()
	x, y := f.x0/scale, f.y0/scale
	box := ptBox{x, y, x + 2*barInset + b.metres/scale, y + barInset + barTick + barText}
	keep := func(g *Finding) bool { return f.has(g.Position[0], g.Position[1]) }
	return layOutSquare(d, (f.x0+f.x1)/2, (f.y0+f.y1)/2, f.side, vg.Length(f.area)+planMargin, keep, []ptBox{box}, true)
}

// The scale bar of an inset, points: its inset from the plot's lower left
// corner, the height of its end ticks and the room its label takes above
// them.
const (
	barInset = 8.0
	barTick  = 4.0
	barText  = 12.0
)

// scaleBar draws a bar metres long in an inset's lower left corner,
// with end ticks and its length above it ("10 m"), in ink over a white
// halo so that it reads over readings.
type scaleBar struct{ metres float64 }

// Plot implements plot.Plotter.
func (b scaleBar) Plot(dc draw.Canvas, plt *plot.Plot) {
	trX, _ := plt.Transforms(&dc)
	l := trX(plt.X.Min+b.metres) - trX(plt.X.Min)
	x0, y0 := dc.Min.X+barInset, dc.Min.Y+barInset
	pts := []vg.Point{{X: x0, Y: y0 + barTick}, {X: x0, Y: y0}, {X: x0 + l, Y: y0}, {X: x0 + l, Y: y0 + barTick}}
	for _, sty := range []draw.LineStyle{{Color: color.White, Width: 3.4}, {Color: colInk, Width: 1.2}} {
		dc.StrokeLines(sty, pts)
	}
	st := text.Style{Font: font.Font{Variant: "Sans", Size: vg.Points(9)}, Color: colInk, Handler: plot.DefaultTextHandler, XAlign: draw.XCenter}
	dc.FillText(st, vg.Point{X: x0 + l/2, Y: y0 + 1.5}, strconv.FormatFloat(b.metres, 'f', -1, 64)+" m")
}

// insetTicks labels an inset's axes every step metres (its scale bar's
// length), with unlabelled ticks at a fifth of it: plot.DefaultTicks
// labelled a 40 m inset every 5 m, "1020 1025 1030" edge to edge.
type insetTicks struct{ step float64 }

// Ticks implements plot.Ticker.
func (t insetTicks) Ticks(min, max float64) []plot.Tick {
	minor := t.step / 5
	var out []plot.Tick
	for k := math.Ceil(min / minor); k*minor <= max; k++ {
		tk := plot.Tick{Value: k * minor}
		if math.Mod(k, 5) == 0 {
			tk.Label = strconv.FormatFloat(k*minor, 'f', -1, 64)
		}
		out = append(out, tk)
	}
	return out
}

// planInset is one inset of a zoomed plan view: its frame, the findings
// that lie in it (indices into Document.Findings, ascending), and the
// range of chainage of conductor 1's stations in it (ok false when none
// is).
type planInset struct {
	frame    planFrame
	findings []int
	chainage [2]float64
	ok       bool
}

// planInsets gathers the findings that the plan view marks into places,
// each the findings that fit in the middle insetInner of a square frame
// insetFrameMin or three traverses across (taken in order along the
// route: by the chainage of conductor 1's station nearest each), and
// returns the frames of the places with the most pressing findings (the
// least index of each), at most maxInsets, in order along the route;
// then how many places more there are, and the findings that lie in no
// frame drawn.
func planInsets(d *Document) (insets []planInset, morePlaces int, more []int) {
	side := math.Max(insetFrameMin, 3*planTraverse(d))
	side = 5 * math.Ceil(side/5)
	inner := side * insetInner
	type place struct {
		idx                   []int
		x0, y0, x1, y1, along float64
	}
	along := func(f *Finding) float64 {
		r := d.Route
		if r == nil {
			return 0
		}
		best, at := math.Inf(1), 0.0
		for _, st := range r.Stations {
			if h := math.Hypot(st.Point[0]-f.Position[0], st.Point[1]-f.Position[1]); h < best {
				best, at = h, st.Chainage
			}
		}
		return at
	}
	var order []int
	key := map[int]float64{}
	for i := range d.Findings {
		if f := &d.Findings[i]; onPlan(f) {
			order = append(order, i)
			key[i] = along(f)
		}
	}
	sort.SliceStable(order, func(a, b int) bool { return key[order[a]] < key[order[b]] })
	var places []*place
	for _, i := range order {
		p := d.Findings[i].Position
		joined := false
		for _, pl := range places {
			x0, y0 := math.Min(pl.x0, p[0]), math.Min(pl.y0, p[1])
			x1, y1 := math.Max(pl.x1, p[0]), math.Max(pl.y1, p[1])
			if x1-x0 <= inner && y1-y0 <= inner {
				pl.idx = append(pl.idx, i)
				pl.x0, pl.y0, pl.x1, pl.y1 = x0, y0, x1, y1
				joined = true
				break
			}
		}
		if !joined {
			places = append(places, &place{idx: []int{i}, x0: p[0], y0: p[1], x1: p[0], y1: p[1], along: key[i]})
		}
	}
	for _, pl := range places {
		sort.Ints(pl.idx)
	}
	sort.SliceStable(places, func(a, b int) bool { return places[a].idx[0] < places[b].idx[0] })
	kept := places
	if len(kept) > maxInsets {
		kept = places[:maxInsets]
	}
	sort.SliceStable(kept, func(a, b int) bool { return kept[a].along < kept[b].along })
	in := map[int]bool{}
	for _, pl := range kept {
		cx, cy := (pl.x0+pl.x1)/2, (pl.y0+pl.y1)/2
		ins := planInset{frame: newPlanFrame(cx, cy, side)}
		for _, i := range order {
			if p := d.Findings[i].Position; ins.frame.has(p[0], p[1]) {
				ins.findings = append(ins.findings, i)
				in[i] = true
			}
		}
		sort.Ints(ins.findings)
		if r := d.Route; r != nil {
			for _, st := range r.Stations {
				if !ins.frame.has(st.Point[0], st.Point[1]) {
					continue
				}
				if !ins.ok {
					ins.chainage, ins.ok = [2]float64{st.Chainage, st.Chainage}, true
				}
				ins.chainage[0] = math.Min(ins.chainage[0], st.Chainage)
				ins.chainage[1] = math.Max(ins.chainage[1], st.Chainage)
			}
		}
		insets = append(insets, ins)
	}
	for _, pl := range places[len(kept):] {
		left := false
		for _, i := range pl.idx {
			if !in[i] {
				more = append(more, i)
				left = true
			}
		}
		if left {
			morePlaces++
		}
	}
	sort.Ints(more)
	return insets, morePlaces, more
}

// planInsetPlot draws the inset of d in: the readings, fitted conductors
// and route, further conductors, chainage 0 and the findings in its
// frame, their numbers and the groups' names, with a scale bar, insetSide
// long square.
func planInsetPlot(d *Document, in planInset) (*plot.Plot, error) {
	return drawPlan(d, insetSide, &in.frame, true)
}
