package plotting

import (
	"math"
	"strings"

	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
)

// powerText is a text handler that draws "m^k" as m with k as a raised,
// smaller exponent (with a true minus sign), and any other text as plain
// text. It serves the 10^k labels of logarithmic axes.
type powerText struct {
	text.Plain
}

// powerLabels is the handler of log-axis tick labels.
var powerLabels = powerText{text.Plain{Fonts: font.DefaultCache}}

// exponentScale is the size of an exponent relative to its base.
const exponentScale = 0.7

// split returns the base and exponent of "m^k".
func (h powerText) split(txt string) (base, exp string, ok bool) {
	base, exp, ok = strings.Cut(txt, "^")
	if !ok || strings.Contains(txt, "\n") {
		return txt, "", false
	}
	return base, strings.ReplaceAll(exp, "-", "\u2212"), true
}

// Box implements text.Handler.
func (h powerText) Box(txt string, fnt font.Font) (width, height, depth vg.Length) {
	base, exp, ok := h.split(txt)
	if !ok {
		return h.Plain.Box(txt, fnt)
	}
	w, ht, d := h.Plain.Box(base, fnt)
	small := fnt
	small.Size *= exponentScale
	we, _, _ := h.Plain.Box(exp, small)
	return w + we, ht, d
}

// Draw implements text.Handler, placing text as text.Plain does.
func (h powerText) Draw(c vg.Canvas, txt string, sty text.Style, pt vg.Point) {
	base, exp, ok := h.split(txt)
	if !ok {
		h.Plain.Draw(c, txt, sty, pt)
		return
	}
	face := h.Fonts.Lookup(sty.Font, sty.Font.Size)
	small := sty.Font
	small.Size *= exponentScale
	sface := h.Fonts.Lookup(small, small.Size)
	c.SetColor(sty.Color)
	if sty.Rotation != 0 {
		c.Push()
		defer c.Pop()
		c.Rotate(sty.Rotation)
	}
	sin64, cos64 := math.Sincos(sty.Rotation)
	cos, sin := vg.Length(cos64), vg.Length(sin64)
	pt.X, pt.Y = pt.Y*sin+pt.X*cos, pt.Y*cos-pt.X*sin

	asc := face.Extents().Ascent
	pt.Y += sty.Height(txt)*vg.Length(sty.YAlign) - asc + sty.Font.Size
	wb := face.Width(base)
	pt.X += vg.Length(sty.XAlign) * (wb + sface.Width(exp))
	c.FillString(face, pt, base)
	c.FillString(sface, vg.Point{X: pt.X + wb, Y: pt.Y + 0.45*asc}, exp)
}

// logAxisLabel is the text handler of the label of a logarithmic axis. It
// draws plain text but reports zero width: gonum/plot places the label's
// glyph box at the arithmetic middle of the axis range, which on a log axis
// lies near its end, and would otherwise pad the data area needlessly. The
// label is still drawn centred on the axis.
type logAxisLabel struct {
	text.Plain
}

// Box implements text.Handler.
func (h logAxisLabel) Box(txt string, fnt font.Font) (width, height, depth vg.Length) {
	_, height, depth = h.Plain.Box(txt, fnt)
	return 0, height, depth
}
