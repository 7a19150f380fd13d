package main

import (
	"image"
	"image/color"
	"math"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/driver/desktop"
	"fyne.io/fyne/v2/widget"

	"kinetarium/app/diagram"
	"kinetarium/network"
	"kinetarium/plotting"
	pd "kinetarium/plotting/diagram"
)

// diagramView shows a laid-out diagram at the widget's size: a tap
// selects a node, dragging a node moves it, dragging elsewhere pans, the
// scroll wheel zooms around the pointer, and the pointer resting on a node
// shows what it is (a reaction's rate formula, the item's problems).
type diagramView struct {
	widget.BaseWidget

	d    *pd.Diagram
	net  *network.Net
	opts pd.Options

	img         *canvas.Image
	tipBg       *canvas.Rectangle
	tip         *widget.Label
	placeholder *widget.Label

	frame pd.PixelFrame
	scale float32 // image pixels per widget unit of the last render
	drawn fyne.Size
	dirty bool
	buf   *image.RGBA

	// fitTop asks the next render to show a diagram much taller than
	// the view at a readable size from its top, rather than whole.
	fitTop bool

	dragging  bool
	dragNode  int
	dragStart fyne.Position
	moved     bool

	// OnSelect is called with the node tapped (-1 for none).
	OnSelect func(i int)
	// OnMoved is called when a node has been dragged to a new place.
	OnMoved func(i int)
	// OnDrawn is called after every render.
	OnDrawn func()
}

func newDiagramView() *diagramView {
	v := &diagramView{
		img:         canvas.NewImageFromImage(nil),
		tipBg:       canvas.NewRectangle(color.NRGBA{R: 0xff, G: 0xff, B: 0xf4, A: 0xf0}),
		tip:         widget.NewLabel(""),
		placeholder: widget.NewLabel("The diagram appears when the model has species and reactions."),
		dragNode:    -1,
	}
	v.img.FillMode = canvas.ImageFillStretch
	v.img.ScaleMode = canvas.ImageScaleFastest
	v.tipBg.StrokeColor = color.NRGBA{A: 0x60}
	v.tipBg.StrokeWidth = 1
	v.tipBg.Hide()
	v.tip.Hide()
	v.placeholder.Alignment = fyne.TextAlignCenter
	v.placeholder.Wrapping = fyne.TextWrapWord
	v.ExtendBaseWidget(v)
	return v
}

// Set shows d (laid out) for the checked network net.
func (v *diagramView) Set(d *pd.Diagram, net *network.Net) {
	v.d, v.net = d, net
	v.dirty = true
	v.hideTip()
	v.Refresh()
}

// redraw draws again with the current options.
func (v *diagramView) redraw() {
	v.dirty = true
	v.Refresh()
}

// CreateRenderer implements fyne.Widget.
func (v *diagramView) CreateRenderer() fyne.WidgetRenderer {
	return &diagramRenderer{v: v, objects: []fyne.CanvasObject{v.img, v.tipBg, v.tip, v.placeholder}}
}

type diagramRenderer struct {
	v       *diagramView
	objects []fyne.CanvasObject
}

func (r *diagramRenderer) Destroy()                     {}
func (r *diagramRenderer) Objects() []fyne.CanvasObject { return r.objects }
func (r *diagramRenderer) MinSize() fyne.Size           { return fyne.NewSize(240, 180) }

func (r *diagramRenderer) Layout(size fyne.Size) {
	v := r.v
	v.img.Resize(size)
	v.img.Move(fyne.NewPos(0, 0))
	v.placeholder.Resize(fyne.NewSize(size.Width-40, v.placeholder.MinSize().Height*2))
	v.placeholder.Move(fyne.NewPos(20, size.Height/2-v.placeholder.MinSize().Height))
	if size != v.drawn {
		v.dirty = true
	}
}

func (r *diagramRenderer) Refresh() {
	if r.v.dirty {
		r.v.render()
	}
	canvas.Refresh(r.v.img)
}

