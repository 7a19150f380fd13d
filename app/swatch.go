package main

import (
	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/widget"

	"kinetarium/plotting"
)

// swatch is a short sample of a species' line: its plot colour and dash
// pattern.
type swatch struct {
	widget.BaseWidget
	slot int
	segs []fyne.CanvasObject
}

// swatchWidth is the length of the sample line.
const swatchWidth = 22

func newSwatch() *swatch {
	s := &swatch{}
	for i := 0; i < 6; i++ {
		r := canvas.NewRectangle(plotting.Colour(0))
		r.Hide()
		s.segs = append(s.segs, r)
	}
	s.ExtendBaseWidget(s)
	return s
}

func (s *swatch) setSlot(slot int) {
	s.slot = slot
	s.Refresh()
}

// CreateRenderer implements fyne.Widget.
func (s *swatch) CreateRenderer() fyne.WidgetRenderer { return &swatchRenderer{s: s} }

type swatchRenderer struct{ s *swatch }

func (r *swatchRenderer) Destroy()                     {}
func (r *swatchRenderer) Objects() []fyne.CanvasObject { return r.s.segs }
func (r *swatchRenderer) MinSize() fyne.Size           { return fyne.NewSize(swatchWidth+2, 14) }
func (r *swatchRenderer) Refresh()                     { r.Layout(r.s.Size()) }

// Layout draws the dash pattern (in points, 1 pt = 4/3 units) along the
// sample, solid when the slot has none.
func (r *swatchRenderer) Layout(size fyne.Size) {
	col := plotting.Colour(r.s.slot)
	dashes := plotting.Dashes(r.s.slot)
	y := size.Height/2 - 1.5
	x := float32(1)
	for i, o := range r.s.segs {
		rect := o.(*canvas.Rectangle)
		rect.FillColor = col
		if len(dashes) == 0 {
			if i == 0 {
				rect.Move(fyne.NewPos(x, y))
				rect.Resize(fyne.NewSize(swatchWidth, 3))
				rect.Show()
			} else {
				rect.Hide()
			}
			rect.Refresh()
			continue
		}
		on := max(float32(dashes[(2*i)%len(dashes)])*4/3, 2)
		off := max(float32(dashes[(2*i+1)%len(dashes)])*4/3, 2)
		if x >= swatchWidth {
			rect.Hide()
			continue
		}
		rect.Move(fyne.NewPos(x, y))
		rect.Resize(fyne.NewSize(min(on, swatchWidth+1-x), 3))
		rect.Show()
		rect.Refresh()
		x += on + off
	}
}
