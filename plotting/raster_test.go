package plotting

import (
	"image"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"
)

// column returns the pixel column of x for columns col wide.
func columnOf(x, col vg.Length) int { return int(math.Floor(float64(x / col))) }

// checkDecimated compares decimateColumns(in) with a brute-force account of
// each run of vertices in one column: the output must keep the vertices in
// order, keep each run's first and last vertex and its extreme heights, and
// keep at most four vertices of a run.
func checkDecimated(t *testing.T, in []vg.Point, col vg.Length) {
	t.Helper()
	orig := append([]vg.Point(nil), in...)
	out := decimateColumns(in, col)
	// Map every output vertex to its index in orig (a subsequence).
	idx := make([]int, len(out))
	k := 0
	for i, q := range out {
		for k < len(orig) && orig[k] != q {
			k++
		}
		if k == len(orig) {
			t.Fatalf("output vertex %d %v is not in the input after the previous one", i, q)
		}
		idx[i] = k
		k++
	}
	o := 0
	for i := 0; i < len(orig); {
		c := columnOf(orig[i].X, col)
		j := i
		lo, hi := math.Inf(1), math.Inf(-1)
		for j < len(orig) && columnOf(orig[j].X, col) == c {
			lo, hi = math.Min(lo, float64(orig[j].Y)), math.Max(hi, float64(orig[j].Y))
			j++
		}
		// Output vertices of this run.
		var got []int
		for o < len(out) && idx[o] < j {
			got = append(got, idx[o])
			o++
		}
		if len(got) == 0 || got[0] != i || got[len(got)-1] != j-1 {
			t.Fatalf("run %d–%d (column %d): kept %v; want its first and last vertex", i, j-1, c, got)
		}
		if j-i <= 4 && len(got) != j-i {
			t.Fatalf("run %d–%d of %d vertices: kept %v; want all", i, j-1, j-i, got)
		}
		if len(got) > 4 {
			t.Fatalf("run %d–%d: kept %d vertices; want at most 4", i, j-1, len(got))
		}
		glo, ghi := math.Inf(1), math.Inf(-1)
		for _, g := range got {
			glo, ghi = math.Min(glo, float64(orig[g].Y)), math.Max(ghi, float64(orig[g].Y))
		}
		if glo != lo || ghi != hi {
			t.Fatalf("run %d–%d: kept heights %g…%g; want %g…%g", i, j-1, glo, ghi, lo, hi)
		}
		i = j
	}
}

func TestDecimateColumnsKeepsColumnExtremes(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	const col = 0.75 // points: one pixel at 96 dpi
	for trial := range 200 {
		n := 1 + rng.IntN(3000)
		pts := make([]vg.Point, n)
		x := vg.Length(rng.Float64() * 10)
		for i := range pts {
			switch trial % 3 {
			case 0: // increasing time, many points per column
				x += vg.Length(rng.Float64() * 0.05)
			case 1: // increasing with jumps and repeated x
				if rng.IntN(4) == 0 {
					x += vg.Length(rng.Float64() * 3)
				}
			case 2: // not monotone: wanders back and forth
				x += vg.Length(rng.NormFloat64() * 0.3)
			}
			pts[i] = vg.Point{X: x, Y: vg.Length(rng.NormFloat64() * 50)}
		}
		checkDecimated(t, pts, col)
	}
	// Short lines come back whole.
	short := []vg.Point{{X: 0, Y: 0}, {X: 0.1, Y: 5}, {X: 0.2, Y: -5}, {X: 0.3, Y: 1}}
	if got := decimateColumns(short, col); len(got) != 4 {
		t.Errorf("decimateColumns of 4 vertices kept %d", len(got))
	}
}

func TestDecimateColumnsAllocatesNothing(t *testing.T) {
	pts := make([]vg.Point, 10000)
	work := make([]vg.Point, len(pts))
	for i := range pts {
		pts[i] = vg.Point{X: vg.Length(i) * 0.01, Y: vg.Length(math.Sin(float64(i)))}
	}
	allocs := testing.AllocsPerRun(10, func() {
		copy(work, pts)
		decimateColumns(work, 0.75)
	})
	if allocs != 0 {
		t.Errorf("decimateColumns allocates %v times per call", allocs)
	}
}

