package plotting

import (
	"fmt"
	"image"
	"image/color"
	"io"
	"os"
	"path/filepath"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgpdf"
	"gonum.org/v1/plot/vg/vgsvg"
)

// DefaultDPI is the resolution of PNG files saved with dpi ≤ 0.
const DefaultDPI = 150

// Formats lists the file extensions Save understands.
var Formats = []string{".png", ".svg", ".pdf"}

// Save writes p to path as a w × h figure, in the format named by the
// extension of path: .png (at dpi dots per inch; ≤ 0 means DefaultDPI),
// .svg or .pdf. Zero w or h mean DefaultWidth and DefaultHeight. The file
// is written to a temporary file in the same directory and renamed into
// place, so a reader never sees half a figure.
func Save(p *plot.Plot, path string, w, h vg.Length, dpi int) error {
	if p == nil {
		return fmt.Errorf("plotting: cannot save %q: no plot", path)
	}
	ext := strings.ToLower(filepath.Ext(path))
	if w <= 0 {
		w = DefaultWidth
	}
	if h <= 0 {
		h = DefaultHeight
	}
	if dpi <= 0 {
		dpi = DefaultDPI
	}
	var out io.WriterTo
	switch ext {
	case ".png":
		c := vgimg.NewWith(vgimg.UseWH(w, h), vgimg.UseDPI(dpi))
		p.Draw(draw.New(c))
		out = vgimg.PngCanvas{Canvas: c}
	case ".svg":
		c := vgsvg.New(w, h)
		p.Draw(draw.New(c))
		out = c
	case ".pdf":
		c := vgpdf.New(w, h)
		p.Draw(draw.New(c))
		out = c
	default:
		return fmt.Errorf("plotting: cannot save %q: unknown figure format %q; want one of %s", path, ext, strings.Join(Formats, ", "))
	}
	return writeAtomic(path, out)
}

// writeAtomic writes the content of src to path through a temporary file in
// the same directory, renamed into place.
func writeAtomic(path string, src io.WriterTo) (err error) {
	dir, base := filepath.Split(path)
	if dir == "" {
		dir = "."
	}
	f, err := os.CreateTemp(dir, "."+base+".tmp*")
	if err != nil {
		return fmt.Errorf("plotting: writing %q: %w", path, err)
	}
	defer func() {
		if err != nil {
			f.Close()
			os.Remove(f.Name())
		}
	}()
	if err = f.Chmod(0o644); err != nil {
		return fmt.Errorf("plotting: writing %q: %w", path, err)
	}
	if _, err = src.WriteTo(f); err != nil {
		return fmt.Errorf("plotting: writing %q: %w", path, err)
	}
	if err = f.Sync(); err != nil {
		return fmt.Errorf("plotting: writing %q: %w", path, err)
	}
	if err = f.Close(); err != nil {
		return fmt.Errorf("plotting: writing %q: %w", path, err)
	}
	if err = os.Rename(f.Name(), path); err != nil {
		return fmt.Errorf("plotting: writing %q: %w", path, err)
	}
	return nil
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
