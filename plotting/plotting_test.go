package plotting

import (
	"bytes"
	"encoding/xml"
	"fmt"
	"image"
	"image/color"
	"image/png"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
)

// decay returns n series of first-order decays y_j = (j+1)·exp(−k_j t) on a
// logarithmic grid of m times from 1e-3 to 1e2, with t = 0 first.
func decay(n, m int) Trajectories {
	tr := Trajectories{Names: make([]string, n)}
	for j := range tr.Names {
		tr.Names[j] = fmt.Sprintf("S%d", j+1)
	}
	for i := 0; i < m; i++ {
		t := 0.0
		if i > 0 {
			t = math.Pow(10, -3+5*float64(i-1)/float64(m-2))
		}
		row := make([]float64, n)
		for j := range row {
			row[j] = float64(j+1) * math.Exp(-0.2*float64(j+1)*t)
		}
		tr.Times = append(tr.Times, t)
		tr.Values = append(tr.Values, row)
	}
	return tr
}

// figures returns one of each kind of figure, for format tests.
func figures(t *testing.T) map[string]*plot.Plot {
	t.Helper()
	tr := decay(4, 60)
	prev := decay(4, 60)
	for _, row := range prev.Values {
		for j := range row {
			row[j] *= 1.2
		}
	}
	must := func(p *plot.Plot, err error) *plot.Plot {
		t.Helper()
		if err != nil {
			t.Fatal(err)
		}
		return p
	}
	o := Options{Title: "Test", XLabel: "time", XUnit: "s", YLabel: "concentration", YUnit: "uM"}
	ol := o
	ol.LogX, ol.LogY = true, true
	ol.Overlay = &prev
	curves := [][]float64{tr.Values[0][:0], nil, nil}
	values := []float64{0.1, 1, 10}
	for k := range curves {
		curves[k] = make([]float64, len(tr.Times))
		for i, tt := range tr.Times {
			curves[k][i] = math.Exp(-values[k] * tt)
		}
	}
	n := len(tr.Times)
	med, a, b, c, d := make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
	for i, tt := range tr.Times {
		med[i] = math.Exp(-tt)
		a[i], b[i] = 0.5*med[i], 1.5*med[i]
		c[i], d[i] = 0.8*med[i], 1.2*med[i]
	}
	return map[string]*plot.Plot{
		"trajectory":     must(TrajectoryPlot(tr, o)),
		"trajectory-log": must(TrajectoryPlot(tr, ol)),
		"family":         must(FamilyPlot(tr.Times, curves, values, "k (1/s)", Options{LogX: true})),
		"xy":             must(XYPlot([]float64{1, 2, 3}, []float64{3, 1, 2}, o)),
		"heat": must(HeatMap([]float64{0.1, 1, 10}, []float64{1, 2},
			[][]float64{{1, 2, 3}, {4, 5, math.NaN()}}, Options{LogX: true}, "peak (uM)")),
		"band":      must(BandPlot(tr.Times, med, a, b, c, d, "S1", Options{LogX: true})),
		"histogram": must(Histogram([]float64{1, 2, 2, 3, 3, 3, 4, 4, 5}, 0, o)),
	}
}

func TestSaveFormatsParse(t *testing.T) {
	dir := t.TempDir()
	const w, h, dpi = 4 * vg.Inch, 3 * vg.Inch, 100
	for name, p := range figures(t) {
		for _, ext := range Formats {
			path := filepath.Join(dir, name+ext)
			if err := Save(p, path, w, h, dpi, nil); err != nil {
				t.Fatalf("%s%s: %v", name, ext, err)
			}
			data, err := os.ReadFile(path)
			if err != nil {
				t.Fatal(err)
			}
			switch ext {
			case ".png":
				img, err := png.Decode(bytes.NewReader(data))
				if err != nil {
					t.Fatalf("%s: not a PNG: %v", path, err)
				}
				if got := img.Bounds().Size(); got != image.Pt(400, 300) {
					t.Errorf("%s: size %v, want 400×300 (4×3 in at 100 dpi)", path, got)
				}
			case ".svg":
				checkSVG(t, path, data)
			case ".pdf":
				if !bytes.HasPrefix(data, []byte("%PDF-")) || !bytes.HasSuffix(bytes.TrimRight(data, "\r\n"), []byte("%%EOF")) {
					t.Errorf("%s: does not start with %%PDF- and end with %%%%EOF", path)
				}
			}
		}
	}
	// Nothing but the figures: no temporary files left behind.
	entries, _ := os.ReadDir(dir)
	if want := len(Formats) * len(figures(t)); len(entries) != want {
		t.Errorf("%d files in the output folder, want %d", len(entries), want)
	}
}