// rasterOf draws fn onto a white wPx × hPx image at 96 dpi with the
// same canvas set-up as RenderInto.
func rasterOf(wPx, hPx int, fn func(dc draw.Canvas)) *image.RGBA {
	img := image.NewRGBA(image.Rect(0, 0, wPx, hPx))
	fn(draw.New(newScreenCanvas(img)))
	return img
}

// pixelDiff returns the largest and the mean absolute difference of the
// colour channels of a and b, in units of 1/255.
func pixelDiff(a, b *image.RGBA) (maxDiff int, mean float64) {
	sum := 0
	for i := range a.Pix {
		d := int(a.Pix[i]) - int(b.Pix[i])
		if d < 0 {
			d = -d
		}
		maxDiff = max(maxDiff, d)
		sum += d
	}
	return maxDiff, float64(sum) / float64(len(a.Pix))
}

// A dense noisy line thinned to four vertices per pixel column draws
// almost the same pixels as the whole line: the claim of M4 aggregation,
// which is exact for one-pixel lines without anti-aliasing. A wider,
// anti-aliased stroke of pure noise (tens of vertices per column swinging
// over 40 pixels, far rougher than a trajectory) differs at a few pixels
// beside the steepest swings.
func TestDecimatedLineLooksTheSame(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	pts := make([]vg.Point, 12000)
	for i := range pts {
		x := 10 + 280*float64(i)/float64(len(pts)-1)
		y := 100 + 60*math.Sin(x/20) + 15*rng.NormFloat64()
		pts[i] = vg.Point{X: vg.Length(x), Y: vg.Length(y)}
	}
	sty := draw.LineStyle{Color: Colour(0), Width: vg.Points(lineWidth)}
	whole := rasterOf(400, 280, func(dc draw.Canvas) { dc.StrokeLines(sty, pts) })
	thin := decimateColumns(append([]vg.Point(nil), pts...), vg.Inch/screenDPI)
	if len(thin) > 4*400 {
		t.Errorf("decimated line keeps %d vertices; want at most 4 per pixel column", len(thin))
	}
	thinned := rasterOf(400, 280, func(dc draw.Canvas) { dc.StrokeLines(sty, thin) })
	maxDiff, mean := pixelDiff(whole, thinned)
	t.Logf("%d → %d vertices; largest channel difference %d/255, mean %.3f/255", len(pts), len(thin), maxDiff, mean)
	if mean > 0.5 {
		t.Errorf("decimated line differs from the whole line by %.3f/255 on average; want ≤ 0.5", mean)
	}
	// The comparison can tell: the line is drawn, and columns eight pixels
	// wide draw visibly less.
	blank := rasterOf(400, 280, func(draw.Canvas) {})
	if _, m := pixelDiff(whole, blank); m < 5 {
		t.Fatalf("the line changes the image by only %.3f/255 on average", m)
	}
	coarse := decimateColumns(append([]vg.Point(nil), pts...), 8*vg.Inch/screenDPI)
	_, m := pixelDiff(whole, rasterOf(400, 280, func(dc draw.Canvas) { dc.StrokeLines(sty, coarse) }))
	t.Logf("8-pixel columns: mean difference %.3f/255", m)
	if m <= 2*mean+0.1 {
		t.Errorf("8-pixel columns differ by %.3f/255, hardly more than 1-pixel columns (%.3f)", m, mean)
	}
}

