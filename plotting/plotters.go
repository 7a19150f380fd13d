package plotting

import (
	"fmt"
	"image/color"
	"math"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// curve is a polyline (and optionally markers) through (xs[i], ys[i]) that
// breaks where a point cannot be shown: non-finite, or ≤ 0 on a log axis.
// It shares xs and ys with the caller and keeps its drawing buffers between
// draws.
type curve struct {
	xs, ys     []float64
	logX, logY bool
	line       draw.LineStyle   // Width 0 draws no line
	glyph      *draw.GlyphStyle // nil draws no markers

	pts  []vg.Point
	segs [][]vg.Point
	keep []bool
	dash dasher
	path vg.Path
}

// Plot implements plot.Plotter.
func (c *curve) Plot(dc draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&dc)
	if cap(c.pts) < len(c.xs) {
		c.pts = make([]vg.Point, 0, len(c.xs))
	}
	pts, segs := c.pts[:0], c.segs[:0]
	start := 0
	for i, x := range c.xs {
		y := c.ys[i]
		if !usable(x, c.logX) || !usable(y, c.logY) {
			if len(pts) > start {
				segs = append(segs, pts[start:])
			}
			start = len(pts)
			continue
		}
		pts = append(pts, vg.Point{X: trX(x), Y: trY(y)})
	}
	if len(pts) > start {
		segs = append(segs, pts[start:])
	}
	c.pts, c.segs = pts, segs
	if c.line.Width > 0 {
		dpi, raster := rasterDPI(dc.Canvas)
		if c.glyph == nil {
			// Thin and simplify in place: pts is rebuilt on every draw.
			for i, s := range segs {
				if raster {
					s = decimateColumns(s, vg.Inch/vg.Length(dpi))
				}
				segs[i], c.keep = simplify(s, simplifyTol, c.keep)
			}
		}
		lines := dc.ClipLinesXY(segs...)
		if raster && len(c.line.Dashes) > 0 {
			strokeDashed(dc, c.line, lines, &c.dash, &c.path)
		} else {
			dc.StrokeLines(c.line, lines...)
		}
	}
	if c.glyph != nil {
		for _, pt := range pts {
			if dc.Contains(pt) {
				dc.DrawGlyph(*c.glyph, pt)
			}
		}
	}
}

// simplifyTol is how far, in points, a polyline vertex may lie from the
// straight line through its neighbours and still be dropped: a fifth of a
// pixel at 96 dpi, below what the eye or the rasteriser can tell.
const simplifyTol = 0.15

// simplify returns the vertices of pts that the Douglas–Peucker algorithm
// keeps at tolerance tol (Douglas & Peucker 1973): every dropped vertex lies
// within tol of the segment that replaces it. Ends are always kept. Long
// smooth stretches of a trajectory collapse to a few segments, which makes
// stroking much cheaper. keep is work space, grown as needed and returned.
func simplify(pts []vg.Point, tol vg.Length, keep []bool) ([]vg.Point, []bool) {
	n := len(pts)
	if n < 3 {
		return pts, keep
	}
	if cap(keep) < n {
		keep = make([]bool, n)
	}
	keep = keep[:n]
	clear(keep)
	keep[0], keep[n-1] = true, true
	type span struct{ i, j int }
	var stackBuf [64]span
	stack := append(stackBuf[:0], span{0, n - 1})
	for len(stack) > 0 {
		s := stack[len(stack)-1]
		stack = stack[:len(stack)-1]
		a, b := pts[s.i], pts[s.j]
		dx, dy := b.X-a.X, b.Y-a.Y
		len2 := dx*dx + dy*dy
		worst, far := vg.Length(-1), -1
		for k := s.i + 1; k < s.j; k++ {
			q := pts[k]
			var d2 vg.Length
			if len2 == 0 {
				d2 = (q.X-a.X)*(q.X-a.X) + (q.Y-a.Y)*(q.Y-a.Y)
			} else {
				// Squared distance from the segment a–b.
				t := ((q.X-a.X)*dx + (q.Y-a.Y)*dy) / len2
				t = max(0, min(1, t))
				ex, ey := a.X+t*dx-q.X, a.Y+t*dy-q.Y
				d2 = ex*ex + ey*ey
			}
			if d2 > worst {
				worst, far = d2, k
			}
		}
		if far >= 0 && worst > tol*tol {
			keep[far] = true
			stack = append(stack, span{s.i, far}, span{far, s.j})
		}
	}
	out := pts[:0]
	for i, k := range keep {
		if k {
			out = append(out, pts[i])
		}
	}
	return out, keep
}

