package plotting

import (
	"bytes"
	"fmt"
	"image"
	"image/png"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgpdf"
	"gonum.org/v1/plot/vg/vgsvg"
)

// specialFigure has every kind of character issue 18 found garbled: the
// minus of a log axis's exponents, ≤ in the note, a Greek letter and a
// middle dot in species names, µ in a unit.
func specialFigure(t *testing.T) *plot.Plot {
	t.Helper()
	tr := Trajectories{
		Times: []float64{0, 1, 2, 3},
		Names: []string{"α-ligand", "P·E"},
		Values: [][]float64{
			{1, 0.5}, {0.1, 0.02}, {0.01, 0}, {1e-3, 1e-3},
		},
	}
	p, err := TrajectoryPlot(tr, Options{Title: "Binding", XLabel: "time", XUnit: "s", YLabel: "concentration", YUnit: "µM", LogY: true})
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// specialStrings are what a reader of specialFigure must find.
var specialStrings = []string{"10\u22121", "10\u22123", "1 value ≤ 0", "α-ligand", "P·E", "(µM)"}

// tool returns the path of a command the test needs, or skips the test.
func tool(t *testing.T, name, pkg string) string {
	t.Helper()
	path, err := exec.LookPath(name)
	if err != nil {
		t.Skipf("%s is not installed (Debian package %s; scripts/ensure-deps.sh --test installs it)", name, pkg)
	}
	return path
}

// pdfText returns the text pdftotext (Debian poppler-utils) extracts.
func pdfText(t *testing.T, pdf []byte) string {
	t.Helper()
	path := filepath.Join(t.TempDir(), "fig.pdf")
	if err := os.WriteFile(path, pdf, 0o644); err != nil {
		t.Fatal(err)
	}
	out, err := exec.Command(tool(t, "pdftotext", "poppler-utils"), "-enc", "UTF-8", path, "-").Output()
	if err != nil {
		t.Fatalf("pdftotext: %v", err)
	}
	return string(out)
}

// missing returns the strings of want not in text.
func missing(text string, want []string) []string {
	var out []string
	for _, w := range want {
		if !strings.Contains(text, w) {
			out = append(out, w)
		}
	}
	return out
}

// The text of a PDF figure, extracted by poppler's pdftotext, holds every
// special character as drawn. The check fails on gonum/plot's own vgpdf
// output, which is what Save wrote before: its Windows-1252 fonts garble
// them.
func TestPDFTextRoundTrip(t *testing.T) {
	p := specialFigure(t)
	pdf, err := Encode(p, ".pdf", 0, 0, 0, nil)
	if err != nil {
		t.Fatal(err)
	}
	if m := missing(pdfText(t, pdf), specialStrings); len(m) > 0 {
		t.Errorf("pdftotext does not give back %q; got:\n%s", m, pdfText(t, pdf))
	}

	// The wrong input: the same figure through vgpdf.
	c := vgpdf.New(DefaultWidth, DefaultHeight)
	p.Draw(draw.New(c))
	var old bytes.Buffer
	if _, err := c.WriteTo(&old); err != nil {
		t.Fatal(err)
	}
	if m := missing(pdfText(t, old.Bytes()), specialStrings); len(m) == 0 {
		t.Error("the check passes vgpdf's garbled PDF too; it proves nothing")
	}
}

// fontFamilies matches the font families SVG text is drawn in.
var fontFamilies = regexp.MustCompile(`font-family:([^;"]+)`)

// fontFaces matches the @font-face rules of an SVG's style sheet.
var fontFaces = regexp.MustCompile(`@font-face\{font-family:"([^"]+)"`)

// checkSVGFonts reports an error unless every font family the SVG's text
// names has an @font-face rule with an embedded TrueType font (CSS Fonts
// Level 3, §4).
func checkSVGFonts(svg []byte) error {
	faces := map[string]bool{}
	for _, m := range fontFaces.FindAllSubmatch(svg, -1) {
		faces[string(m[1])] = true
	}
	families := fontFamilies.FindAllSubmatch(svg, -1)
	if len(families) == 0 {
		return fmt.Errorf("no text with a font family")
	}
	for _, m := range families {
		if f := strings.TrimSpace(string(m[1])); !faces[f] {
			return fmt.Errorf("font family %q has no @font-face", f)
		}
	}
	if !bytes.Contains(svg, []byte("src:url(data:font/ttf;base64,")) {
		return fmt.Errorf("no embedded TrueType font")
	}
	return nil
}

// Every font family the SVG names has its @font-face in the file; the
// check fails on vgsvg's default output, which embeds none.
func TestSVGHasFontFaceForEveryFamily(t *testing.T) {
	p := specialFigure(t)
	svg, err := Encode(p, ".svg", 0, 0, 0, nil)
	if err != nil {
		t.Fatal(err)
	}
	if err := checkSVGFonts(svg); err != nil {
		t.Error(err)
	}
	c := vgsvg.New(DefaultWidth, DefaultHeight)
	p.Draw(draw.New(c))
	var old bytes.Buffer
	if _, err := c.WriteTo(&old); err != nil {
		t.Fatal(err)
	}
	if checkSVGFonts(old.Bytes()) == nil {
		t.Error("the check passes an SVG without fonts")
	}
	// The fonts are cut to the glyphs drawn: a whole Liberation Sans
	// is about 550 kB in Base64.
	if len(svg) > 100_000 {
		t.Errorf("SVG of %d bytes; the embedded fonts are not cut down", len(svg))
	}
}

// testMetadata has non-ASCII text in every field.
var testMetadata = &Metadata{
	Title:      "Binding of α-ligand · test",
	Software:   "Kinetarium test",
	Created:    time.Date(2024, 5, 6, 7, 8, 9, 0, time.UTC),
	Provenance: []byte(`{"model_title":"Binding of α-ligand","unit":"µM","note":"x ≤ 0 & <tag>"}`),
}

func sameMetadata(t *testing.T, format string, got, want *Metadata) {
	t.Helper()
	if got.Title != want.Title || got.Software != want.Software || !got.Created.Equal(want.Created) || !bytes.Equal(got.Provenance, want.Provenance) {
		t.Errorf("%s metadata read back as %+v (provenance %s), want %+v (provenance %s)", format, got, got.Provenance, want, want.Provenance)
	}
}

// Metadata written into PNG text chunks and SVG <metadata> reads back
// equal; PNG through the decoder of the standard library too, which
// checks the file is still valid.
func TestMetadataRoundTripPNGSVG(t *testing.T) {
	p := specialFigure(t)
	data, err := Encode(p, ".png", 0, 0, 0, testMetadata)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := png.Decode(bytes.NewReader(data)); err != nil {
		t.Fatalf("the PNG with text chunks does not decode: %v", err)
	}
	got, err := PNGMetadata(bytes.NewReader(data))
	if err != nil {
		t.Fatal(err)
	}
	sameMetadata(t, "PNG", got, testMetadata)

	// A changed byte fails the chunk's CRC.
	bad := bytes.Clone(data)
	i := bytes.Index(bad, []byte("α-ligand"))
	bad[i+3] ^= 1
	if _, err := PNGMetadata(bytes.NewReader(bad)); err == nil || !strings.Contains(err.Error(), "CRC") {
		t.Errorf("a PNG with a changed text byte reads with error %v, want a CRC failure", err)
	}

	data, err = Encode(p, ".svg", 0, 0, 0, testMetadata)
	if err != nil {
		t.Fatal(err)
	}
	got, err = SVGMetadata(bytes.NewReader(data))
	if err != nil {
		t.Fatal(err)
	}
	sameMetadata(t, "SVG", got, testMetadata)
}

// pdfInfo returns the fields pdfinfo (Debian poppler-utils) prints.
func pdfInfo(t *testing.T, pdf []byte) map[string]string {
	t.Helper()
	path := filepath.Join(t.TempDir(), "fig.pdf")
	if err := os.WriteFile(path, pdf, 0o644); err != nil {
		t.Fatal(err)
	}
	out, err := exec.Command(tool(t, "pdfinfo", "poppler-utils"), "-enc", "UTF-8", "-isodates", path).Output()
	if err != nil {
		t.Fatalf("pdfinfo: %v", err)
	}
	info := map[string]string{}
	for _, line := range strings.Split(string(out), "\n") {
		if k, v, ok := strings.Cut(line, ":"); ok {
			info[k] = strings.TrimSpace(v)
		}
	}
	return info
}

// The PDF document information, read by poppler's pdfinfo, holds the
// metadata: title, program, export time and the provenance document.
func TestMetadataRoundTripPDF(t *testing.T) {
	data, err := Encode(specialFigure(t), ".pdf", 0, 0, 0, testMetadata)
	if err != nil {
		t.Fatal(err)
	}
	info := pdfInfo(t, data)
	want := map[string]string{
		"Title": testMetadata.Title, "Creator": testMetadata.Software, "Producer": testMetadata.Software,
		"Subject": string(testMetadata.Provenance), "CreationDate": "2024-05-06T07:08:09",
	}
	for k, v := range want {
		// pdfinfo -isodates may add a zone ("Z" or "+00").
		if got := info[k]; !strings.HasPrefix(got, v) {
			t.Errorf("pdfinfo %s = %q, want %q", k, got, v)
		}
	}
}

// The same figure and metadata give the same bytes every time, in every
// format: nothing but the export time differs between two exports.
func TestEncodeIsDeterministic(t *testing.T) {
	for _, ext := range Formats {
		a, err := Encode(specialFigure(t), ext, 0, 0, 0, testMetadata)
		if err != nil {
			t.Fatal(err)
		}
		b, _ := Encode(specialFigure(t), ext, 0, 0, 0, testMetadata)
		if !bytes.Equal(a, b) {
			t.Errorf("%s: two encodings of the same figure differ", ext)
		}
	}
}

func FuzzReadPNGText(f *testing.F) {
	p, _ := XYPlot([]float64{1, 2}, []float64{1, 2}, Options{})
	data, _ := Encode(p, ".png", 40, 30, 10, testMetadata)
	f.Add(data)
	f.Add(pngSignature)
	f.Fuzz(func(t *testing.T, b []byte) {
		text, err := ReadPNGText(bytes.NewReader(b))
		if err == nil && text == nil {
			t.Fatal("no error and no text map")
		}
	})
}

func FuzzSVGMetadata(f *testing.F) {
	p, _ := XYPlot([]float64{1, 2}, []float64{1, 2}, Options{})
	data, _ := Encode(p, ".svg", 0, 0, 0, testMetadata)
	f.Add(data)
	f.Add([]byte(`<svg xmlns="http://www.w3.org/2000/svg"><metadata id="provenance"/></svg>`))
	f.Fuzz(func(t *testing.T, b []byte) {
		m, err := SVGMetadata(bytes.NewReader(b))
		if err == nil && m == nil {
			t.Fatal("no error and no metadata")
		}
	})
}

// decodePNG reads a PNG file.
func decodePNG(t *testing.T, path string) image.Image {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	img, err := png.Decode(f)
	if err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	return img
}