func TestDasherCutsPattern(t *testing.T) {
	// A straight line 100 long with pattern 6 on, 3 off: dashes start every
	// 9 and the last one is cut short at 100 (arithmetic).
	line := []vg.Point{{X: 0, Y: 0}, {X: 60, Y: 80}}
	var d dasher
	d.dash([][]vg.Point{line}, []vg.Length{6, 3}, 0)
	if d.dashes() != 12 {
		t.Fatalf("got %d dashes; want 12", d.dashes())
	}
	for k := range d.dashes() {
		p := d.piece(k)
		a, b := p[0], p[len(p)-1]
		start := math.Hypot(float64(a.X), float64(a.Y))
		length := math.Hypot(float64(b.X-a.X), float64(b.Y-a.Y))
		want := 6.0
		if k == 11 {
			want = 1 // 99 to 100
		}
		if math.Abs(start-9*float64(k)) > 1e-9 || math.Abs(length-want) > 1e-9 {
			t.Errorf("dash %d runs from %g for %g; want from %g for %g", k, start, length, 9*float64(k), want)
		}
	}
	// A dash that runs over a vertex keeps it; the pattern restarts on each
	// line; an offset shifts it.
	corner := []vg.Point{{X: 0, Y: 0}, {X: 4, Y: 0}, {X: 4, Y: 4}}
	d.dash([][]vg.Point{corner, corner}, []vg.Length{6, 3}, 0)
	if d.dashes() != 2 || len(d.piece(0)) != 3 || len(d.piece(1)) != 3 {
		t.Fatalf("corner: got %d dashes %v; want two of 3 vertices", d.dashes(), d.pts)
	}
	// Offset 7 lies 1 into the gap of 3: the line starts with 2 off, so the
	// first dash runs from 2 to 8 along it, from height 1.6 to 6.4.
	d.dash([][]vg.Point{line}, []vg.Length{6, 3}, 7)
	if p := d.piece(0); math.Abs(float64(p[0].Y)-1.6) > 1e-9 || math.Abs(float64(p[len(p)-1].Y)-6.4) > 1e-9 {
		t.Errorf("offset 7: first dash %v; want it from height 1.6 to 6.4", p)
	}
}

// Dashes cut here and stroked in batches draw what the rasteriser's own
// dashing draws, up to the anti-aliasing of dash ends.
func TestStrokeDashedMatchesRasteriser(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	var lines [][]vg.Point
	for range 3 {
		var l []vg.Point
		for i := range 120 {
			x := 5 + 4*vg.Length(i)
			l = append(l, vg.Point{X: x, Y: 100 + 80*vg.Length(math.Sin(float64(x)/37)) + vg.Length(rng.NormFloat64())})
		}
		lines = append(lines, l)
	}
	for slot := 8; slot < 32; slot += 8 {
		sty := draw.LineStyle{Color: Colour(slot), Width: vg.Points(lineWidth), Dashes: Dashes(slot)}
		native := rasterOf(700, 300, func(dc draw.Canvas) { dc.StrokeLines(sty, lines...) })
		var d dasher
		var path vg.Path
		ours := rasterOf(700, 300, func(dc draw.Canvas) { strokeDashed(dc, sty, lines, &d, &path) })
		if _, m := pixelDiff(native, rasterOf(700, 300, func(draw.Canvas) {})); m < 1 {
			t.Fatalf("slot %d: the dashed lines change the image by only %.3f/255 on average", slot, m)
		}
		maxDiff, mean := pixelDiff(native, ours)
		t.Logf("slot %d: largest channel difference %d/255, mean %.4f/255", slot, maxDiff, mean)
		// The rasteriser dashes a path whose vertices it has rounded to
		// 1/64 pixel, so dash ends may move by a little of a pixel.
		if maxDiff > 64 || mean > 0.05 {
			t.Errorf("slot %d: batched dashes differ from the rasteriser's by up to %d/255 (mean %.4f); want ≤ 64 (mean ≤ 0.05)", slot, maxDiff, mean)
		}
	}
}

// The raster-only paths leave vector output alone: an SVG of a dashed
// series keeps the dash pattern as an attribute.
func TestVectorKeepsDashPattern(t *testing.T) {
	p, err := TrajectoryPlot(decay(10, 50), Options{})
	if err != nil {
		t.Fatal(err)
	}
	c := vgsvg.New(DefaultWidth, DefaultHeight)
	p.Draw(draw.New(c))
	var buf strings.Builder
	if _, err := c.WriteTo(&buf); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(buf.String(), "stroke-dasharray") {
		t.Error("SVG of 10 series has no dashed stroke; slots 8 and 9 should be dashed")
	}
}

func TestRasterDPISeesThroughWrappers(t *testing.T) {
	c := vgimg.NewWith(vgimg.UseWH(100, 100), vgimg.UseDPI(96))
	dc := draw.New(c)
	inner := draw.Crop(dc, 1, -1, 1, -1)
	for _, v := range []vg.Canvas{c, dc, &dc, inner, draw.Canvas{Canvas: inner}} {
		if dpi, ok := rasterDPI(v); !ok || dpi != 96 {
			t.Errorf("rasterDPI(%T) = %v, %v; want 96, true", v, dpi, ok)
		}
	}
	if _, ok := rasterDPI(vgsvg.New(100, 100)); ok {
		t.Error("rasterDPI says an SVG canvas is raster")
	}
}

