package plotting

import (
	"bytes"
	"errors"
	"fmt"
	"image"
	"image/color"
	"path/filepath"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"

	"kinetarium/internal/atomicfile"
)

// DefaultDPI is the resolution of PNG files saved with dpi ≤ 0.
const DefaultDPI = 150

// Formats lists the file extensions Save understands.
var Formats = []string{".png", ".svg", ".pdf"}

// Save writes p to path as a w × h figure, in the format named by the
// extension of path: .png (at dpi dots per inch; ≤ 0 means DefaultDPI),
// .svg or .pdf. Zero w or h mean DefaultWidth and DefaultHeight. PDF and
// SVG files carry the fonts they use, cut down to the glyphs drawn, so
// that every character reads the same in any viewer. When meta is not
// nil, the file carries it as its format's metadata (see Metadata). The
// file is written atomically, so a reader never sees half a figure.
func Save(p *plot.Plot, path string, w, h vg.Length, dpi int, meta *Metadata) error {
	data, err := Encode(p, strings.ToLower(filepath.Ext(path)), w, h, dpi, meta)
	if err != nil {
		return fmt.Errorf("plotting: cannot save %q: %w", path, err)
	}
	return atomicfile.Write(path, data)
}

// Encode draws p as Save does and returns the file's content in the
// format named by ext: ".png", ".svg" or ".pdf".
func Encode(p *plot.Plot, ext string, w, h vg.Length, dpi int, meta *Metadata) ([]byte, error) {
	if p == nil {
		return nil, errors.New("no plot")
	}
	if w <= 0 {
		w = DefaultWidth
	}
	if h <= 0 {
		h = DefaultHeight
	}
	if dpi <= 0 {
		dpi = DefaultDPI
	}
	var buf bytes.Buffer
	switch ext {
	case ".png":
		c := vgimg.NewWith(vgimg.UseWH(w, h), vgimg.UseDPI(dpi))
		p.Draw(draw.New(c))
		if _, err := (vgimg.PngCanvas{Canvas: c}).WriteTo(&buf); err != nil {
			return nil, err
		}
		if meta == nil {
			return buf.Bytes(), nil
		}
		return addPNGText(buf.Bytes(), meta)
	case ".svg":
		c := newSVGCanvas(w, h)
		p.Draw(draw.New(c))
		if _, err := c.writeWith(&buf, meta); err != nil {
			return nil, err
		}
	case ".pdf":
		c := newPDFCanvas(w, h)
		p.Draw(draw.New(c))
		c.setInfo(meta)
		if _, err := c.WriteTo(&buf); err != nil {
			return nil, err
		}
	default:
		return nil, fmt.Errorf("unknown figure format %q; want one of %s", ext, strings.Join(Formats, ", "))
	}
	return buf.Bytes(), nil
}

// screenDPI is the resolution Render assumes: one point is 96/72 pixels.
const screenDPI = 96

// Render draws p into a new wPx × hPx raster image for display on screen,
// at 96 dots per inch. Sizes below 1 pixel are raised to 1.
func Render(p *plot.Plot, wPx, hPx int) image.Image {
	img := image.NewRGBA(image.Rect(0, 0, max(wPx, 1), max(hPx, 1)))
	RenderInto(p, img)
	return img
}

// RenderInto draws p over the whole of dst at 96 dots per inch, reusing
// dst's pixels: a display that redraws often can keep one image. Like any
// drawing of a plot.Plot, it must not run concurrently with another drawing
// of p.
func RenderInto(p *plot.Plot, dst *image.RGBA) {
	// The canvas starts cleared to white by a plain fill; a white plot
	// background need not be filled again, anti-aliased, over the whole area.
	c := newScreenCanvas(dst)
	if p != nil {
		if isWhite(p.BackgroundColor) {
			saved := p.BackgroundColor
			p.BackgroundColor = nil
			defer func() { p.BackgroundColor = saved }()
		}
		p.Draw(draw.New(c))
	}
}

// isWhite reports whether c is opaque white.
func isWhite(c color.Color) bool {
	if c == nil {
		return false
	}
	r, g, b, a := c.RGBA()
	return r == 0xFFFF && g == 0xFFFF && b == 0xFFFF && a == 0xFFFF
}
