package main

import (
	"fmt"
	"image/color"
	"math"
	"strconv"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/driver/desktop"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"

	"kinetarium/app/run"
	"kinetarium/plotting"
)

// plotView shows the figure of an outcome, drawn at the widget's size. It
// reads out the time and value of the data point nearest the pointer, and
// zooms to a rectangle dragged across the data.
type plotView struct {
	widget.BaseWidget

	outcome *run.Outcome
	view    run.View

	img         *canvas.Image
	sel         *canvas.Rectangle
	marker      *canvas.Circle
	readBg      *canvas.Rectangle
	readout     *canvas.Text
	placeholder *widget.Label

	frame    run.Frame
	scale    float32 // image pixels per widget unit of the last render
	drawn    fyne.Size
	dirty    bool
	dragging bool
	start    fyne.Position
	end      fyne.Position

	// OnZoom is called after the user dragged a rectangle to zoom.
	OnZoom func()
	// OnDrawn is called after every render of an outcome.
	OnDrawn func()
	// errorText receives problems drawing the figure.
	errorText func(string)
}

func newPlotView() *plotView {
	v := &plotView{
		img:         canvas.NewImageFromImage(nil),
		sel:         canvas.NewRectangle(color.NRGBA{R: 0x33, G: 0x66, B: 0xcc, A: 0x30}),
		marker:      canvas.NewCircle(color.Transparent),
		readBg:      canvas.NewRectangle(color.NRGBA{R: 0xff, G: 0xff, B: 0xff, A: 0xe8}),
		readout:     canvas.NewText("", color.NRGBA{R: 0x20, G: 0x20, B: 0x20, A: 0xff}),
		placeholder: widget.NewLabel("No results yet. Press Simulate (Ctrl+Return) to run the model."),
	}
	v.img.FillMode = canvas.ImageFillStretch
	v.img.ScaleMode = canvas.ImageScaleFastest
	v.sel.StrokeColor = color.NRGBA{R: 0x33, G: 0x66, B: 0xcc, A: 0xc0}
	v.sel.StrokeWidth = 1
	v.sel.Hide()
	v.marker.StrokeWidth = 2
	v.marker.Hide()
	v.readBg.StrokeColor = color.NRGBA{A: 0x50}
	v.readBg.StrokeWidth = 1
	v.readBg.Hide()
	v.readout.TextSize = theme.TextSize()
	v.readout.Hide()
	v.placeholder.Alignment = fyne.TextAlignCenter
	v.placeholder.Wrapping = fyne.TextWrapWord
	v.ExtendBaseWidget(v)
	return v
}

// Set draws o with the view (re-drawn when the widget is resized).
func (v *plotView) Set(o *run.Outcome, view run.View) {
	v.outcome, v.view = o, view
	v.dirty = true
	v.hideReadout()
	v.Refresh()
}

// CreateRenderer implements fyne.Widget.
func (v *plotView) CreateRenderer() fyne.WidgetRenderer {
	return &plotRenderer{v: v, objects: []fyne.CanvasObject{v.img, v.sel, v.marker, v.readBg, v.readout, v.placeholder}}
}

type plotRenderer struct {
	v       *plotView
	objects []fyne.CanvasObject
}

func (r *plotRenderer) Destroy()                     {}
func (r *plotRenderer) Objects() []fyne.CanvasObject { return r.objects }
func (r *plotRenderer) MinSize() fyne.Size           { return fyne.NewSize(240, 180) }

func (r *plotRenderer) Layout(size fyne.Size) {
	v := r.v
	v.img.Resize(size)
	v.img.Move(fyne.NewPos(0, 0))
	v.placeholder.Resize(fyne.NewSize(size.Width-40, v.placeholder.MinSize().Height*2))
	v.placeholder.Move(fyne.NewPos(20, size.Height/2-v.placeholder.MinSize().Height))
	if size != v.drawn {
		v.dirty = true
	}
}

func (r *plotRenderer) Refresh() {
	v := r.v
	if v.dirty {
		v.render()
	}
	canvas.Refresh(v.img)
}

// pixelScale is the number of image pixels per widget unit.
func (v *plotView) pixelScale() float32 {
	if c := fyne.CurrentApp().Driver().CanvasForObject(v); c != nil && c.Scale() > 0 {
		return c.Scale()
	}
	return 1
}

// render draws the figure at the widget's current size.
func (v *plotView) render() {
	size := v.Size()
	v.dirty = false
	if v.outcome == nil || size.Width < 10 || size.Height < 10 {
		v.img.Image = nil
		v.placeholder.Show()
		return
	}
	v.placeholder.Hide()
	s := v.pixelScale()
	w, h := int(math.Round(float64(size.Width*s))), int(math.Round(float64(size.Height*s)))
	img, fr, err := run.Render(v.outcome, v.view, w, h)
	if err != nil {
		if v.errorText != nil {
			v.errorText("The figure cannot be drawn: " + err.Error())
		}
		return
	}
	v.img.Image = img
	v.frame, v.scale, v.drawn = fr, s, size
	if v.OnDrawn != nil {
		v.OnDrawn()
	}
}

