package plotting

import (
	"image/color"
	"math"

	"gonum.org/v1/plot/vg"
)

// qualitative is the colour-blind-safe qualitative palette of Okabe & Ito
// (2008, "Color Universal Design"), reordered so that the colours with the
// most contrast against a white background come first and the pale yellow
// comes last.
var qualitative = [8]color.RGBA{
	{0x00, 0x72, 0xB2, 0xFF}, // blue
	{0xD5, 0x5E, 0x00, 0xFF}, // vermillion
	{0x00, 0x9E, 0x73, 0xFF}, // bluish green
	{0xCC, 0x79, 0xA7, 0xFF}, // reddish purple
	{0xE6, 0x9F, 0x00, 0xFF}, // orange
	{0x56, 0xB4, 0xE9, 0xFF}, // sky blue
	{0x00, 0x00, 0x00, 0xFF}, // black
	{0xF0, 0xE4, 0x42, 0xFF}, // yellow
}

// dashCycles are the line patterns that extend the eight colours: slots 0–7
// are solid, 8–15 dashed, 16–23 dotted, 24–31 dash-dotted, then again.
var dashCycles = [][]vg.Length{
	nil,
	{vg.Points(6), vg.Points(3)},
	{vg.Points(1.5), vg.Points(2.5)},
	{vg.Points(6), vg.Points(2.5), vg.Points(1.5), vg.Points(2.5)},
}

// Colour returns the colour of series slot slot (0, 1, 2, ...): the eight
// colours of the Okabe–Ito palette, repeated. Slots beyond the eighth differ
// from the first eight by their dash pattern; see Dashes. A negative slot
// is treated as 0.
func Colour(slot int) color.Color {
	if slot < 0 {
		slot = 0
	}
	return qualitative[slot%len(qualitative)]
}

// Dashes returns the dash pattern of series slot slot: nil (solid) for the
// first eight slots, then dashed, dotted and dash-dotted for each further
// group of eight, so that every pair among the first 32 slots differs in
// colour or pattern.
func Dashes(slot int) []vg.Length {
	if slot < 0 {
		slot = 0
	}
	return dashCycles[(slot/len(qualitative))%len(dashCycles)]
}

// scaleTable is our interpolation table of a sequential, colour-blind-safe
// scale running from dark blue-violet through teal and green to yellow, with
// lightness rising steadily. The anchors follow the viridis map of van der
// Walt & Smith (2015) at ninths of its range (from memory).
var scaleTable = [...]color.RGBA{
	{0x44, 0x01, 0x54, 0xFF},
	{0x48, 0x28, 0x78, 0xFF},
	{0x3E, 0x4A, 0x89, 0xFF},
	{0x31, 0x68, 0x8E, 0xFF},
	{0x26, 0x82, 0x8E, 0xFF},
	{0x1F, 0x9E, 0x89, 0xFF},
	{0x35, 0xB7, 0x79, 0xFF},
	{0x6D, 0xCD, 0x59, 0xFF},
	{0xB4, 0xDE, 0x2C, 0xFF},
	{0xFD, 0xE7, 0x25, 0xFF},
}

// ScaleColour returns the colour at fraction f of the continuous sequential
// scale used for parameter families and heat maps: 0 is dark violet, 1 is
// yellow. f is clamped to [0, 1]; NaN gives mid grey.
func ScaleColour(f float64) color.Color {
	return interpolate(scaleTable[:], f)
}

// divergingTable is our interpolation table of a diverging, colour-blind-
// safe scale for signed values: purple below zero, near-white at zero,
// orange above. The anchors are ColorBrewer's purple–orange scheme (PuOr,
// Brewer 2003; seven classes, from memory).
var divergingTable = [...]color.RGBA{
	{0x54, 0x27, 0x88, 0xFF},
	{0x99, 0x8E, 0xC3, 0xFF},
	{0xD8, 0xDA, 0xEB, 0xFF},
	{0xF7, 0xF7, 0xF7, 0xFF},
	{0xFE, 0xE0, 0xB6, 0xFF},
	{0xF1, 0xA3, 0x40, 0xFF},
	{0xB3, 0x58, 0x06, 0xFF},
}

// DivergingColour returns the colour at fraction f of the diverging scale
// used for signed heat maps (Options.Signed): 0 is dark purple (the most
// negative), 0.5 near-white (zero), 1 dark orange. f is clamped to
// [0, 1]; NaN gives mid grey.
func DivergingColour(f float64) color.Color {
	return interpolate(divergingTable[:], f)
}

// interpolate returns the colour at fraction f of the table, linear
// between its anchors.
func interpolate(table []color.RGBA, f float64) color.Color {
	if math.IsNaN(f) {
		return color.RGBA{0x99, 0x99, 0x99, 0xFF}
	}
	f = math.Max(0, math.Min(1, f))
	pos := f * float64(len(table)-1)
	i := int(pos)
	if i >= len(table)-1 {
		return table[len(table)-1]
	}
	w := pos - float64(i)
	a, b := table[i], table[i+1]
	mix := func(u, v uint8) uint8 { return uint8(math.Round(float64(u)*(1-w) + float64(v)*w)) }
	return color.RGBA{mix(a.R, b.R), mix(a.G, b.G), mix(a.B, b.B), 0xFF}
}

// withAlpha returns c with opacity alpha in [0, 1], premultiplied as
// image/color expects.
func withAlpha(c color.Color, alpha float64) color.Color {
	r, g, b, _ := c.RGBA()
	a := alpha
	return color.RGBA64{
		R: uint16(float64(r) * a),
		G: uint16(float64(g) * a),
		B: uint16(float64(b) * a),
		A: uint16(0xFFFF * a),
	}
}
