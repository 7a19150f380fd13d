package diagram

import (
	"image/color"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Style is a visual language for the diagram.
type Style int

// Styles.
const (
	// Plain is Kinetarium's own: tinted rounded boxes for species, a dot
	// for each reaction, dashed lines for modifiers.
	Plain Style = iota
	// SBGN uses the process-description glyphs of the Systems Biology
	// Graphical Notation (an open standard): species as simple-chemical
	// glyphs, process squares, solid modifier arcs with the standard's
	// ends, the empty set as a crossed circle, thick compartment borders.
	SBGN
)

// StyleNamed returns the style of a layout section's name ("" or
// "sbgn").
func StyleNamed(name string) Style {
	if name == "sbgn" {
		return SBGN
	}
	return Plain
}

// View is what part of the diagram is shown. The zero value shows all of
// it.
type View struct {
	// Zoom magnifies the fitted picture; zero means 1.
	Zoom float64
	// Scale, when above zero, replaces the fitted scale: canvas points
	// per diagram point (before Zoom).
	Scale float64
	// Centre is the diagram point at the centre of the picture; nil
	// means the centre of the diagram.
	Centre *Point
}

// Options control Plot. The zero value draws the plain style, the whole
// diagram, no title.
type Options struct {
	Style   Style
	Title   string
	Caption string // a second title line, such as a replay frame's time
	View    View
	// Selected nodes are outlined.
	Selected []int
	// MaxScale caps the size a small diagram is drawn at, relative to its
	// natural size; zero means 1.5.
	MaxScale float64
}

// Plot returns a plot that draws d (laid out) with o, for plotting.Save
// and plotting.Render.
func Plot(d *Diagram, o Options) *plot.Plot {
	p := plot.New()
	p.HideAxes()
	p.Title.Text = o.Title
	if o.Caption != "" {
		if p.Title.Text != "" {
			p.Title.Text += "\n"
		}
		p.Title.Text += o.Caption
	}
	p.Title.TextStyle.Font.Variant = "Sans"
	p.Title.Padding = vg.Points(6)
	p.Add(&drawer{d: d, o: o})
	return p
}

// Transform maps diagram points to a canvas (in points, y up).
type Transform struct {
	Scale  float64 // canvas points per diagram point
	OX, OY float64 // the canvas point of the diagram's origin
}

// ToCanvas maps a diagram point.
func (t Transform) ToCanvas(p Point) vg.Point {
	return vg.Point{X: vg.Length(t.OX + p.X*t.Scale), Y: vg.Length(t.OY - p.Y*t.Scale)}
}

// fit returns the transform that shows d in r with view v.
func fit(d *Diagram, r vg.Rectangle, v View, maxScale float64) Transform {
	const margin = 8.0
	b := d.Bounds()
	bw, bh := math.Max(b.Max.X-b.Min.X, 1), math.Max(b.Max.Y-b.Min.Y, 1)
	w := math.Max(float64(r.Max.X-r.Min.X)-2*margin, 1)
	h := math.Max(float64(r.Max.Y-r.Min.Y)-2*margin, 1)
	if maxScale <= 0 {
		maxScale = 1.5
	}
	s := math.Min(math.Min(w/bw, h/bh), maxScale)
	if v.Scale > 0 {
		s = v.Scale
	}
	if v.Zoom > 0 {
		s *= v.Zoom
	}
	c := Point{(b.Min.X + b.Max.X) / 2, (b.Min.Y + b.Max.Y) / 2}
	if v.Centre != nil {
		c = *v.Centre
	}
	cx, cy := float64(r.Min.X+r.Max.X)/2, float64(r.Min.Y+r.Max.Y)/2
	return Transform{Scale: s, OX: cx - c.X*s, OY: cy + c.Y*s}
}

// PixelFrame maps between diagram points and the pixels of p (made by
// Plot from d and o) rendered at wPx × hPx pixels and dpi dots per inch
// (plotting.Render uses 96), origin at the top left.
type PixelFrame struct {
	T   Transform
	k   float64 // pixels per point
	hPx float64
}

// FrameOf returns the pixel frame of p drawn at wPx × hPx pixels.
func FrameOf(p *plot.Plot, d *Diagram, o Options, wPx, hPx int, dpi float64) PixelFrame {
	k := dpi / 72
	c := draw.Canvas{Rectangle: vg.Rectangle{Max: vg.Point{X: vg.Length(float64(wPx) / k), Y: vg.Length(float64(hPx) / k)}}}
	da := p.DataCanvas(c)
	return PixelFrame{T: fit(d, da.Rectangle, o.View, o.MaxScale), k: k, hPx: float64(hPx)}
}

// ToPixel maps a diagram point to pixels.
func (f PixelFrame) ToPixel(p Point) (x, y float64) {
	c := f.T.ToCanvas(p)
	return float64(c.X) * f.k, f.hPx - float64(c.Y)*f.k
}

// ToDiagram maps pixels to a diagram point.
func (f PixelFrame) ToDiagram(x, y float64) Point {
	if f.T.Scale == 0 || f.k == 0 {
		return Point{}
	}
	cx, cy := x/f.k, (f.hPx-y)/f.k
	return Point{(cx - f.T.OX) / f.T.Scale, (f.T.OY - cy) / f.T.Scale}
}

// PixelsPerPoint is the size on screen of one diagram point.
func (f PixelFrame) PixelsPerPoint() float64 { return f.T.Scale * f.k }

// drawer draws a diagram as a plot.Plotter.
type drawer struct {
	d *Diagram
	o Options
}

// Colours of the drawing.
var (
	ink         = color.NRGBA{R: 0x2b, G: 0x33, B: 0x3d, A: 0xff}
	softInk     = color.NRGBA{R: 0x5a, G: 0x64, B: 0x70, A: 0xff}
	modifierInk = color.NRGBA{R: 0x6c, G: 0x4f, B: 0x9e, A: 0xff}
	inhibitInk  = color.NRGBA{R: 0xa8, G: 0x3a, B: 0x32, A: 0xff}
	speciesTint = color.NRGBA{R: 0xe6, G: 0xef, B: 0xfa, A: 0xff}
	regionTint  = color.NRGBA{R: 0xf6, G: 0xf7, B: 0xf2, A: 0xff}
	regionInk   = color.NRGBA{R: 0x8d, G: 0x95, B: 0x80, A: 0xff}
	errorInk    = color.NRGBA{R: 0xc6, G: 0x28, B: 0x28, A: 0xff}
	warningInk  = color.NRGBA{R: 0xd9, G: 0x8c, B: 0x00, A: 0xff}
	selectInk   = color.NRGBA{R: 0x1e, G: 0x6b, B: 0xd6, A: 0xff}
	white       = color.NRGBA{R: 0xff, G: 0xff, B: 0xff, A: 0xff}
)

// Plot implements plot.Plotter.
func (dr *drawer) Plot(c draw.Canvas, _ *plot.Plot) {
	d := dr.d
	t := fit(d, c.Rectangle, dr.o.View, dr.o.MaxScale)
	s := t.Scale
	sbgn := dr.o.Style == SBGN
	L := func(x float64) vg.Length { return vg.Length(x * s) }
	// Regions.
	for r, g := range d.Regions {
		if g.Max.X <= g.Min.X {
			continue
		}
		rect := vg.Rectangle{Min: t.ToCanvas(Point{g.Min.X, g.Max.Y}), Max: t.ToCanvas(Point{g.Max.X, g.Min.Y})}
		path := roundRect(rect, L(10))
		if !sbgn {
			c.SetColor(regionTint)
			c.Fill(path)
		}
		c.SetLineDash(nil, 0)
		c.SetColor(regionInk)
		if sbgn {
			c.SetColor(ink)
			c.SetLineWidth(L(2.5))
		} else {
			c.SetLineWidth(L(1.2))
		}
		c.Stroke(path)
		lb := d.regionLabelBox(r)
		drawText(c, t.ToCanvas(Point{lb.Min.X, (lb.Min.Y + lb.Max.Y) / 2}), d.regionLabel(r), regionFont*s, regionInk, draw.XLeft)
	}
	// Edges.
	for ei, e := range d.Edges {
		dr.edge(c, t, ei, e)
	}
	// Nodes.
	selected := map[int]bool{}
	for _, i := range dr.o.Selected {
		selected[i] = true
	}
	for i := range d.Nodes {
		dr.node(c, t, i, selected[i])
	}
	// Coefficients.
	for _, l := range d.Labels {
		if l.Edge < 0 {
			continue
		}
		rect := vg.Rectangle{Min: t.ToCanvas(Point{l.Box.Min.X, l.Box.Max.Y}), Max: t.ToCanvas(Point{l.Box.Max.X, l.Box.Min.Y})}
		c.SetColor(white)
		c.Fill(rect.Path())
		if sbgn {
			c.SetLineDash(nil, 0)
			c.SetLineWidth(L(0.6))
			c.SetColor(ink)
			c.Stroke(rect.Path())
		}
		drawText(c, t.ToCanvas(Point{(l.Box.Min.X + l.Box.Max.X) / 2, (l.Box.Min.Y + l.Box.Max.Y) / 2}), l.Text, coefFont*s, ink, draw.XCenter)
	}
}

// edge draws edge ei.
func (dr *drawer) edge(c draw.Canvas, t Transform, ei int, e Edge) {
	d := dr.d
	s := t.Scale
	sbgn := dr.o.Style == SBGN
	from, to := d.Nodes[e.From], d.Nodes[e.To]
	pts := []Point{{from.X, from.Y}}
	pts = append(pts, d.Bends[ei]...)
	pts = append(pts, Point{to.X, to.Y})
	pts[0] = clipToRect(pts[1], pts[0], d.shape(e.From))
	last := len(pts) - 1
	pts[last] = clipToRect(pts[last-1], pts[last], d.shape(e.To))
	// Room for the end mark.
	head := 6.0
	w := 1.1
	if e.Width > 0 {
		w = e.Width
		head = math.Max(head, 1.5*w+4)
	}
	col := color.Color(softInk)
	var dashes []vg.Length
	switch e.Role {
	case Activates, Modulates, Catalyses:
		col = modifierInk
	case Inhibits:
		col = inhibitInk
	}
	if e.Role.Modifier() && !sbgn {
		dashes = []vg.Length{vg.Length(3.5 * s), vg.Length(2.5 * s)}
	}
	line := make([]vg.Point, len(pts))
	for i, p := range pts {
		line[i] = t.ToCanvas(p)
	}
	// The end the mark sits on, and the direction it points.
	tip := line[last]
	dx, dy := float64(tip.X-line[last-1].X), float64(tip.Y-line[last-1].Y)
	l := math.Hypot(dx, dy)
	if l == 0 {
		return
	}
	ux, uy := dx/l, dy/l
	rev := d.Nodes[e.To].Kind == Reaction && d.Nodes[e.To].Reversible || d.Nodes[e.From].Kind == Reaction && d.Nodes[e.From].Reversible
	forwardHead := e.Role == Produces
	backHead := e.Role == Consumes && rev
	if e.Backward {
		forwardHead, backHead = backHead || e.Role == Consumes, forwardHead
	}
	// Shorten the line under a filled head so that its tip stays sharp.
	hs := head * s
	if forwardHead || e.Role.Modifier() {
		line[last] = vg.Point{X: tip.X - vg.Length(ux*hs*0.6), Y: tip.Y - vg.Length(uy*hs*0.6)}
	}
	c.StrokeLines(draw.LineStyle{Color: col, Width: vg.Length(w * s), Dashes: dashes}, line)
	c.SetLineDash(nil, 0)
	switch {
	case forwardHead:
		arrowHead(c, tip, ux, uy, hs, col, true)
	case e.Role == Activates && sbgn:
		arrowHead(c, tip, ux, uy, hs, col, false) // stimulation: an open triangle
	case e.Role == Catalyses && sbgn:
		circleEnd(c, tip, ux, uy, hs*0.45, col, false) // catalysis: an open circle
	case e.Role == Activates || e.Role == Catalyses:
		circleEnd(c, tip, ux, uy, hs*0.45, col, true) // plain: a dot, "acts on"
	case e.Role == Inhibits:
		barEnd(c, tip, ux, uy, hs, col, s)
	case e.Role == Modulates && sbgn:
		diamondEnd(c, tip, ux, uy, hs, col)
	case e.Role == Modulates:
		circleEnd(c, tip, ux, uy, hs*0.45, col, false)
	}
	if backHead {
		t0 := line[0]
		bx, by := float64(t0.X-line[1].X), float64(t0.Y-line[1].Y)
		bl := math.Hypot(bx, by)
		if bl > 0 {
			arrowHead(c, t0, bx/bl, by/bl, hs, col, sbgn)
		}
	}
}

// node draws node i.
func (dr *drawer) node(c draw.Canvas, t Transform, i int, selected bool) {
	d := dr.d
	n := d.Nodes[i]
	s := t.Scale
	sbgn := dr.o.Style == SBGN
	L := func(x float64) vg.Length { return vg.Length(x * s) }
	b := d.Box(i)
	sh := d.shape(i)
	rect := vg.Rectangle{Min: t.ToCanvas(Point{sh.Min.X, sh.Max.Y}), Max: t.ToCanvas(Point{sh.Max.X, sh.Min.Y})}
	outline := color.Color(ink)
	width := 1.0
	switch n.Mark {
	case Error:
		outline, width = errorInk, 2.2
	case Warning:
		outline, width = warningInk, 2.2
	}
	c.SetLineDash(nil, 0)
	if selected {
		g := b.Grow(3)
		sr := vg.Rectangle{Min: t.ToCanvas(Point{g.Min.X, g.Max.Y}), Max: t.ToCanvas(Point{g.Max.X, g.Min.Y})}
		c.SetColor(color.NRGBA{R: 0x1e, G: 0x6b, B: 0xd6, A: 0x30})
		c.Fill(roundRect(sr, L(4)))
		c.SetColor(selectInk)
		c.SetLineWidth(L(1.5))
		c.Stroke(roundRect(sr, L(4)))
	}
	switch n.Kind {
	case Species:
		radius := L(5)
		if sbgn {
			radius = L(speciesH / 2)
		}
		fill := color.Color(speciesTint)
		if sbgn {
			fill = white
		}
		if n.Fill != nil {
			fill = n.Fill
		}
		c.SetColor(fill)
		c.Fill(roundRect(rect, radius))
		c.SetColor(outline)
		c.SetLineWidth(L(width))
		c.Stroke(roundRect(rect, radius))
		if n.Fixed {
			in := vg.Rectangle{Min: vg.Point{X: rect.Min.X + L(2.5), Y: rect.Min.Y + L(2.5)}, Max: vg.Point{X: rect.Max.X - L(2.5), Y: rect.Max.Y - L(2.5)}}
			c.SetLineWidth(L(0.8))
			c.Stroke(roundRect(in, max(radius-L(2.5), 0)))
		}
		txt := color.Color(ink)
		if n.Fill != nil && luminance(n.Fill) < 0.45 {
			txt = white
		}
		drawText(c, t.ToCanvas(Point{n.X, n.Y}), n.Name, speciesFont*s, txt, draw.XCenter)
	case Reaction:
		ctr := t.ToCanvas(Point{n.X, n.Y})
		if sbgn {
			c.SetColor(white)
			c.Fill(rect.Path())
			c.SetColor(outline)
			c.SetLineWidth(L(width))
			c.Stroke(rect.Path())
		} else {
			var p vg.Path
			p.Move(vg.Point{X: ctr.X + L(reactionSide/2), Y: ctr.Y})
			p.Arc(ctr, L(reactionSide/2), 0, 2*math.Pi)
			p.Close()
			if n.Reversible {
				c.SetColor(white)
				c.Fill(p)
				c.SetColor(outline)
				c.SetLineWidth(L(math.Max(width, 2)))
				c.Stroke(p)
			} else {
				c.SetColor(outline)
				c.Fill(p)
			}
		}
		drawText(c, vg.Point{X: ctr.X + L(reactionSide/2+labelGap), Y: ctr.Y}, n.Name, reactionFont*s, softInk, draw.XLeft)
	default: // Source, Sink: the empty set
		ctr := t.ToCanvas(Point{n.X, n.Y})
		r := L(emptyR - 0.5)
		var p vg.Path
		p.Move(vg.Point{X: ctr.X + r, Y: ctr.Y})
		p.Arc(ctr, r, 0, 2*math.Pi)
		p.Close()
		c.SetColor(white)
		c.Fill(p)
		c.SetColor(outline)
		if !sbgn && n.Mark == NoMark {
			c.SetColor(softInk)
		}
		c.SetLineWidth(L(math.Max(width, 1)))
		c.Stroke(p)
		a := 0.25 * math.Pi
		q := r * 1.35
		c.StrokeLine2(draw.LineStyle{Color: ink, Width: L(1)}, ctr.X-q*vg.Length(math.Cos(a)), ctr.Y-q*vg.Length(math.Sin(a)), ctr.X+q*vg.Length(math.Cos(a)), ctr.Y+q*vg.Length(math.Sin(a)))
	}
}

// luminance returns the relative luminance of c, 0 (black) to 1 (white).
func luminance(c color.Color) float64 {
	r, g, b, _ := c.RGBA()
	return (0.2126*float64(r) + 0.7152*float64(g) + 0.0722*float64(b)) / 0xffff
}

// drawText writes txt at pt (its vertical centre), size pt points.
func drawText(c draw.Canvas, pt vg.Point, txt string, size float64, col color.Color, xAlign text.XAlignment) {
	if size < 0.5 {
		return
	}
	fnt := font.Font{Typeface: plot.DefaultFont.Typeface, Variant: "Sans", Size: vg.Points(size)}
	sty := text.Style{Color: col, Font: fnt, XAlign: xAlign, YAlign: draw.YCenter, Handler: plot.DefaultTextHandler}
	c.FillText(sty, pt, txt)
}

// roundRect returns the outline of r with corners of radius rad.
func roundRect(r vg.Rectangle, rad vg.Length) vg.Path {
	rad = min(rad, (r.Max.X-r.Min.X)/2, (r.Max.Y-r.Min.Y)/2)
	var p vg.Path
	if rad <= 0 {
		return r.Path()
	}
	p.Move(vg.Point{X: r.Min.X + rad, Y: r.Min.Y})
	p.Line(vg.Point{X: r.Max.X - rad, Y: r.Min.Y})
	p.Arc(vg.Point{X: r.Max.X - rad, Y: r.Min.Y + rad}, rad, -math.Pi/2, math.Pi/2)
	p.Line(vg.Point{X: r.Max.X, Y: r.Max.Y - rad})
	p.Arc(vg.Point{X: r.Max.X - rad, Y: r.Max.Y - rad}, rad, 0, math.Pi/2)
	p.Line(vg.Point{X: r.Min.X + rad, Y: r.Max.Y})
	p.Arc(vg.Point{X: r.Min.X + rad, Y: r.Max.Y - rad}, rad, math.Pi/2, math.Pi/2)
	p.Line(vg.Point{X: r.Min.X, Y: r.Min.Y + rad})
	p.Arc(vg.Point{X: r.Min.X + rad, Y: r.Min.Y + rad}, rad, math.Pi, math.Pi/2)
	p.Close()
	return p
}

// arrowHead draws a triangle with its tip at tip pointing along (ux, uy).
func arrowHead(c draw.Canvas, tip vg.Point, ux, uy, size float64, col color.Color, filled bool) {
	bx, by := float64(tip.X)-ux*size, float64(tip.Y)-uy*size
	px, py := -uy*size*0.45, ux*size*0.45
	pts := []vg.Point{tip, {X: vg.Length(bx + px), Y: vg.Length(by + py)}, {X: vg.Length(bx - px), Y: vg.Length(by - py)}}
	var p vg.Path
	p.Move(pts[0])
	p.Line(pts[1])
	p.Line(pts[2])
	p.Close()
	if filled {
		c.SetColor(col)
		c.Fill(p)
		return
	}
	c.SetColor(white)
	c.Fill(p)
	c.SetColor(col)
	c.SetLineWidth(vg.Length(size / 6))
	c.Stroke(p)
}

// circleEnd draws a circle of radius r touching tip.
func circleEnd(c draw.Canvas, tip vg.Point, ux, uy, r float64, col color.Color, filled bool) {
	ctr := vg.Point{X: tip.X - vg.Length(ux*r), Y: tip.Y - vg.Length(uy*r)}
	var p vg.Path
	p.Move(vg.Point{X: ctr.X + vg.Length(r), Y: ctr.Y})
	p.Arc(ctr, vg.Length(r), 0, 2*math.Pi)
	p.Close()
	if !filled {
		c.SetColor(white)
		c.Fill(p)
		c.SetColor(col)
		c.SetLineWidth(vg.Length(r / 3))
		c.Stroke(p)
		return
	}
	c.SetColor(col)
	c.Fill(p)
}

// barEnd draws a bar across the line at tip.
func barEnd(c draw.Canvas, tip vg.Point, ux, uy, size float64, col color.Color, s float64) {
	px, py := -uy*size*0.6, ux*size*0.6
	b := vg.Point{X: tip.X - vg.Length(ux*s), Y: tip.Y - vg.Length(uy*s)}
	c.StrokeLine2(draw.LineStyle{Color: col, Width: vg.Length(1.8 * s)}, b.X-vg.Length(px), b.Y-vg.Length(py), b.X+vg.Length(px), b.Y+vg.Length(py))
}

// diamondEnd draws an open diamond with a corner at tip.
func diamondEnd(c draw.Canvas, tip vg.Point, ux, uy, size float64, col color.Color) {
	m := vg.Point{X: tip.X - vg.Length(ux*size/2), Y: tip.Y - vg.Length(uy*size/2)}
	back := vg.Point{X: tip.X - vg.Length(ux*size), Y: tip.Y - vg.Length(uy*size)}
	px, py := vg.Length(-uy*size*0.35), vg.Length(ux*size*0.35)
	var p vg.Path
	p.Move(tip)
	p.Line(vg.Point{X: m.X + px, Y: m.Y + py})
	p.Line(back)
	p.Line(vg.Point{X: m.X - px, Y: m.Y - py})
	p.Close()
	c.SetColor(white)
	c.Fill(p)
	c.SetColor(col)
	c.SetLineWidth(vg.Length(size / 6))
	c.Stroke(p)
}