// Resize re-draws at the new size.
func (v *plotView) Resize(s fyne.Size) {
	if s == v.Size() {
		return
	}
	v.BaseWidget.Resize(s)
	v.dirty = true
	v.Refresh()
}

// MouseIn implements desktop.Hoverable.
func (v *plotView) MouseIn(e *desktop.MouseEvent) { v.MouseMoved(e) }

// MouseOut implements desktop.Hoverable.
func (v *plotView) MouseOut() { v.hideReadout() }

// MouseMoved shows the data point nearest the pointer.
func (v *plotView) MouseMoved(e *desktop.MouseEvent) {
	if v.outcome == nil || v.scale == 0 || v.dragging {
		return
	}
	s := v.scale
	if ev, ok := run.EventNear(v.outcome, v.frame, float64(e.Position.X*s), float64(e.Position.Y*s), float64(6*s)); ok {
		v.marker.Hide()
		v.showReadout(fmt.Sprintf("event %s   t = %s%s", ev.Name, short(ev.T), unitSuffix(v.outcome.TimeUnit)))
		return
	}
	p, ok := run.Nearest(v.outcome, v.view, v.frame, float64(e.Position.X*s), float64(e.Position.Y*s), float64(24*s))
	if !ok {
		v.hideReadout()
		return
	}
	px, py, _ := v.frame.ToPixel(p.T, p.Y)
	x, y := float32(px)/s, float32(py)/s
	o := v.outcome
	col := plotting.Colour(v.view.Slot(o.Names[p.Species], p.Species))
	v.marker.StrokeColor = col
	v.marker.FillColor = color.NRGBA{R: 0xff, G: 0xff, B: 0xff, A: 0xc0}
	v.marker.Resize(fyne.NewSize(10, 10))
	v.marker.Move(fyne.NewPos(x-5, y-5))
	v.marker.Show()
	// Each column in its own unit: an assignment may be an amount or a
	// ratio beside the species' concentrations.
	v.marker.Refresh()
	v.showReadout(fmt.Sprintf("%s   t = %s%s   %s%s", o.Names[p.Species], short(p.T), unitSuffix(o.TimeUnit), short(p.Y), unitSuffix(o.UnitOf(p.Species))))
}

// unitSuffix is " UNIT", or "" without a unit.
func unitSuffix(u string) string {
	if u == "" {
		return ""
	}
	return " " + u
}

// showReadout shows text in the box at the top left of the data area.
func (v *plotView) showReadout(text string) {
	s := v.scale
	v.readout.Text = text
	v.readout.Color = color.NRGBA{R: 0x20, G: 0x20, B: 0x20, A: 0xff}
	ts := v.readout.MinSize()
	a := v.frame.Area
	bx := float32(a.Min.X)/s + 8
	by := float32(a.Min.Y)/s + 8
	v.readBg.Move(fyne.NewPos(bx, by))
	v.readBg.Resize(fyne.NewSize(ts.Width+16, ts.Height+8))
	v.readout.Move(fyne.NewPos(bx+8, by+4))
	v.readout.Resize(ts)
	v.readBg.Show()
	v.readout.Show()
	v.readBg.Refresh()
	v.readout.Refresh()
	v.marker.Refresh()
}

// short formats a value with 4 significant digits.
func short(x float64) string { return strconv.FormatFloat(x, 'g', 4, 64) }

func (v *plotView) hideReadout() {
	v.marker.Hide()
	v.readBg.Hide()
	v.readout.Hide()
}

// Dragged draws the zoom rectangle.
func (v *plotView) Dragged(e *fyne.DragEvent) {
	if v.outcome == nil {
		return
	}
	if !v.dragging {
		v.dragging = true
		v.start = e.Position.Subtract(e.Dragged)
		v.hideReadout()
	}
	x0, y0 := min(v.start.X, e.Position.X), min(v.start.Y, e.Position.Y)
	x1, y1 := max(v.start.X, e.Position.X), max(v.start.Y, e.Position.Y)
	v.sel.Move(fyne.NewPos(x0, y0))
	v.sel.Resize(fyne.NewSize(x1-x0, y1-y0))
	v.sel.Show()
	v.sel.Refresh()
	v.end = e.Position
}

// DragEnd zooms to the rectangle.
func (v *plotView) DragEnd() {
	if !v.dragging {
		return
	}
	v.dragging = false
	v.sel.Hide()
	s := float64(v.scale)
	x0, y0, in0 := v.frame.ToData(float64(v.start.X)*s, float64(v.start.Y)*s)
	x1, y1, in1 := v.frame.ToData(float64(v.end.X)*s, float64(v.end.Y)*s)
	if !in0 && !in1 {
		return
	}
	if math.Abs(float64(v.end.X-v.start.X)) < 6 || math.Abs(float64(v.end.Y-v.start.Y)) < 6 {
		return
	}
	v.view.Zoom = &run.Range{XMin: math.Min(x0, x1), XMax: math.Max(x0, x1), YMin: math.Min(y0, y1), YMax: math.Max(y0, y1)}
	v.dirty = true
	v.Refresh()
	if v.OnZoom != nil {
		v.OnZoom()
	}
}
