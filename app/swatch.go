package main

import (
	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/widget"

	"kinetarium/plotting"
)

// swatch is a small square in a species' plot colour.
type swatch struct {
	widget.BaseWidget
	rect *canvas.Rectangle
}

func newSwatch() *swatch {
	s := &swatch{rect: canvas.NewRectangle(plotting.Colour(0))}
	s.rect.CornerRadius = 2
	s.ExtendBaseWidget(s)
	return s
}

func (s *swatch) setSlot(slot int) {
	s.rect.FillColor = plotting.Colour(slot)
	s.rect.Refresh()
}

// CreateRenderer implements fyne.Widget.
func (s *swatch) CreateRenderer() fyne.WidgetRenderer {
	return &swatchRenderer{s: s}
}

type swatchRenderer struct{ s *swatch }

func (r *swatchRenderer) Destroy()                     {}
func (r *swatchRenderer) Objects() []fyne.CanvasObject { return []fyne.CanvasObject{r.s.rect} }
func (r *swatchRenderer) MinSize() fyne.Size           { return fyne.NewSize(14, 14) }
func (r *swatchRenderer) Refresh()                     { r.s.rect.Refresh() }
func (r *swatchRenderer) Layout(size fyne.Size) {
	r.s.rect.Resize(fyne.NewSize(12, 12))
	r.s.rect.Move(fyne.NewPos(1, (size.Height-12)/2))
}