// checkSVG checks that data is well-formed XML with an <svg> root.
func checkSVG(t *testing.T, path string, data []byte) {
	t.Helper()
	dec := xml.NewDecoder(bytes.NewReader(data))
	root := ""
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("%s: not well-formed XML: %v", path, err)
		}
		if se, ok := tok.(xml.StartElement); ok && root == "" {
			root = se.Name.Local
		}
	}
	if root != "svg" {
		t.Errorf("%s: root element %q, want svg", path, root)
	}
}

func TestSaveUnknownFormat(t *testing.T) {
	dir := t.TempDir()
	p, _ := XYPlot([]float64{1, 2}, []float64{1, 2}, Options{})
	path := filepath.Join(dir, "fig.bmp")
	err := Save(p, path, 0, 0, 0, nil)
	if err == nil || !strings.Contains(err.Error(), `".bmp"`) || !strings.Contains(err.Error(), ".png") {
		t.Fatalf("Save(.bmp) error = %v, want one naming .bmp and the formats understood", err)
	}
	if entries, _ := os.ReadDir(dir); len(entries) != 0 {
		t.Errorf("Save(.bmp) left %d files", len(entries))
	}
	if err := Save(p, filepath.Join(dir, "missing", "fig.png"), 0, 0, 0, nil); err == nil {
		t.Error("Save into a missing folder: no error")
	}
}

func TestSaveReplacesAtomically(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "fig.svg")
	if err := os.WriteFile(path, []byte("old"), 0o644); err != nil {
		t.Fatal(err)
	}
	p, _ := XYPlot([]float64{1, 2}, []float64{1, 2}, Options{})
	if err := Save(p, path, 0, 0, 0, nil); err != nil {
		t.Fatal(err)
	}
	data, _ := os.ReadFile(path)
	checkSVG(t, path, data)
}

// TestOkabeItoPalette checks the eight colours against the palette of
// Okabe & Ito (2008), "Color Universal Design (CUD): how to make figures and
// presentations that are friendly to colorblind people" (hex values from
// memory).
func TestOkabeItoPalette(t *testing.T) {
	published := map[string]string{
		"black": "#000000", "orange": "#E69F00", "sky blue": "#56B4E9", "bluish green": "#009E73",
		"yellow": "#F0E442", "blue": "#0072B2", "vermillion": "#D55E00", "reddish purple": "#CC79A7",
	}
	want := make(map[string]bool)
	for _, hex := range published {
		want[hex] = true
	}
	got := make(map[string]bool)
	for slot := 0; slot < 8; slot++ {
		got[hexOf(Colour(slot))] = true
	}
	for hex := range want {
		if !got[hex] {
			t.Errorf("palette lacks Okabe–Ito colour %s", hex)
		}
	}
	if len(got) != 8 {
		t.Errorf("first 8 slots give %d distinct colours, want 8", len(got))
	}
	// Beyond eight, colours repeat but dash patterns tell series apart.
	type style struct {
		hex    string
		dashes string
	}
	seen := make(map[style]int)
	for slot := 0; slot < 32; slot++ {
		s := style{hexOf(Colour(slot)), fmt.Sprint(Dashes(slot))}
		if prev, dup := seen[s]; dup {
			t.Errorf("slots %d and %d share colour and dash pattern", prev, slot)
		}
		seen[s] = slot
	}
	if Dashes(3) != nil {
		t.Error("the first eight slots should be solid")
	}
}

func hexOf(c color.Color) string {
	r, g, b, _ := c.RGBA()
	return fmt.Sprintf("#%02X%02X%02X", r>>8, g>>8, b>>8)
}

// relLuminance is the relative luminance of WCAG 2.0 (sRGB linearised,
// weights 0.2126, 0.7152, 0.0722).
func relLuminance(c color.Color) float64 {
	r, g, b, _ := c.RGBA()
	lin := func(v uint32) float64 {
		s := float64(v) / 0xFFFF
		if s <= 0.03928 {
			return s / 12.92
		}
		return math.Pow((s+0.055)/1.055, 2.4)
	}
	return 0.2126*lin(r) + 0.7152*lin(g) + 0.0722*lin(b)
}