// DataRange implements plot.DataRanger over the points that can be shown.
func (c *curve) DataRange() (xmin, xmax, ymin, ymax float64) {
	xmin, ymin = math.Inf(1), math.Inf(1)
	xmax, ymax = math.Inf(-1), math.Inf(-1)
	for i, x := range c.xs {
		y := c.ys[i]
		if !usable(x, c.logX) || !usable(y, c.logY) {
			continue
		}
		xmin, xmax = math.Min(xmin, x), math.Max(xmax, x)
		ymin, ymax = math.Min(ymin, y), math.Max(ymax, y)
	}
	return xmin, xmax, ymin, ymax
}

// GlyphBoxes implements plot.GlyphBoxer, so that markers at the edge of the
// data area are not cut off.
func (c *curve) GlyphBoxes(p *plot.Plot) []plot.GlyphBox {
	if c.glyph == nil {
		return nil
	}
	r := c.glyph.Radius
	var boxes []plot.GlyphBox
	for i, x := range c.xs {
		if usable(x, c.logX) && usable(c.ys[i], c.logY) {
			boxes = append(boxes, plot.GlyphBox{
				X: p.X.Norm(x), Y: p.Y.Norm(c.ys[i]),
				Rectangle: vg.Rectangle{Min: vg.Point{X: -r, Y: -r}, Max: vg.Point{X: r, Y: r}},
			})
		}
	}
	return boxes
}

// Thumbnail implements plot.Thumbnailer.
func (c *curve) Thumbnail(dc *draw.Canvas) {
	y := dc.Center().Y
	if c.line.Width > 0 {
		dc.StrokeLine2(c.line, dc.Min.X, y, dc.Max.X, y)
	}
	if c.glyph != nil {
		dc.DrawGlyph(*c.glyph, dc.Center())
	}
}

// band fills the region between lo and hi over xs, leaving gaps where a
// point cannot be shown.
type band struct {
	xs, lo, hi []float64
	logX, logY bool
	fill       color.Color
}

// Plot implements plot.Plotter.
func (b *band) Plot(dc draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&dc)
	ok := func(i int) bool {
		return usable(b.xs[i], b.logX) && usable(b.lo[i], b.logY) && usable(b.hi[i], b.logY)
	}
	poly := make([]vg.Point, 0, 2*len(b.xs))
	for i := 0; i < len(b.xs); {
		if !ok(i) {
			i++
			continue
		}
		j := i
		for j < len(b.xs) && ok(j) {
			j++
		}
		if j-i >= 2 {
			poly = poly[:0]
			for k := i; k < j; k++ {
				poly = append(poly, vg.Point{X: trX(b.xs[k]), Y: trY(b.hi[k])})
			}
			for k := j - 1; k >= i; k-- {
				poly = append(poly, vg.Point{X: trX(b.xs[k]), Y: trY(b.lo[k])})
			}
			dc.FillPolygon(b.fill, dc.ClipPolygonXY(poly))
		}
		i = j
	}
}

// DataRange implements plot.DataRanger.
func (b *band) DataRange() (xmin, xmax, ymin, ymax float64) {
	lo := curve{xs: b.xs, ys: b.lo, logX: b.logX, logY: b.logY}
	hi := curve{xs: b.xs, ys: b.hi, logX: b.logX, logY: b.logY}
	x0, x1, y0, _ := lo.DataRange()
	x2, x3, _, y3 := hi.DataRange()
	return math.Min(x0, x2), math.Max(x1, x3), y0, y3
}

// Thumbnail implements plot.Thumbnailer.
func (b *band) Thumbnail(dc *draw.Canvas) {
	dc.FillPolygon(b.fill, rectPoints(dc.Rectangle))
}

// bars draws a histogram: bin i spans edges[i] to edges[i+1] with height
// counts[i]. Bars rise from 0, or from the bottom of a log axis.
type bars struct {
	edges, counts []float64
	logX, logY    bool
	fill          color.Color
	line          draw.LineStyle
}

