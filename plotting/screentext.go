package plotting

import (
	"image"
	"image/color"
	"image/draw"
	"math"
	"sync"

	"git.sr.ht/~sbinet/gg"
	xfont "golang.org/x/image/font"
	"golang.org/x/image/math/fixed"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/vgimg"
)

// screenCanvas is the canvas of RenderInto: a vgimg canvas drawing straight
// into an RGBA image, whose upright text is drawn from a cache of glyph
// masks instead of rasterising every glyph of every label anew. It draws
// the same masks at the same places as vgimg would; only the compositing
// arithmetic differs, by at most a unit or two of 255.
type screenCanvas struct {
	*vgimg.Canvas
	ctx     *gg.Context
	dst     *image.RGBA
	colours []color.Color // the current colour on top, as vgimg keeps it
	src     image.Uniform
}

// newScreenCanvas returns a canvas that draws straight into dst at 96 dots
// per inch, cleared to white.
func newScreenCanvas(dst *image.RGBA) *screenCanvas {
	ctx := gg.NewContextForRGBA(dst)
	ctx.SetLineCapButt()
	ctx.InvertY()
	c := vgimg.NewWith(vgimg.UseImageWithContext(dst, ctx), vgimg.UseDPI(screenDPI))
	return &screenCanvas{Canvas: c, ctx: ctx, dst: dst, colours: []color.Color{color.Black}}
}

// SetColor implements vg.Canvas.
func (c *screenCanvas) SetColor(clr color.Color) {
	if clr == nil {
		clr = color.Black
	}
	c.colours[len(c.colours)-1] = clr
	c.Canvas.SetColor(clr)
}

// Push implements vg.Canvas.
func (c *screenCanvas) Push() {
	c.colours = append(c.colours, c.colours[len(c.colours)-1])
	c.Canvas.Push()
}

// Pop implements vg.Canvas.
func (c *screenCanvas) Pop() {
	if len(c.colours) > 1 {
		c.colours = c.colours[:len(c.colours)-1]
	}
	c.Canvas.Pop()
}

// FillString implements vg.Canvas. Text under any transform other than the
// canvas's own flip of the Y axis (rotated axis labels) goes to vgimg.
func (c *screenCanvas) FillString(f font.Face, pt vg.Point, str string) {
	if f.Font.Size == 0 {
		return
	}
	hPx := float64(c.dst.Bounds().Dy())
	x0, y0 := c.ctx.TransformPoint(0, 0)
	x1, y1 := c.ctx.TransformPoint(1, 1)
	if x0 != 0 || y0 != hPx || x1 != 1 || y1 != hPx-1 || f.Face == nil {
		c.Canvas.FillString(f, pt, str)
		return
	}
	// As vgimg and gg place it: the baseline origin in pixels, from the top.
	dpi := c.DPI()
	_, h := c.Size()
	x, y := pt.X.Dots(dpi), h.Dots(dpi)-pt.Y.Dots(dpi)
	dot := fixed.Point26_6{X: fixed.Int26_6(math.Round(x * 64)), Y: fixed.Int26_6(math.Round(y * 64))}
	c.src.C = c.colours[len(c.colours)-1]

	glyphs.Lock()
	defer glyphs.Unlock()
	fc := glyphs.face(f, dpi)
	prev := rune(-1)
	for _, r := range str {
		if prev >= 0 {
			dot.X += fc.face.Kern(prev, r)
		}
		g := fc.glyph(r, dot)
		if !g.ok {
			continue
		}
		if g.mask != nil {
			dr := g.rect.Add(image.Point{X: dot.X.Floor(), Y: dot.Y.Floor()})
			draw.DrawMask(c.dst, dr, &c.src, image.Point{}, g.mask, image.Point{}, draw.Over)
		}
		dot.X += g.advance
		prev = r
	}
}

// glyphs is the cache of glyph masks shared by all screen canvases.
var glyphs glyphCache

// maxGlyphs bounds the masks kept per face; a face that exceeds it starts
// afresh.
const maxGlyphs = 4096

// glyphCache holds, per font, size and resolution, the masks of glyphs
// drawn, keyed by rune and the sub-pixel position of the pen.
type glyphCache struct {
	sync.Mutex
	faces map[faceKey]*faceGlyphs
}

type faceKey struct {
	font font.Font
	dpi  float64
}

type faceGlyphs struct {
	face   xfont.Face
	glyphs map[glyphKey]glyph
}

type glyphKey struct {
	r      rune
	fx, fy fixed.Int26_6 // sub-pixel offset of the pen, 0–63
}

// glyph is a mask placed relative to the whole pixel of the pen.
type glyph struct {
	rect    image.Rectangle
	mask    *image.Alpha // nil for an empty glyph
	advance fixed.Int26_6
	ok      bool
}

// face returns the cache of f at dpi.
func (gc *glyphCache) face(f font.Face, dpi float64) *faceGlyphs {
	k := faceKey{f.Font, dpi}
	fc := gc.faces[k]
	if fc == nil {
		if gc.faces == nil {
			gc.faces = make(map[faceKey]*faceGlyphs)
		}
		fc = &faceGlyphs{face: f.FontFace(dpi), glyphs: make(map[glyphKey]glyph)}
		gc.faces[k] = fc
	}
	return fc
}

// glyph returns the glyph of r drawn with the pen at dot.
func (fc *faceGlyphs) glyph(r rune, dot fixed.Point26_6) glyph {
	k := glyphKey{r, dot.X & 63, dot.Y & 63}
	if g, ok := fc.glyphs[k]; ok {
		return g
	}
	if len(fc.glyphs) >= maxGlyphs {
		clear(fc.glyphs)
	}
	pen := fixed.Point26_6{X: k.fx, Y: k.fy}
	dr, mask, maskp, advance, ok := fc.face.Glyph(pen, r)
	g := glyph{rect: dr, advance: advance, ok: ok}
	if ok && !dr.Empty() {
		// The face reuses its mask buffer: keep a copy.
		m := image.NewAlpha(image.Rect(0, 0, dr.Dx(), dr.Dy()))
		draw.Draw(m, m.Rect, mask, maskp, draw.Src)
		g.mask = m
	}
	fc.glyphs[k] = g
	return g
}