// TestScaleColour checks the sequential scale: its ends are those of the
// viridis map of van der Walt & Smith (2015) (#440154 and #FDE725, from
// memory), and its luminance rises monotonically, which keeps it readable
// without colour vision and in greyscale (common practice).
func TestScaleColour(t *testing.T) {
	if got := hexOf(ScaleColour(0)); got != "#440154" {
		t.Errorf("ScaleColour(0) = %s, want #440154", got)
	}
	if got := hexOf(ScaleColour(1)); got != "#FDE725" {
		t.Errorf("ScaleColour(1) = %s, want #FDE725", got)
	}
	prev := -1.0
	for i := 0; i <= 100; i++ {
		l := relLuminance(ScaleColour(float64(i) / 100))
		if l <= prev {
			t.Fatalf("luminance falls at f = %.2f: %.4f after %.4f", float64(i)/100, l, prev)
		}
		prev = l
	}
	if hexOf(ScaleColour(-3)) != "#440154" || hexOf(ScaleColour(7)) != "#FDE725" {
		t.Error("ScaleColour does not clamp to [0, 1]")
	}
}

// labelledTicks returns the labelled ticks of an axis as drawn.
func labelledTicks(a plot.Axis) map[float64]string {
	m := make(map[float64]string)
	for _, tk := range a.Tick.Marker.Ticks(a.Min, a.Max) {
		if tk.Label != "" {
			m[tk.Value] = tk.Label
		}
	}
	return m
}

func TestLogAxesDecadeTicks(t *testing.T) {
	tr := decay(2, 50) // times 1e-3 … 1e2
	p, err := TrajectoryPlot(tr, Options{LogX: true})
	if err != nil {
		t.Fatal(err)
	}
	if _, ok := p.X.Scale.(plot.LogScale); !ok {
		t.Fatalf("X scale %T, want plot.LogScale", p.X.Scale)
	}
	if _, ok := p.Y.Scale.(plot.LinearScale); !ok {
		t.Errorf("Y scale %T, want plot.LinearScale", p.Y.Scale)
	}
	got := labelledTicks(p.X)
	for k := -3; k <= 2; k++ {
		v := math.Pow(10, float64(k))
		found := false
		for val, label := range got {
			if math.Abs(val/v-1) < 1e-9 {
				found = true
				if want := fmt.Sprintf("10^%d", k); label != want {
					t.Errorf("tick at %g labelled %q, want %q", v, label, want)
				}
			}
		}
		if !found {
			t.Errorf("no labelled tick at 1e%d; ticks %v", k, got)
		}
	}
	// Minor ticks at 2…9 × 10^k.
	minor := 0
	for _, tk := range p.X.Tick.Marker.Ticks(p.X.Min, p.X.Max) {
		if tk.Label == "" {
			minor++
		}
	}
	if minor < 8*4 {
		t.Errorf("%d minor ticks over 5 decades, want at least 32", minor)
	}
}

func TestDecadeTicksWideAndNarrow(t *testing.T) {
	// 40 decades: labels every 5th decade, still readable.
	wide := decadeTicks{}.Ticks(1e-30, 1e10)
	labels := 0
	for _, tk := range wide {
		if tk.Label != "" {
			labels++
			if k := math.Log10(tk.Value); math.Abs(k-math.Round(k)) > 1e-9 || int(math.Round(k))%5 != 0 {
				t.Errorf("label %q at %g, want powers of ten 10^(5m)", tk.Label, tk.Value)
			}
		}
	}
	if labels < 4 || labels > 10 {
		t.Errorf("%d labels over 40 decades, want 4–10", labels)
	}
	// Within one decade: at least two labels.
	narrow := decadeTicks{}.Ticks(2.5, 8)
	labels = 0
	for _, tk := range narrow {
		if tk.Label != "" {
			labels++
		}
	}
	if labels < 2 {
		t.Errorf("range 2.5–8: %d labels, want ≥ 2: %v", labels, narrow)
	}
	// A short log axis labels its decades and the ticks between them in
	// one form: plain numbers near 1, powers of ten far from it (a review
	// found "2, 5, 10¹, 20" on one axis).
	for _, c := range []struct {
		min, max float64
		want     []string
	}{
		{1.5, 25, []string{"2", "5", "10", "20"}},
		{1.5e-5, 2.5e-4, []string{"2×10^-5", "5×10^-5", "10^-4", "2×10^-4"}},
	} {
		var got []string
		for _, tk := range (decadeTicks{}).Ticks(c.min, c.max) {
			if tk.Label != "" {
				got = append(got, tk.Label)
			}
		}
		if strings.Join(got, ", ") != strings.Join(c.want, ", ") {
			t.Errorf("labels on %g–%g: %v, want %v", c.min, c.max, got, c.want)
		}
	}
	if (decadeTicks{}).Ticks(0, 1) != nil || (decadeTicks{}).Ticks(-1, 1) != nil {
		t.Error("non-positive range gave ticks")
	}
}

