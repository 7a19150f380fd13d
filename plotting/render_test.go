package plotting

import (
	"bytes"
	"image"
	"image/png"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"testing"

	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgpdf"
)

// renderDPI is the resolution of the comparison: CSS pixels are 1/96 in.
const renderDPI = 96

// hiddenFonts returns an environment in which fontconfig sees a single font,
// DejaVu Sans Mono (Debian fonts-dejavu-core), in place of the system's.
// Chromium draws no text at all when fontconfig finds no font, not even
// text in an embedded font, so the folder cannot be empty; a monospaced
// font of another family shows any text not drawn in the embedded fonts
// with other shapes and widths.
func hiddenFonts(t *testing.T) []string {
	t.Helper()
	const mono = "/usr/share/fonts/truetype/dejavu/DejaVuSansMono.ttf"
	data, err := os.ReadFile(mono)
	if err != nil {
		t.Skipf("%s is not installed (Debian package fonts-dejavu-core)", mono)
	}
	dir := t.TempDir()
	fonts := filepath.Join(dir, "fonts")
	if err := os.Mkdir(fonts, 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(fonts, "mono.ttf"), data, 0o644); err != nil {
		t.Fatal(err)
	}
	conf := filepath.Join(dir, "fonts.conf")
	xml := `<?xml version="1.0"?><!DOCTYPE fontconfig SYSTEM "urn:fontconfig:fonts.dtd">` +
		`<fontconfig><dir>` + fonts + `</dir><cachedir>` + filepath.Join(dir, "cache") + `</cachedir></fontconfig>`
	if err := os.WriteFile(conf, []byte(xml), 0o644); err != nil {
		t.Fatal(err)
	}
	return append(os.Environ(), "FONTCONFIG_FILE="+conf, "HOME="+dir)
}

// chromiumPNG renders an SVG file with headless Chromium (Debian chromium)
// at w × h CSS pixels.
func chromiumPNG(t *testing.T, env []string, svg []byte, w, h int) image.Image {
	t.Helper()
	chromium := tool(t, "chromium", "chromium")
	dir := t.TempDir()
	in, out := filepath.Join(dir, "fig.svg"), filepath.Join(dir, "shot.png")
	if err := os.WriteFile(in, svg, 0o644); err != nil {
		t.Fatal(err)
	}
	cmd := exec.Command(chromium, "--headless", "--no-sandbox", "--disable-gpu", "--hide-scrollbars",
		"--force-device-scale-factor=1", "--virtual-time-budget=2000", "--user-data-dir="+filepath.Join(dir, "profile"),
		"--window-size="+strconv.Itoa(w)+","+strconv.Itoa(h), "--screenshot="+out, "file://"+in)
	cmd.Env = env
	if msg, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("chromium: %v\n%s", err, msg)
	}
	return decodePNG(t, out)
}

// popplerPNG renders a PDF with pdftoppm (Debian poppler-utils).
func popplerPNG(t *testing.T, env []string, pdf []byte) image.Image {
	t.Helper()
	pdftoppm := tool(t, "pdftoppm", "poppler-utils")
	dir := t.TempDir()
	in := filepath.Join(dir, "fig.pdf")
	if err := os.WriteFile(in, pdf, 0o644); err != nil {
		t.Fatal(err)
	}
	cmd := exec.Command(pdftoppm, "-r", strconv.Itoa(renderDPI), "-png", "-singlefile", in, filepath.Join(dir, "page"))
	cmd.Env = env
	if msg, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("pdftoppm: %v\n%s", err, msg)
	}
	return decodePNG(t, filepath.Join(dir, "page.png"))
}

// blockSize is the side of the squares averaged before comparing.
const blockSize = 4