// Plot implements plot.Plotter.
func (b *bars) Plot(dc draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&dc)
	base := 0.0
	if b.logY {
		base = p.Y.Min
	}
	for i, n := range b.counts {
		if n <= 0 || !usable(n, b.logY) {
			continue
		}
		x0, x1 := trX(b.edges[i]), trX(b.edges[i+1])
		y0, y1 := trY(base), trY(n)
		rect := []vg.Point{{X: x0, Y: y0}, {X: x0, Y: y1}, {X: x1, Y: y1}, {X: x1, Y: y0}}
		dc.FillPolygon(b.fill, dc.ClipPolygonXY(rect))
		outline := append(rect[:4:4], rect[0])
		dc.StrokeLines(b.line, dc.ClipLinesXY(outline)...)
	}
}

// DataRange implements plot.DataRanger.
func (b *bars) DataRange() (xmin, xmax, ymin, ymax float64) {
	xmin, xmax = b.edges[0], b.edges[len(b.edges)-1]
	ymin, ymax = 0, 1
	if b.logY {
		ymin = math.Inf(1)
	}
	for _, n := range b.counts {
		ymax = math.Max(ymax, n)
		if n > 0 && b.logY {
			ymin = math.Min(ymin, n/2)
		}
	}
	if math.IsInf(ymin, 1) {
		ymin = 0.5
	}
	return xmin, xmax, ymin, ymax
}

// Thumbnail implements plot.Thumbnailer.
func (b *bars) Thumbnail(dc *draw.Canvas) {
	dc.FillPolygon(b.fill, rectPoints(dc.Rectangle))
}

// cells draws a grid of coloured cells: cell (iy, ix) spans xe[ix]–xe[ix+1]
// and ye[iy]–ye[iy+1] and has colour colour(z[iy][ix]); non-finite z are
// left blank.
type cells struct {
	xe, ye []float64
	z      [][]float64
	colour func(z float64) color.Color
}

// Plot implements plot.Plotter.
func (h *cells) Plot(dc draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&dc)
	rect := make([]vg.Point, 4)
	for iy, row := range h.z {
		y0, y1 := trY(h.ye[iy]), trY(h.ye[iy+1])
		for ix, v := range row {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				continue
			}
			x0, x1 := trX(h.xe[ix]), trX(h.xe[ix+1])
			x0, x1, y0, y1 := grow(x0, x1), grow2(x0, x1), grow(y0, y1), grow2(y0, y1) // overlap hides seams
			rect[0], rect[1], rect[2], rect[3] = vg.Point{X: x0, Y: y0}, vg.Point{X: x0, Y: y1}, vg.Point{X: x1, Y: y1}, vg.Point{X: x1, Y: y0}
			dc.FillPolygon(h.colour(v), dc.ClipPolygonXY(rect))
		}
	}
}

// grow and grow2 widen the span a–b by a quarter point at each end.
func grow(a, b vg.Length) vg.Length  { return min(a, b) - 0.25 }
func grow2(a, b vg.Length) vg.Length { return max(a, b) + 0.25 }

// DataRange implements plot.DataRanger.
func (h *cells) DataRange() (xmin, xmax, ymin, ymax float64) {
	return h.xe[0], h.xe[len(h.xe)-1], h.ye[0], h.ye[len(h.ye)-1]
}

// cellEdges returns the len(c)+1 edges of cells centred on the ascending
// centres c: midpoints between neighbours (geometric on a log axis), with
// the outer edges mirrored.
func cellEdges(c []float64, log bool) []float64 {
	e := make([]float64, len(c)+1)
	if len(c) == 1 {
		if log {
			e[0], e[1] = c[0]/math.Sqrt(10), c[0]*math.Sqrt(10)
		} else {
			e[0], e[1] = c[0]-0.5, c[0]+0.5
		}
		return e
	}
	mid := func(a, b float64) float64 {
		if log {
			return math.Sqrt(a * b)
		}
		return (a + b) / 2
	}
	for i := 1; i < len(c); i++ {
		e[i] = mid(c[i-1], c[i])
	}
	n := len(c)
	if log {
		e[0] = c[0] * c[0] / e[1]
		e[n] = c[n-1] * c[n-1] / e[n-1]
	} else {
		e[0] = 2*c[0] - e[1]
		e[n] = 2*c[n-1] - e[n-1]
	}
	return e
}