func TestLogAxesLeaveOutNonPositive(t *testing.T) {
	tr := Trajectories{
		Times:  []float64{0, 1, 2, 3},
		Names:  []string{"A", "B"},
		Values: [][]float64{{1, 0}, {0.5, -1e-12}, {0.25, 0.1}, {math.NaN(), 0.2}},
	}
	p, err := TrajectoryPlot(tr, Options{LogX: true, LogY: true, Title: "T"})
	if err != nil {
		t.Fatal(err)
	}
	// t = 0 is dropped (1 time); of the rest, B has −1e-12 (≤ 0) and A a NaN.
	for _, want := range []string{"not shown: ", "1 time ≤ 0 on the log axis", "1 value ≤ 0 on the log axis", "1 NaN or infinite value"} {
		if !strings.Contains(p.Title.Text, want) {
			t.Errorf("title %q lacks note %q", p.Title.Text, want)
		}
	}
	if !strings.HasPrefix(p.Title.Text, "T\n") {
		t.Errorf("title %q: notes should follow the title on a new line", p.Title.Text)
	}
	if p.X.Min != 1 || p.X.Max != 3 {
		t.Errorf("X range %g–%g, want 1–3 (t = 0 left out)", p.X.Min, p.X.Max)
	}
	if p.Y.Min != 0.1 || p.Y.Max != 0.5 {
		t.Errorf("Y range %g–%g, want 0.1–0.5 (values ≤ 0 and NaN left out)", p.Y.Min, p.Y.Max)
	}
	Render(p, 300, 200)
	// Linear axes show zeros and negatives without a note.
	p, _ = TrajectoryPlot(tr, Options{})
	if strings.Contains(p.Title.Text, "≤ 0") {
		t.Errorf("linear axes noted %q", p.Title.Text)
	}
}

func TestDegenerateDataDoNotPanic(t *testing.T) {
	nan := math.NaN()
	cases := map[string]Trajectories{
		"empty":          {},
		"no names":       {Times: []float64{0, 1}, Values: [][]float64{{}, {}}},
		"single point":   {Times: []float64{2}, Names: []string{"A"}, Values: [][]float64{{3}}},
		"all NaN":        {Times: []float64{1, 2}, Names: []string{"A"}, Values: [][]float64{{nan}, {nan}}},
		"all zero":       {Times: []float64{1, 2}, Names: []string{"A"}, Values: [][]float64{{0}, {0}}},
		"constant":       {Times: []float64{1, 2}, Names: []string{"A"}, Values: [][]float64{{5}, {5}}},
		"infinite":       {Times: []float64{1, 2}, Names: []string{"A"}, Values: [][]float64{{math.Inf(1)}, {1}}},
		"all times zero": {Times: []float64{0, 0}, Names: []string{"A"}, Values: [][]float64{{1}, {2}}},
	}
	for name, tr := range cases {
		for _, log := range []bool{false, true} {
			p, err := TrajectoryPlot(tr, Options{LogX: log, LogY: log})
			if err != nil {
				t.Errorf("%s (log %t): %v", name, log, err)
				continue
			}
			img := Render(p, 200, 120)
			if img.Bounds().Dx() != 200 {
				t.Errorf("%s: image width %d", name, img.Bounds().Dx())
			}
			if (name == "empty" || name == "no names") && !strings.Contains(p.Title.Text, "no data") {
				t.Errorf("%s: title %q lacks the no-data note", name, p.Title.Text)
			}
			if name == "all zero" && log && !strings.Contains(p.Title.Text, "2 values ≤ 0 on the log axis") {
				t.Errorf("all zero on log axis: title %q", p.Title.Text)
			}
		}
	}
	// The other figures, with empty and degenerate data, on log axes.
	lo := Options{LogX: true, LogY: true}
	for name, f := range map[string]func() (*plot.Plot, error){
		"family empty": func() (*plot.Plot, error) { return FamilyPlot(nil, nil, nil, "k", lo) },
		"family zeros": func() (*plot.Plot, error) {
			return FamilyPlot([]float64{0, 1}, [][]float64{{0, 0}}, []float64{0}, "k", lo)
		},
		"xy empty":   func() (*plot.Plot, error) { return XYPlot(nil, nil, lo) },
		"xy zero":    func() (*plot.Plot, error) { return XYPlot([]float64{0}, []float64{0}, lo) },
		"heat empty": func() (*plot.Plot, error) { return HeatMap(nil, nil, nil, lo, "z") },
		"heat one":   func() (*plot.Plot, error) { return HeatMap([]float64{1}, []float64{2}, [][]float64{{nan}}, lo, "z") },
		"heat ≤ 0":   func() (*plot.Plot, error) { return HeatMap([]float64{0}, []float64{1}, [][]float64{{1}}, lo, "z") },
		"band empty": func() (*plot.Plot, error) { return BandPlot(nil, nil, nil, nil, nil, nil, "", lo) },
		"band zeros": func() (*plot.Plot, error) {
			z := []float64{0, 0}
			return BandPlot([]float64{1, 2}, z, z, z, nil, nil, "A", lo)
		},
		"hist empty": func() (*plot.Plot, error) { return Histogram(nil, 0, lo) },
		"hist one":   func() (*plot.Plot, error) { return Histogram([]float64{3}, 0, lo) },
		"hist NaN":   func() (*plot.Plot, error) { return Histogram([]float64{nan, -1}, 5, lo) },
	} {
		p, err := f()
		if err != nil {
			t.Errorf("%s: %v", name, err)
			continue
		}
		Render(p, 200, 120)
	}
}