// render draws the diagram at the widget's size.
func (v *diagramView) render() {
	size := v.Size()
	v.dirty = false
	if v.d == nil || len(v.d.Nodes) == 0 || size.Width < 10 || size.Height < 10 {
		v.img.Image = nil
		v.placeholder.Show()
		return
	}
	v.placeholder.Hide()
	s := float32(1)
	if c := fyne.CurrentApp().Driver().CanvasForObject(v); c != nil && c.Scale() > 0 {
		s = c.Scale()
	}
	w, h := int(math.Round(float64(size.Width*s))), int(math.Round(float64(size.Height*s)))
	if v.fitTop && size.Width > 300 && size.Height > 200 {
		v.fitTop = false
		v.showTop(float64(w)*72/96, float64(h)*72/96)
	}
	p := pd.Plot(v.d, v.opts)
	// A new image each time: the canvas may still be showing the last.
	v.buf = image.NewRGBA(image.Rect(0, 0, max(w, 1), max(h, 1)))
	plotting.RenderInto(p, v.buf)
	v.img.Image = v.buf
	v.frame = pd.FrameOf(p, v.d, v.opts, w, h, 96)
	v.scale, v.drawn = s, size
	if v.OnDrawn != nil {
		v.OnDrawn()
	}
}

// showTop sets the view of a diagram much taller than a wpt × hpt view
// (in points) to fill the view's width, at most at natural size, from
// the diagram's top.
func (v *diagramView) showTop(wpt, hpt float64) {
	b := v.d.Bounds()
	bw, bh := math.Max(b.Max.X-b.Min.X, 1), math.Max(b.Max.Y-b.Min.Y, 1)
	if bh/bw < 1.5*hpt/wpt {
		return
	}
	fitted := math.Min(math.Min((wpt-16)/bw, (hpt-16)/bh), 1.5)
	want := math.Min((wpt-16)*0.9/bw, 1.2)
	if want <= fitted {
		return
	}
	c := pd.Point{X: (b.Min.X + b.Max.X) / 2, Y: b.Min.Y + (hpt/2-8)/want}
	v.opts.View = pd.View{Scale: want, Centre: &c}
}

// Resize re-draws at the new size.
func (v *diagramView) Resize(s fyne.Size) {
	if s == v.Size() {
		return
	}
	v.BaseWidget.Resize(s)
	v.dirty = true
	v.Refresh()
}

// at returns the diagram point under widget position p.
func (v *diagramView) at(p fyne.Position) pd.Point {
	return v.frame.ToDiagram(float64(p.X*v.scale), float64(p.Y*v.scale))
}

// Tapped selects the node under the pointer.
func (v *diagramView) Tapped(e *fyne.PointEvent) {
	if v.d == nil || v.scale == 0 {
		return
	}
	i := v.d.NodeAt(v.at(e.Position))
	v.Select(i)
	if v.OnSelect != nil {
		v.OnSelect(i)
	}
}

// Select outlines node i (none for -1).
func (v *diagramView) Select(i int) {
	if i < 0 {
		v.opts.Selected = nil
	} else {
		v.opts.Selected = []int{i}
	}
	v.redraw()
}

// Selected returns the node selected, or -1.
func (v *diagramView) Selected() int {
	if len(v.opts.Selected) == 0 {
		return -1
	}
	return v.opts.Selected[0]
}

// centre returns the diagram point at the centre of the view.
func (v *diagramView) centre() pd.Point {
	if v.opts.View.Centre != nil {
		return *v.opts.View.Centre
	}
	b := v.d.Bounds()
	return pd.Point{X: (b.Min.X + b.Max.X) / 2, Y: (b.Min.Y + b.Max.Y) / 2}
}

// Dragged moves the node dragged, or pans.
func (v *diagramView) Dragged(e *fyne.DragEvent) {
	if v.d == nil || v.scale == 0 {
		return
	}
	if !v.dragging {
		v.dragging, v.moved = true, false
		v.dragStart = e.Position.Subtract(e.Dragged)
		v.dragNode = v.d.NodeAt(v.at(v.dragStart))
		v.hideTip()
	}
	ppp := v.frame.PixelsPerPoint() / float64(v.scale)
	if ppp <= 0 {
		return
	}
	dx, dy := float64(e.Dragged.DX)/ppp, float64(e.Dragged.DY)/ppp
	if i := v.dragNode; i >= 0 {
		v.shift(i, dx, dy)
		if v.d.Nodes[i].Kind == pd.Reaction {
			// Its empty-set marks go with it.
			for j, n := range v.d.Nodes {
				if (n.Kind == pd.Source || n.Kind == pd.Sink) && n.Name == v.d.Nodes[i].Name {
					v.shift(j, dx, dy)
				}
			}
		}
		v.moved = true
		// Regions and labels follow; every node stays where it is.
		pd.Layout(v.d, pd.Settings{})
	} else {
		c := v.centre()
		c.X -= dx
		c.Y -= dy
		v.opts.View.Centre = &c
	}
	v.redraw()
}