// colourBar draws, in the right margin of the plot, a vertical bar of the
// sequential scale for values lo–hi with ticks and a rotated label. It
// reserves its margin through GlyphBoxes, so it must be added to the plot
// after the data.
type colourBar struct {
	lo, hi float64
	log    bool
	signed bool // the diverging scale (DivergingColour) instead of ScaleColour
	label  string
	ticks  []plot.Tick
	tick   text.Style // tick label style
	title  text.Style // bar label style, rotated
}

// Lengths of the colour bar, in points.
const (
	barGap     = 10
	barWidth   = 12
	barTickLen = 4
	barPad     = 3
)

// newColourBar returns a bar for lo–hi (logarithmic when log) with label.
func newColourBar(lo, hi float64, log bool, label string) *colourBar {
	if lo == hi || math.IsNaN(lo) || math.IsNaN(hi) {
		lo, hi = lo-0.5, hi+0.5
		if log {
			lo, hi = (lo+0.5)/2, (hi-0.5)*2
		}
	}
	p := plot.New()
	b := &colourBar{lo: lo, hi: hi, log: log, label: label, tick: p.Y.Tick.Label, title: p.Y.Label.TextStyle}
	b.tick.XAlign, b.tick.YAlign = draw.XLeft, draw.YCenter
	b.title.Rotation = math.Pi / 2
	b.title.XAlign, b.title.YAlign = draw.XCenter, draw.YCenter
	if log {
		b.tick.Handler = powerLabels
		b.ticks = decadeTicks{}.Ticks(lo, hi)
	} else {
		b.ticks = plot.DefaultTicks{}.Ticks(lo, hi)
	}
	// Always label both ends; drop labels that would crowd them.
	fmtEnd := func(v float64) string {
		return strconv.FormatFloat(v, 'g', 3, 64)
	}
	kept := b.ticks[:0]
	for _, t := range b.ticks {
		if f := b.norm(t.Value); t.Label != "" && (f < 0.08 || f > 0.92) {
			t.Label = ""
		}
		kept = append(kept, t)
	}
	b.ticks = append(kept, plot.Tick{Value: lo, Label: fmtEnd(lo)}, plot.Tick{Value: hi, Label: fmtEnd(hi)})
	return b
}

// colour returns the bar's colour at fraction f.
func (b *colourBar) colour(f float64) color.Color {
	if b.signed {
		return DivergingColour(f)
	}
	return ScaleColour(f)
}

// norm maps v to its fraction of the bar.
func (b *colourBar) norm(v float64) float64 {
	if b.log {
		return math.Log(v/b.lo) / math.Log(b.hi/b.lo)
	}
	return (v - b.lo) / (b.hi - b.lo)
}

// labelWidth is the widest tick label.
func (b *colourBar) labelWidth() vg.Length {
	var w vg.Length
	for _, t := range b.ticks {
		if t.Label != "" {
			w = max(w, b.tick.Width(t.Label))
		}
	}
	return w
}

// GlyphBoxes implements plot.GlyphBoxer: it claims the right margin.
func (b *colourBar) GlyphBoxes(*plot.Plot) []plot.GlyphBox {
	w := vg.Points(barGap+barWidth+barTickLen+2*barPad) + b.labelWidth()
	if b.label != "" {
		w += b.title.Height(b.label) + vg.Points(barPad)
	}
	return []plot.GlyphBox{{X: 1, Y: 0.5, Rectangle: vg.Rectangle{Max: vg.Point{X: w}}}}
}