func TestShapeErrors(t *testing.T) {
	bad := Trajectories{Times: []float64{0, 1}, Names: []string{"A", "B"}, Values: [][]float64{{1, 2}, {3}}}
	if _, err := TrajectoryPlot(bad, Options{}); err == nil || !strings.Contains(err.Error(), "row 1") {
		t.Errorf("short row: error %v, want one naming row 1", err)
	}
	good := decay(2, 5)
	if _, err := TrajectoryPlot(good, Options{Visible: []bool{true}}); err == nil || !strings.Contains(err.Error(), "Visible") {
		t.Errorf("short Visible: error %v", err)
	}
	if _, err := TrajectoryPlot(good, Options{ColourIndex: []int{1, 2, 3}}); err == nil || !strings.Contains(err.Error(), "ColourIndex") {
		t.Errorf("long ColourIndex: error %v", err)
	}
	if _, err := TrajectoryPlot(good, Options{Overlay: &bad}); err == nil || !strings.Contains(err.Error(), "overlay") {
		t.Errorf("bad overlay: error %v", err)
	}
	if _, err := FamilyPlot([]float64{0, 1}, [][]float64{{1}}, []float64{2}, "k", Options{}); err == nil || !strings.Contains(err.Error(), "curve 0") {
		t.Errorf("short curve: error %v", err)
	}
	if _, err := XYPlot([]float64{1}, nil, Options{}); err == nil {
		t.Error("XYPlot with unequal lengths: no error")
	}
	if _, err := HeatMap([]float64{2, 1}, []float64{1}, [][]float64{{1, 2}}, Options{}, "z"); err == nil || !strings.Contains(err.Error(), "ascend") {
		t.Errorf("descending xs: error %v", err)
	}
	if _, err := BandPlot([]float64{1, 2}, []float64{1, 2}, []float64{1, 2}, nil, nil, nil, "", Options{}); err == nil {
		t.Error("BandPlot with one edge of a band: no error")
	}
}

func TestRenderDrawsPaletteColours(t *testing.T) {
	tr := decay(3, 100)
	tr.Times, tr.Values = tr.Times[1:], tr.Values[1:]
	p, err := TrajectoryPlot(tr, Options{Title: "three", LogX: true})
	if err != nil {
		t.Fatal(err)
	}
	img := Render(p, 640, 400)
	if got := img.Bounds().Size(); got != image.Pt(640, 400) {
		t.Fatalf("Render size %v, want 640×400", got)
	}
	for slot := 0; slot < 3; slot++ {
		want := Colour(slot)
		if n := countNear(img, want); n < 50 {
			t.Errorf("slot %d colour %s: %d pixels, want ≥ 50", slot, hexOf(want), n)
		}
	}
	// A hidden series is not drawn.
	p, _ = TrajectoryPlot(tr, Options{Visible: []bool{true, false, true}})
	if n := countNear(Render(p, 640, 400), Colour(1)); n != 0 {
		t.Errorf("hidden series drawn: %d pixels of its colour", n)
	}
	// A stable colour index keeps a series' colour.
	p, _ = TrajectoryPlot(tr, Options{ColourIndex: []int{5, 6, 4}})
	if n := countNear(Render(p, 640, 400), Colour(5)); n < 50 {
		t.Errorf("ColourIndex slot 5 not drawn (%d pixels)", n)
	}
}

