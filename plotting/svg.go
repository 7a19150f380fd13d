package plotting

import (
	"bytes"
	"encoding/base64"
	"fmt"
	"html"
	"io"
	"slices"
	"strings"

	"codeberg.org/go-pdf/fpdf"
	xfont "golang.org/x/image/font"
	"golang.org/x/image/font/sfnt"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/vgsvg"
)

// svgCanvas draws with gonum/plot's vgsvg and records the characters drawn
// in each font, so that the file can carry those fonts cut down to the
// glyphs it uses. vgsvg itself can embed only whole fonts (about 550 kB of
// Base64 per face).
type svgCanvas struct {
	*vgsvg.Canvas
	faces map[font.Font]*svgFace
}

// svgFace is a font the figure uses and the characters drawn with it.
type svgFace struct {
	face  font.Face
	runes map[rune]bool
}

func newSVGCanvas(w, h vg.Length) *svgCanvas {
	return &svgCanvas{Canvas: vgsvg.New(w, h), faces: make(map[font.Font]*svgFace)}
}

// FillString implements vg.Canvas.
func (c *svgCanvas) FillString(f font.Face, pt vg.Point, str string) {
	if f.Font.Size != 0 {
		k := f.Font
		k.Size = 0
		fc := c.faces[k]
		if fc == nil {
			fc = &svgFace{face: f, runes: make(map[rune]bool)}
			c.faces[k] = fc
		}
		for _, r := range str {
			fc.runes[r] = true
		}
	}
	c.Canvas.FillString(f, pt, str)
}

// WriteTo implements io.WriterTo: the drawing, with a title, the metadata
// and the fonts placed at the start of the <svg> element.
func (c *svgCanvas) writeWith(w io.Writer, m *Metadata) (int64, error) {
	var body bytes.Buffer
	if _, err := c.Canvas.WriteTo(&body); err != nil {
		return 0, fmt.Errorf("plotting: writing SVG: %w", err)
	}
	src := body.Bytes()
	i := bytes.Index(src, []byte("<svg"))
	j := -1
	if i >= 0 {
		j = bytes.IndexByte(src[i:], '>')
	}
	if j < 0 {
		return 0, fmt.Errorf("plotting: writing SVG: no <svg> element in vgsvg's output")
	}
	j += i + 1
	var head bytes.Buffer
	head.WriteByte('\n')
	if m != nil {
		if m.Title != "" {
			fmt.Fprintf(&head, "<title>%s</title>\n", html.EscapeString(m.Title))
		}
		// Dublin Core in RDF, as the SVG specification suggests for
		// <metadata>.
		fmt.Fprintf(&head, "<metadata id=%q>\n<rdf:RDF xmlns:rdf=%q xmlns:dc=%q>\n<rdf:Description rdf:about=\"\">\n",
			svgMetadataID, rdfNS, dcNS)
		dc := func(elem, v string) {
			if v != "" {
				fmt.Fprintf(&head, "<dc:%s>%s</dc:%s>\n", elem, html.EscapeString(v), elem)
			}
		}
		dc("title", m.Title)
		dc("creator", m.Software)
		if !m.Created.IsZero() {
			dc("date", m.Created.UTC().Format(timeFormat))
		}
		dc("description", string(m.Provenance))
		head.WriteString("</rdf:Description>\n</rdf:RDF>\n</metadata>\n")
	}
	if err := c.writeFonts(&head); err != nil {
		return 0, err
	}
	cw := &countWriter{w: w}
	for _, part := range [][]byte{src[:j], head.Bytes(), src[j:]} {
		if _, err := cw.Write(part); err != nil {
			return cw.n, err
		}
	}
	return cw.n, nil
}

// The <metadata> element Save writes: its id and the namespaces of its
// content.
const (
	svgMetadataID = "provenance"
	rdfNS         = "http://www.w3.org/1999/02/22-rdf-syntax-ns#"
	dcNS          = "http://purl.org/dc/elements/1.1/"
)

// writeFonts writes a <defs> element with an @font-face rule for each
// font used, holding a subset of the font with the glyphs drawn, in the
// descriptors vgsvg gives the text (family, weight, style).
func (c *svgCanvas) writeFonts(w *bytes.Buffer) error {
	if len(c.faces) == 0 {
		return nil
	}
	var rules []string
	for _, fc := range c.faces {
		var raw bytes.Buffer
		if _, err := fc.face.Face.WriteSourceTo(nil, &raw); err != nil {
			return fmt.Errorf("plotting: reading font %q: %w", fc.face.Name(), err)
		}
		var buf sfnt.Buffer
		family, err := fc.face.Face.Name(&buf, sfnt.NameIDFamily)
		if err != nil {
			return fmt.Errorf("plotting: reading the family name of font %q: %w", fc.face.Name(), err)
		}
		runes := make([]rune, 0, len(fc.runes))
		for r := range fc.runes {
			runes = append(runes, r)
		}
		slices.Sort(runes)
		sub := fpdf.UTF8CutFont(raw.Bytes(), string(runes))
		if len(sub) == 0 {
			sub = raw.Bytes() // cannot be cut: carry the whole font
		}
		rules = append(rules, fmt.Sprintf("@font-face{font-family:%q;font-weight:%s;font-style:%s;"+
			"src:url(data:font/ttf;base64,%s) format(\"truetype\");}",
			family, cssWeight(fc.face.Font.Weight), cssStyle(fc.face.Font.Style),
			base64.StdEncoding.EncodeToString(sub)))
	}
	// Map order is random; the file must not be.
	slices.Sort(rules)
	w.WriteString("<defs><style>\n")
	w.WriteString(strings.Join(rules, "\n"))
	w.WriteString("\n</style></defs>\n")
	return nil
}

// cssWeight is the CSS font-weight of w, as vgsvg writes it.
func cssWeight(w xfont.Weight) string {
	switch w {
	case xfont.WeightNormal:
		return "normal"
	case xfont.WeightBold:
		return "bold"
	}
	return fmt.Sprint(400 + 100*int(w))
}

// cssStyle is the CSS font-style of s, as vgsvg writes it.
func cssStyle(s xfont.Style) string {
	switch s {
	case xfont.StyleItalic:
		return "italic"
	case xfont.StyleOblique:
		return "oblique"
	}
	return "normal"
}
