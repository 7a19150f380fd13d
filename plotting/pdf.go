package plotting

// The PDF canvas follows the structure of gonum/plot's vgpdf (Copyright
// ©2015 The Gonum Authors, BSD-3-Clause licence), with one change that
// matters: vgpdf registers fonts in the Windows-1252 code page, so any
// character outside it (the minus sign of an exponent, ≤, µ, Greek
// letters, the middle dot) comes out garbled. This canvas registers every
// font as a Unicode TrueType font, which go-pdf/fpdf embeds as a subset
// holding only the glyphs the figure uses, with a ToUnicode map so that
// text copied or extracted from the PDF reads as drawn.

import (
	"bytes"
	"fmt"
	"image"
	"image/color"
	"image/png"
	"io"
	"math"
	"time"

	"codeberg.org/go-pdf/fpdf"
	xfont "golang.org/x/image/font"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/vg"
)

// pdfCanvas is a vg.Canvas drawing one page of a PDF document.
type pdfCanvas struct {
	doc   *fpdf.Fpdf
	w, h  vg.Length
	stack []pdfContext
	fonts map[font.Font]bool
	n     int // images drawn
	err   error
}

type pdfContext struct {
	width vg.Length
}

// pdfDPI is the resolution of PDF user space: one unit is one point.
const pdfDPI = 72

// newPDFCanvas returns a w × h PDF page with its origin at the bottom left.
func newPDFCanvas(w, h vg.Length) *pdfCanvas {
	doc := fpdf.NewCustom(&fpdf.InitType{UnitStr: "pt", Size: fpdf.SizeType{Wd: w.Points(), Ht: h.Points()}})
	doc.SetMargins(0, 0, 0)
	doc.SetAutoPageBreak(false, 0)
	// Sorted catalogues make the file depend only on what was drawn.
	doc.SetCatalogSort(true)
	doc.AddPage()
	c := &pdfCanvas{doc: doc, w: w, h: h, stack: make([]pdfContext, 1), fonts: make(map[font.Font]bool)}
	c.Push()
	c.Translate(vg.Point{Y: h})
	c.Scale(1, -1)
	vg.Initialize(c)
	return c
}

func (c *pdfCanvas) context() *pdfContext { return &c.stack[len(c.stack)-1] }

// unit converts a length to PDF units.
func unit(l vg.Length) float64 { return l.Points() }

// Size implements vg.Canvas.
func (c *pdfCanvas) Size() (w, h vg.Length) { return c.w, c.h }

// DPI reports the resolution of PDF user space.
func (c *pdfCanvas) DPI() float64 { return pdfDPI }

// SetLineWidth implements vg.Canvas.
func (c *pdfCanvas) SetLineWidth(w vg.Length) {
	c.context().width = w
	c.doc.SetLineWidth(unit(w))
}

// SetLineDash implements vg.Canvas.
func (c *pdfCanvas) SetLineDash(dashes []vg.Length, offs vg.Length) {
	ds := make([]float64, len(dashes))
	for i, d := range dashes {
		ds[i] = unit(d)
	}
	c.doc.SetDashPattern(ds, unit(offs))
}

// SetColor implements vg.Canvas.
func (c *pdfCanvas) SetColor(clr color.Color) {
	if clr == nil {
		clr = color.Black
	}
	r, g, b, a := clr.RGBA()
	// Colours are premultiplied; PDF wants them straight, with the alpha
	// apart.
	ir, ig, ib := 0, 0, 0
	if a > 0 {
		ir, ig, ib = int(r*0xff/a), int(g*0xff/a), int(b*0xff/a)
	}
	c.doc.SetFillColor(ir, ig, ib)
	c.doc.SetDrawColor(ir, ig, ib)
	c.doc.SetTextColor(ir, ig, ib)
	c.doc.SetAlpha(float64(a)/math.MaxUint16, "Normal")
}

// Rotate implements vg.Canvas.
func (c *pdfCanvas) Rotate(r float64) { c.doc.TransformRotate(-r*180/math.Pi, 0, 0) }

// Translate implements vg.Canvas.
func (c *pdfCanvas) Translate(pt vg.Point) { c.doc.TransformTranslate(unit(pt.X), unit(pt.Y)) }

// Scale implements vg.Canvas.
func (c *pdfCanvas) Scale(x, y float64) { c.doc.TransformScale(x*100, y*100, 0, 0) }

// Push implements vg.Canvas.
func (c *pdfCanvas) Push() {
	c.stack = append(c.stack, *c.context())
	c.doc.TransformBegin()
}

// Pop implements vg.Canvas.
func (c *pdfCanvas) Pop() {
	c.doc.TransformEnd()
	c.stack = c.stack[:len(c.stack)-1]
}

// Stroke implements vg.Canvas.
func (c *pdfCanvas) Stroke(p vg.Path) {
	if c.context().width > 0 {
		c.path(p, "D")
	}
}

// Fill implements vg.Canvas.
func (c *pdfCanvas) Fill(p vg.Path) { c.path(p, "F") }

// fontStyle is fpdf's style string of f.
func fontStyle(f font.Font) string {
	s := ""
	if f.Weight >= xfont.WeightBold {
		s += "B"
	}
	if f.Style == xfont.StyleItalic {
		s += "I"
	}
	return s
}