func TestNoLegendWidensData(t *testing.T) {
	tr := decay(20, 50)
	area := func(noLegend bool) vg.Rectangle {
		p, err := TrajectoryPlot(tr, Options{NoLegend: noLegend})
		if err != nil {
			t.Fatal(err)
		}
		c := draw.Canvas{Rectangle: vg.Rectangle{Max: vg.Point{X: DefaultWidth, Y: DefaultHeight}}}
		return p.DataCanvas(c).Rectangle
	}
	with, without := area(false), area(true)
	if !(without.Max.X > with.Max.X+vg.Points(40)) {
		t.Errorf("data area ends at %v with no legend and %v with one; want the legend's margin given to the data", without.Max.X, with.Max.X)
	}
}

// plainCanvas hides the raster canvas from rasterDPI, so that a figure is
// drawn as a vector canvas would draw it: native dashes, no thinning; and
// its text is drawn by vgimg itself.
type plainCanvas struct{ *vgimg.Canvas }

// A whole figure drawn on screen looks as it did before the raster-only
// paths: dashes cut here, lines thinned by pixel columns, text from cached
// glyphs.
func TestRenderMatchesPlainDrawing(t *testing.T) {
	tr := decay(40, 400)
	p, err := TrajectoryPlot(tr, Options{Title: "forty", LogX: true, Overlay: &tr})
	if err != nil {
		t.Fatal(err)
	}
	fast := Render(p, 800, 500).(*image.RGBA)
	plain := image.NewRGBA(fast.Bounds())
	p.Draw(draw.New(plainCanvas{newScreenCanvas(plain).Canvas}))
	maxDiff, mean := pixelDiff(fast, plain)
	t.Logf("largest channel difference %d/255, mean %.4f/255", maxDiff, mean)
	if mean > 0.05 {
		t.Errorf("on-screen figure differs from the plain drawing by %.4f/255 on average; want ≤ 0.05", mean)
	}
}

// Text drawn from cached glyphs matches vgimg's own text, at fractional
// positions, in several sizes, upright and rotated, twice over (the second
// time from the cache).
func TestScreenTextMatchesVgimg(t *testing.T) {
	p := plot.New()
	sty := p.X.Tick.Label
	texts := []string{"concentration (µM)", "time (s)", "10^−3 AVWa", "0.25", "… and 12 more", "fi ffl Ǆ ∑ 🜁"}
	drawAll := func(c vg.Canvas) {
		for pass := range 2 {
			for i, txt := range texts {
				s := sty
				s.Font.Size = vg.Points(8 + 1.7*float64(i))
				s.Color = Colour(i)
				if i == 2 {
					s.Handler = powerLabels
				}
				if i == 3 && pass == 1 {
					s.Rotation = math.Pi / 2
				}
				at := vg.Point{X: vg.Length(13.37*float64(i) + 0.21*float64(pass)), Y: vg.Length(20 + 25*float64(i) + 0.4*float64(pass))}
				s.Handler.Draw(c, txt, s, at)
			}
		}
	}
	ours := image.NewRGBA(image.Rect(0, 0, 400, 260))
	drawAll(newScreenCanvas(ours))
	theirs := image.NewRGBA(ours.Bounds())
	drawAll(newScreenCanvas(theirs).Canvas)
	if _, m := pixelDiff(theirs, rasterOf(400, 260, func(draw.Canvas) {})); m < 1 {
		t.Fatalf("the text changes the image by only %.3f/255 on average", m)
	}
	maxDiff, mean := pixelDiff(ours, theirs)
	t.Logf("largest channel difference %d/255, mean %.5f/255", maxDiff, mean)
	if maxDiff > 2 {
		t.Errorf("cached text differs from vgimg's by up to %d/255; want ≤ 2", maxDiff)
	}
}

func BenchmarkScreenText(b *testing.B) {
	img := image.NewRGBA(image.Rect(0, 0, 400, 260))
	c := newScreenCanvas(img)
	sty := plot.New().X.Tick.Label
	b.ReportAllocs()
	for b.Loop() {
		sty.Handler.Draw(c, "concentration (µM)", sty, vg.Point{X: 20, Y: 30})
	}
}