func (v *diagramView) shift(i int, dx, dy float64) {
	n := &v.d.Nodes[i]
	n.X += dx
	n.Y += dy
	n.Pinned = true
}

// DragEnd reports a node moved.
func (v *diagramView) DragEnd() {
	if !v.dragging {
		return
	}
	v.dragging = false
	if v.dragNode >= 0 && v.moved && v.OnMoved != nil {
		v.OnMoved(v.dragNode)
	}
	v.dragNode = -1
}

// Scrolled zooms around the pointer.
func (v *diagramView) Scrolled(e *fyne.ScrollEvent) {
	if v.d == nil || v.scale == 0 || e.Scrolled.DY == 0 {
		return
	}
	f := math.Pow(1.15, float64(e.Scrolled.DY)/10)
	v.zoomAround(v.at(e.Position), f)
}

// zoomAround multiplies the zoom by f, keeping diagram point p where it
// is on screen.
func (v *diagramView) zoomAround(p pd.Point, f float64) {
	z := v.opts.View.Zoom
	if z == 0 {
		z = 1
	}
	nz := math.Max(0.2, math.Min(z*f, 40))
	f = nz / z
	c := v.centre()
	nc := pd.Point{X: p.X + (c.X-p.X)/f, Y: p.Y + (c.Y-p.Y)/f}
	v.opts.View.Zoom, v.opts.View.Centre = nz, &nc
	v.redraw()
}

// FullView shows the whole diagram.
func (v *diagramView) FullView() {
	v.opts.View = pd.View{}
	v.redraw()
}

// Reveal centres node i and zooms in to at least twice the fitted size.
func (v *diagramView) Reveal(i int) {
	n := v.d.Nodes[i]
	c := pd.Point{X: n.X, Y: n.Y}
	v.opts.View.Centre = &c
	if v.opts.View.Zoom < 2 && len(v.d.Nodes) > 40 {
		v.opts.View.Zoom = 2
	}
	v.Select(i)
}

// MouseIn implements desktop.Hoverable.
func (v *diagramView) MouseIn(e *desktop.MouseEvent) { v.MouseMoved(e) }

// MouseOut implements desktop.Hoverable.
func (v *diagramView) MouseOut() { v.hideTip() }

// MouseMoved shows what the node under the pointer is.
func (v *diagramView) MouseMoved(e *desktop.MouseEvent) {
	if v.d == nil || v.scale == 0 || v.dragging || v.net == nil {
		return
	}
	i := v.d.NodeAt(v.at(e.Position))
	if i < 0 {
		v.hideTip()
		return
	}
	v.tip.SetText(diagram.Describe(v.net, v.d, i))
	ts := v.tip.MinSize()
	size := v.Size()
	x := min(e.Position.X+14, size.Width-ts.Width-4)
	y := e.Position.Y + 18
	if y+ts.Height > size.Height {
		y = e.Position.Y - ts.Height - 8
	}
	x, y = max(x, 2), max(y, 2)
	v.tipBg.Move(fyne.NewPos(x, y))
	v.tipBg.Resize(ts)
	v.tip.Move(fyne.NewPos(x, y))
	v.tip.Resize(ts)
	v.tipBg.Show()
	v.tip.Show()
	v.tipBg.Refresh()
}

func (v *diagramView) hideTip() {
	v.tipBg.Hide()
	v.tip.Hide()
}

// search returns the node whose name best matches text: an exact name
// first, then the first name starting with it, then the first containing
// it (letter case ignored), species before reactions; -1 for none.
func search(d *pd.Diagram, text string) int {
	q := strings.ToLower(strings.TrimSpace(text))
	if q == "" || d == nil {
		return -1
	}
	for _, match := range []func(string) bool{
		func(s string) bool { return s == q },
		func(s string) bool { return strings.HasPrefix(s, q) },
		func(s string) bool { return strings.Contains(s, q) },
	} {
		for _, kind := range []pd.Kind{pd.Species, pd.Reaction} {
			for i, n := range d.Nodes {
				if n.Kind == kind && match(strings.ToLower(n.Name)) {
					return i
				}
			}
		}
	}
	return -1
}