// FillString implements vg.Canvas.
func (c *pdfCanvas) FillString(f font.Face, pt vg.Point, str string) {
	if f.Font.Size == 0 || c.err != nil {
		return
	}
	name, style := f.Name(), fontStyle(f.Font)
	if !c.fonts[f.Font] {
		var raw bytes.Buffer
		if _, err := f.Face.WriteSourceTo(nil, &raw); err != nil {
			c.err = fmt.Errorf("plotting: reading font %q: %w", name, err)
			return
		}
		c.doc.AddUTF8FontFromBytes(name, style, raw.Bytes())
		c.fonts[f.Font] = true
	}
	c.doc.SetFont(name, style, unit(f.Font.Size))

	c.Push()
	defer c.Pop()
	c.Translate(pt)
	// fpdf places text from the top left; flip back to upright glyphs.
	c.Scale(1, -1)
	_, size := c.doc.GetFontSize()
	d := c.doc.GetFontDesc(name, style)
	top := 0.81 * size
	if d.Ascent != 0 {
		top = -float64(d.Ascent) * size / float64(d.Ascent-d.Descent)
	}
	margin := c.doc.GetCellMargin()
	c.doc.MoveTo(-margin, top)
	c.doc.CellFormat(c.doc.GetStringWidth(str), size, str, "", 0, "BL", false, 0, "")
}

// DrawImage implements vg.Canvas.
func (c *pdfCanvas) DrawImage(rect vg.Rectangle, img image.Image) {
	if c.err != nil {
		return
	}
	var buf bytes.Buffer
	if err := png.Encode(&buf, img); err != nil {
		c.err = fmt.Errorf("plotting: encoding an image for PDF: %w", err)
		return
	}
	c.n++
	name := fmt.Sprintf("image_%03d.png", c.n)
	opts := fpdf.ImageOptions{ImageType: "png", ReadDpi: true}
	c.doc.RegisterImageOptionsReader(name, opts, &buf)
	sz := rect.Size()
	c.doc.ImageOptions(name, unit(rect.Min.X), unit(rect.Min.Y), unit(sz.X), unit(sz.Y), false, opts, 0, "")
}

// path adds p to the page and paints it with style ("D" strokes, "F"
// fills).
func (c *pdfCanvas) path(p vg.Path, style string) {
	var x0, y0 float64
	for _, comp := range p {
		switch comp.Type {
		case vg.MoveComp:
			x0, y0 = unit(comp.Pos.X), unit(comp.Pos.Y)
			c.doc.MoveTo(x0, y0)
		case vg.LineComp:
			c.doc.LineTo(unit(comp.Pos.X), unit(comp.Pos.Y))
		case vg.ArcComp:
			c.arc(comp, style)
		case vg.CurveComp:
			px, py := unit(comp.Pos.X), unit(comp.Pos.Y)
			switch len(comp.Control) {
			case 1:
				c.doc.CurveTo(unit(comp.Control[0].X), unit(comp.Control[0].Y), px, py)
			case 2:
				c.doc.CurveBezierCubicTo(unit(comp.Control[0].X), unit(comp.Control[0].Y),
					unit(comp.Control[1].X), unit(comp.Control[1].Y), px, py)
			}
		case vg.CloseComp:
			c.doc.LineTo(x0, y0)
			c.doc.ClosePath()
		}
	}
	c.doc.DrawPath(style)
}

// arc adds an arc to the current path.
func (c *pdfCanvas) arc(comp vg.PathComp, style string) {
	r := comp.Radius
	x, y := comp.Pos.X, comp.Pos.Y
	c.doc.LineTo(unit(x+r*vg.Length(math.Cos(comp.Start))), unit(y+r*vg.Length(math.Sin(comp.Start))))
	const deg = 180 / math.Pi
	beg := comp.Start * deg
	c.doc.Arc(unit(x), unit(y), unit(r), unit(r), comp.Angle*deg, beg, beg+comp.Angle*deg, style)
	end := comp.Start + comp.Angle
	c.doc.MoveTo(unit(x+r*vg.Length(math.Cos(end))), unit(y+r*vg.Length(math.Sin(end))))
}

// setInfo records m in the document information dictionary: the title,
// the program as creator and producer, the provenance document as subject,
// and the export time (in UTC; the present when m.Created is zero) as
// creation and modification date.
func (c *pdfCanvas) setInfo(m *Metadata) {
	t := time.Now()
	if m != nil {
		c.doc.SetTitle(m.Title, true)
		c.doc.SetCreator(m.Software, true)
		c.doc.SetProducer(m.Software, true)
		c.doc.SetSubject(string(m.Provenance), true)
		if !m.Created.IsZero() {
			t = m.Created
		}
	}
	c.doc.SetCreationDate(t.UTC())
	c.doc.SetModificationDate(t.UTC())
}

// WriteTo implements io.WriterTo. The canvas cannot be drawn on after.
func (c *pdfCanvas) WriteTo(w io.Writer) (int64, error) {
	if c.err != nil {
		return 0, c.err
	}
	c.Pop()
	c.doc.Close()
	cw := &countWriter{w: w}
	if err := c.doc.Output(cw); err != nil {
		return cw.n, fmt.Errorf("plotting: writing PDF: %w", err)
	}
	return cw.n, nil
}

// countWriter counts the bytes written through it.
type countWriter struct {
	w io.Writer
	n int64
}

func (c *countWriter) Write(p []byte) (int, error) {
	n, err := c.w.Write(p)
	c.n += int64(n)
	return n, err
}