// Plot implements plot.Plotter.
func (b *colourBar) Plot(dc draw.Canvas, _ *plot.Plot) {
	x0 := dc.Max.X + vg.Points(barGap)
	x1 := x0 + vg.Points(barWidth)
	y0, h := dc.Min.Y, dc.Max.Y-dc.Min.Y
	const strips = 64
	for i := range strips {
		ya := y0 + h*vg.Length(i)/strips
		yb := y0 + h*vg.Length(i+1)/strips + 0.3 // overlap hides seams
		dc.FillPolygon(b.colour((float64(i)+0.5)/strips), []vg.Point{{X: x0, Y: ya}, {X: x0, Y: yb}, {X: x1, Y: yb}, {X: x1, Y: ya}})
	}
	frame := draw.LineStyle{Color: color.Black, Width: vg.Points(0.5)}
	dc.StrokeLines(frame, []vg.Point{{X: x0, Y: y0}, {X: x0, Y: y0 + h}, {X: x1, Y: y0 + h}, {X: x1, Y: y0}, {X: x0, Y: y0}})
	tx := x1 + vg.Points(barTickLen)
	for _, t := range b.ticks {
		f := b.norm(t.Value)
		if f < -1e-9 || f > 1+1e-9 {
			continue
		}
		y := y0 + h*vg.Length(f)
		tl := vg.Points(barTickLen)
		if t.Label == "" {
			tl /= 2
		}
		dc.StrokeLine2(frame, x1, y, x1+tl, y)
		if t.Label != "" {
			dc.FillText(b.tick, vg.Point{X: tx + vg.Points(barPad), Y: y}, t.Label)
		}
	}
	if b.label != "" {
		lx := tx + 2*vg.Points(barPad) + b.labelWidth() + b.title.Height(b.label)/2
		dc.FillText(b.title, vg.Point{X: lx, Y: y0 + h/2}, b.label)
	}
}

// rectPoints returns the corners of r.
func rectPoints(r vg.Rectangle) []vg.Point {
	return []vg.Point{r.Min, {X: r.Min.X, Y: r.Max.Y}, r.Max, {X: r.Max.X, Y: r.Min.Y}}
}

// legendEntry is one line of a sideLegend.
type legendEntry struct {
	text  string
	thumb plot.Thumbnailer // nil for a text-only line
}

// sideLegend lists series in the right margin of the plot, beside the data
// rather than over it. It reserves its margin through GlyphBoxes. Entries
// that do not fit the height are summarised in a last line "… and k more".
type sideLegend struct {
	entries []legendEntry
	style   text.Style
	width   vg.Length // of the margin, once measured; 0 before
}

// Lengths of the side legend, in points.
const (
	legendGap   = 10
	legendThumb = 24
	legendPad   = 4
)

// newSideLegend returns an empty legend in the plot's legend text style.
func newSideLegend(p *plot.Plot) *sideLegend {
	st := p.Legend.TextStyle
	st.Font.Size = vg.Points(10)
	st.XAlign, st.YAlign = draw.XLeft, draw.YCenter
	return &sideLegend{style: st}
}

// add appends an entry.
func (l *sideLegend) add(text string, thumb plot.Thumbnailer) {
	l.entries = append(l.entries, legendEntry{text, thumb})
	l.width = 0
}

// GlyphBoxes implements plot.GlyphBoxer: it claims the right margin.
func (l *sideLegend) GlyphBoxes(*plot.Plot) []plot.GlyphBox {
	if len(l.entries) == 0 {
		return nil
	}
	if l.width == 0 {
		// Measured once: drawing a plot asks for its glyph boxes several
		// times, and measuring every entry is a good part of the work.
		w := l.style.Width("… and 999 more")
		for _, e := range l.entries {
			w = max(w, l.style.Width(e.text))
		}
		l.width = w + vg.Points(legendGap+legendThumb+legendPad)
	}
	return []plot.GlyphBox{{X: 1, Y: 0.5, Rectangle: vg.Rectangle{Max: vg.Point{X: l.width}}}}
}

// Plot implements plot.Plotter.
func (l *sideLegend) Plot(dc draw.Canvas, _ *plot.Plot) {
	if len(l.entries) == 0 {
		return
	}
	rowH := l.style.Height("Ag") * 1.3
	fit := max(int((dc.Max.Y-dc.Min.Y)/rowH), 1)
	entries := l.entries
	if len(entries) > fit {
		entries = append(entries[:fit-1:fit-1], legendEntry{text: fmt.Sprintf("… and %d more", len(l.entries)-fit+1)})
	}
	x0 := dc.Max.X + vg.Points(legendGap)
	y := dc.Max.Y
	for _, e := range entries {
		icon := draw.Canvas{Canvas: dc.Canvas, Rectangle: vg.Rectangle{
			Min: vg.Point{X: x0, Y: y - rowH},
			Max: vg.Point{X: x0 + vg.Points(legendThumb), Y: y},
		}}
		if e.thumb != nil {
			e.thumb.Thumbnail(&icon)
		}
		dc.FillText(l.style, vg.Point{X: x0 + vg.Points(legendThumb+legendPad), Y: y - rowH/2}, e.text)
		y -= rowH
	}
}