// countNear counts pixels within a small distance of c.
func countNear(img image.Image, c color.Color) int {
	r0, g0, b0, _ := c.RGBA()
	n := 0
	b := img.Bounds()
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			r, g, bb, _ := img.At(x, y).RGBA()
			d := math.Abs(float64(r)-float64(r0)) + math.Abs(float64(g)-float64(g0)) + math.Abs(float64(bb)-float64(b0))
			if d < 3*0x0600 {
				n++
			}
		}
	}
	return n
}

func TestAxisLabelsWithUnits(t *testing.T) {
	p, _ := TrajectoryPlot(decay(1, 3), Options{XLabel: "time", XUnit: "s", YLabel: "concentration", YUnit: "uM"})
	if p.X.Label.Text != "time (s)" || p.Y.Label.Text != "concentration (uM)" {
		t.Errorf("labels %q, %q", p.X.Label.Text, p.Y.Label.Text)
	}
	if AxisLabel("time", "") != "time" {
		t.Error("AxisLabel without unit")
	}
}

// TestHistogramBins checks binning against Sturges' rule (Sturges 1926,
// k = ⌈log2 n⌉ + 1) and exact counts for evenly spread data.
func TestHistogramBins(t *testing.T) {
	v := make([]float64, 100)
	for i := range v {
		v[i] = float64(i)
	}
	edges, counts := histogramBins(v, 0, 99, 0, false)
	if len(counts) != 8 || len(edges) != 9 {
		t.Fatalf("100 values: %d bins, want 8 (Sturges)", len(counts))
	}
	edges, counts = histogramBins(v, 0, 100, 10, false)
	total := 0.0
	for i, c := range counts {
		total += c
		if c != 10 {
			t.Errorf("bin %d [%g, %g): %g values, want 10", i, edges[i], edges[i+1], c)
		}
	}
	if total != 100 {
		t.Errorf("counts sum to %g, want 100", total)
	}
	// Log bins: 1, 10, 100, 1000 fall one per decade.
	edges, counts = histogramBins([]float64{1, 10, 100, 1000}, 1, 1000, 3, true)
	if math.Abs(edges[1]-10) > 1e-9 || counts[0] != 1 || counts[1] != 1 || counts[2] != 2 {
		t.Errorf("log bins: edges %v counts %v", edges, counts)
	}
}

// TestCellEdges checks that heat-map cells meet half-way between grid values:
// arithmetically on a linear axis, geometrically on a log axis.
func TestCellEdges(t *testing.T) {
	lin := cellEdges([]float64{1, 2, 4}, false)
	for i, want := range []float64{0.5, 1.5, 3, 5} {
		if lin[i] != want {
			t.Errorf("linear edges %v, want [0.5 1.5 3 5]", lin)
			break
		}
	}
	lg := cellEdges([]float64{1, 100, 10000}, true)
	for i, want := range []float64{0.1, 10, 1000, 100000} {
		if math.Abs(lg[i]/want-1) > 1e-12 {
			t.Errorf("log edges %v, want [0.1 10 1000 1e5]", lg)
			break
		}
	}
}

func TestFamilyColourScaleFollowsValues(t *testing.T) {
	times := []float64{1, 2, 3}
	curves := [][]float64{{1, 2, 3}, {2, 3, 4}}
	p, err := FamilyPlot(times, curves, []float64{1e-2, 1e2}, "k", Options{})
	if err != nil {
		t.Fatal(err)
	}
	img := Render(p, 500, 300)
	if countNear(img, ScaleColour(0)) < 20 {
		t.Error("lowest value not drawn in the low end of the scale")
	}
}

func TestOptionsSize(t *testing.T) {
	w, h := Options{}.Size()
	if w != DefaultWidth || h != DefaultHeight {
		t.Errorf("zero Options size %v×%v", w, h)
	}
	w, _ = Options{Width: 3 * vg.Inch}.Size()
	if w != 3*vg.Inch {
		t.Errorf("Width ignored: %v", w)
	}
}

// BenchmarkRenderTrajectories50 builds and renders a figure of 50 species ×
// 200 points into an 800×500 raster, the size of an on-screen figure. Besides
// wall time it reports process CPU time per figure (cpu-ns/op, GC included),
// which a loaded machine distorts less.
func BenchmarkRenderTrajectories50(b *testing.B) {
	tr := decay(50, 200)
	img := image.NewRGBA(image.Rect(0, 0, 800, 500))
	b.ReportAllocs()
	start := cpuTime()
	for b.Loop() {
		p, err := TrajectoryPlot(tr, Options{Title: "fifty", XLabel: "time", XUnit: "s"})
		if err != nil {
			b.Fatal(err)
		}
		RenderInto(p, img)
	}
	b.ReportMetric(float64(cpuTime()-start)/float64(b.N), "cpu-ns/op")
}