// difference is the mean absolute difference of the grey levels (0–255)
// of a and b averaged over blockSize-pixel squares, over their common
// area. Averaging over squares forgives what differs between rasterisers
// (anti-aliasing, hinting, half-pixel placement), not text in another
// font, whose glyphs have other shapes and widths.
func difference(a, b image.Image) float64 {
	w := min(a.Bounds().Dx(), b.Bounds().Dx()) / blockSize
	h := min(a.Bounds().Dy(), b.Bounds().Dy()) / blockSize
	grey := func(img image.Image, x, y int) float64 {
		r, g, bl, _ := img.At(img.Bounds().Min.X+x, img.Bounds().Min.Y+y).RGBA()
		return (0.299*float64(r) + 0.587*float64(g) + 0.114*float64(bl)) / 257
	}
	var sum float64
	for by := range h {
		for bx := range w {
			var sa, sb float64
			for y := by * blockSize; y < (by+1)*blockSize; y++ {
				for x := bx * blockSize; x < (bx+1)*blockSize; x++ {
					sa += grey(a, x, y)
					sb += grey(b, x, y)
				}
			}
			sum += math.Abs(sa-sb) / (blockSize * blockSize)
		}
	}
	return sum / float64(w*h)
}

// maxDifference bounds difference between the PNG export and the SVG or
// PDF rendered by another program. Measured on specialFigure with
// Chromium 156 and poppler 22.12: 0.80 for Chromium and 0.87 for poppler
// with the fonts embedded; text in another font (the wrong inputs below)
// gives 2.1 and 1.9. The bound sits about midway, with room for other
// versions of the renderers.
const maxDifference = 1.3

// The SVG rendered by headless Chromium and the PDF rendered by poppler's
// pdftoppm, with the system's fonts hidden, match the PNG export within
// maxDifference; an SVG without its @font-face rules and a PDF without
// embedded fonts (vgpdf with embedding off) do not.
func TestRenderingWithSystemFontsHidden(t *testing.T) {
	if testing.Short() {
		t.Skip("renders with Chromium and poppler")
	}
	env := hiddenFonts(t)
	p := specialFigure(t)
	pngData, err := Encode(p, ".png", 0, 0, renderDPI, nil)
	if err != nil {
		t.Fatal(err)
	}
	ref, err := pngDecode(pngData)
	if err != nil {
		t.Fatal(err)
	}
	w, h := ref.Bounds().Dx(), ref.Bounds().Dy()

	check := func(what string, img image.Image, wantMatch bool) {
		t.Helper()
		d := difference(ref, img)
		t.Logf("%s: difference %.2f (bound %.1f)", what, d, maxDifference)
		if (d <= maxDifference) != wantMatch {
			t.Errorf("%s: difference from the PNG %.2f; want it %s %.1f", what, d, map[bool]string{true: "≤", false: ">"}[wantMatch], maxDifference)
		}
	}

	svg, err := Encode(p, ".svg", 0, 0, 0, nil)
	if err != nil {
		t.Fatal(err)
	}
	check("SVG in Chromium", chromiumPNG(t, env, svg, w, h), true)
	noFonts := regexp.MustCompile(`(?s)<defs><style>.*?</style></defs>`).ReplaceAll(svg, nil)
	check("SVG without @font-face in Chromium", chromiumPNG(t, env, noFonts, w, h), false)

	pdf, err := Encode(p, ".pdf", 0, 0, 0, nil)
	if err != nil {
		t.Fatal(err)
	}
	check("PDF in pdftoppm", popplerPNG(t, env, pdf), true)
	c := vgpdf.New(DefaultWidth, DefaultHeight)
	c.EmbedFonts(false)
	p.Draw(draw.New(c))
	var bare bytes.Buffer
	if _, err := c.WriteTo(&bare); err != nil {
		t.Fatal(err)
	}
	check("PDF without embedded fonts in pdftoppm", popplerPNG(t, env, bare.Bytes()), false)
}

func pngDecode(b []byte) (image.Image, error) { return png.Decode(bytes.NewReader(b)) }