func TestOverlayLabel(t *testing.T) {
	tr := Trajectories{Times: []float64{0, 1, 2}, Names: []string{"A"}, Values: [][]float64{{1}, {0.5}, {0.25}}}
	for _, c := range []struct{ label, want string }{{"", "previous run (faint, dashed)"}, {"pinned reference", "pinned reference"}} {
		p, err := TrajectoryPlot(tr, Options{Overlay: &tr, OverlayLabel: c.label})
		if err != nil {
			t.Fatal(err)
		}
		var buf bytes.Buffer
		wt, err := p.WriterTo(4*vg.Inch, 3*vg.Inch, "svg")
		if err != nil {
			t.Fatal(err)
		}
		if _, err := wt.WriteTo(&buf); err != nil {
			t.Fatal(err)
		}
		if !bytes.Contains(buf.Bytes(), []byte(c.want)) {
			t.Errorf("label %q: the figure does not name the overlay %q", c.label, c.want)
		}
	}
}

// A log value axis shows at most Options.Decades decades below the largest
// value (12 by default; negative: no limit).
func TestLogAxisDecades(t *testing.T) {
	tr := Trajectories{Times: []float64{1, 2, 3}, Names: []string{"A"}, Values: [][]float64{{1e-40}, {1e-3}, {10}}}
	for _, c := range []struct {
		decades int
		wantMin float64
	}{{0, 1e-11}, {4, 1e-3}, {-1, 1e-40}} {
		p, err := TrajectoryPlot(tr, Options{LogX: true, LogY: true, Decades: c.decades})
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(math.Log10(p.Y.Min)-math.Log10(c.wantMin)) > 0.05 {
			t.Errorf("Decades %d: axis starts at %g, want about %g (max %g)", c.decades, p.Y.Min, c.wantMin, p.Y.Max)
		}
	}
}

// A readout that is the same in every run but for rounding makes one bar
// around its value with a note, not a fake spread across 1e-13 (a review
// found 0.1000000000000…0.1000000000004 on the axis).
func TestHistogramOfConstant(t *testing.T) {
	vals := []float64{0.1, 0.1 + 1e-16, 0.1 + 4e-16, 0.1 - 1e-16}
	p, err := Histogram(vals, 5, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if w := p.X.Max - p.X.Min; w < 0.005 || w > 0.05 {
		t.Errorf("axis spans %g, want about 10 %% of 0.1", w)
	}
	edges, counts := histogramBins([]float64{0.1, 0.1}, 0.1, 0.1, 4, false)
	if edges[0] != 0.095 || math.Abs(edges[4]-0.105) > 1e-15 || counts[2] != 2 {
		t.Errorf("edges %v counts %v, want 0.095…0.105 with both values in the middle bin", edges, counts)
	}
}

// Measurements over a TrajectoryPlot take the colour slot of the series of
// their name, are hidden with it, and a name the plot lacks takes the next
// free slot (the window's overlay of loaded measurements).
func TestMeasuredOverTrajectories(t *testing.T) {
	tr := Trajectories{Times: []float64{0, 10}, Names: []string{"A"}, Values: [][]float64{{0}, {0}}}
	data := []Measured{{T: 2, Y: 5, SD: 1, Name: "A"}, {T: 4, Y: 6, SD: 0.5, Name: "A"}, {T: 6, Y: 7, Name: "A"}, {T: 8, Y: 4, Name: "A"}}
	count := func(o Options, slot int) int {
		p, err := TrajectoryPlot(tr, o)
		if err != nil {
			t.Fatal(err)
		}
		return countNear(Render(p, 640, 400), Colour(slot))
	}
	o := Options{ColourIndex: []int{4}, Measured: data, NoLegend: true}
	without := count(Options{ColourIndex: []int{4}, NoLegend: true}, 4)
	if with := count(o, 4); with < without+40 {
		t.Errorf("measurements not drawn in slot 4: %d pixels with them, %d without", with, without)
	}
	o.Visible = []bool{false}
	if n := count(o, 4); n != 0 {
		t.Errorf("measurements of a hidden series drawn: %d pixels of its colour", n)
	}
	other := []Measured{{T: 3, Y: 3, Name: "B"}, {T: 5, Y: 4, Name: "B"}}
	if n := count(Options{ColourIndex: []int{4}, Measured: other, NoLegend: true}, 5); n < 20 {
		t.Errorf("a measured name the plot lacks is not drawn in the next slot (%d pixels)", n)
	}
	p, _ := TrajectoryPlot(tr, Options{LogX: true, Measured: []Measured{{T: 0, Y: 1, Name: "A"}, {T: 1, Y: 1, Name: "A"}}})
	if !strings.Contains(p.Title.Text, "1 measurement a log axis cannot show") {
		t.Errorf("title %q does not note the measurement at time 0", p.Title.Text)
	}
}

// TracePlot draws every run and the lowest value so far; an empty input
// gives an empty figure with a note, not an error.
func TestTracePlot(t *testing.T) {
	p, err := TracePlot([][]float64{{100, 10, 1}, {50, 40, 30, 20}, nil}, Options{LogY: true, NoLegend: true})
	if err != nil {
		t.Fatal(err)
	}
	img := Render(p, 640, 400)
	if n := countNear(img, Colour(1)); n < 100 {
		t.Errorf("the lowest-so-far line is not drawn (%d pixels)", n)
	}
	p, _ = TracePlot(nil, Options{})
	if !strings.Contains(p.Title.Text, "no data") {
		t.Errorf("empty trace titled %q", p.Title.Text)
	}
	p, _ = TracePlot([][]float64{{1, 0, -1}}, Options{LogY: true})
	if !strings.Contains(p.Title.Text, "2 values a log axis cannot show") {
		t.Errorf("title %q does not note the values ≤ 0", p.Title.Text)
	}
}

// SensitivityMap keeps the later row at a repeated time, leaves time 0
// out of a log axis quietly, labels the rows by name, and refuses times
// that descend or rows of the wrong length.
func TestSensitivityMap(t *testing.T) {
	z := [][]float64{{0, 1, 2, 3}, {0, -1, -2, -3}}
	p, err := SensitivityMap([]float64{0, 1, 1, 2}, []string{"ka", "ke"}, z, Options{LogX: true}, "s")
	if err != nil {
		t.Fatal(err)
	}
	if strings.Contains(p.Title.Text, "not shown") {
		t.Errorf("time 0 noted on a log axis: %q", p.Title.Text)
	}
	ticks := p.Y.Tick.Marker.Ticks(p.Y.Min, p.Y.Max)
	if len(ticks) != 2 || ticks[0].Label != "ka" || ticks[1].Label != "ke" {
		t.Errorf("row labels %+v", ticks)
	}
	if _, err := SensitivityMap([]float64{0, 2, 1}, []string{"a"}, [][]float64{{1, 2, 3}}, Options{}, "s"); err == nil {
		t.Error("descending times accepted")
	}
	if _, err := SensitivityMap([]float64{0, 1}, []string{"a"}, [][]float64{{1}}, Options{}, "s"); err == nil {
		t.Error("a short row accepted")
	}
}

// A signed heat map colours 0 with the diverging scale's neutral middle and
// equal magnitudes of either sign with its two ends, whatever the range of
// the data (here −1 … 3, so the scale runs −3 … 3); the sequential scale
// would colour 0 a quarter of the way up.
func TestSignedHeatMap(t *testing.T) {
	z := [][]float64{{-3, 0}, {3, 1}}
	p, err := HeatMap([]float64{1, 2}, []float64{1, 2}, z, Options{Signed: true}, "s")
	if err != nil {
		t.Fatal(err)
	}
	img := Render(p, 400, 400)
	for _, c := range []struct {
		what string
		want color.Color
	}{{"zero", DivergingColour(0.5)}, {"−3", DivergingColour(0)}, {"+3", DivergingColour(1)}} {
		if n := countNear(img, c.want); n < 1000 {
			t.Errorf("%s: %d pixels of %s, want ≥ 1000 (a cell)", c.what, n, hexOf(c.want))
		}
	}
	// Without Signed, the same data use the sequential scale.
	p, _ = HeatMap([]float64{1, 2}, []float64{1, 2}, z, Options{}, "s")
	if n := countNear(Render(p, 400, 400), DivergingColour(0.5)); n >= 1000 {
		t.Errorf("unsigned heat map drew a cell in the diverging scale's middle (%d pixels)", n)
	}
	if got := hexOf(DivergingColour(0.5)); got != "#F7F7F7" && got != "#f7f7f7" {
		t.Errorf("diverging middle %s, want #F7F7F7 (PuOr's neutral, from memory)", got)
	}
}
