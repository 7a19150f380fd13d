package diagram

import (
	"bytes"
	"math"
	"strings"
	"testing"

	"kinetarium/plotting"
)

// Isotonic regression with gaps: the answer is the least-squares fit
// under x[i] − x[i−1] ≥ gap (pool adjacent violators; Barlow et al.,
// "Statistical inference under order restrictions", 1972, common
// practice). Two wishes at one place with a gap of 10 split evenly.
func TestIsotonic(t *testing.T) {
	cases := []struct{ want, gaps, out []float64 }{
		{[]float64{0, 0}, []float64{0, 10}, []float64{-5, 5}},
		{[]float64{0, 100}, []float64{0, 10}, []float64{0, 100}},
		{[]float64{3, 1, 2}, []float64{0, 1, 1}, []float64{1, 2, 3}},
		{[]float64{5}, []float64{0}, []float64{5}},
	}
	for _, c := range cases {
		got := isotonic(c.want, c.gaps)
		for i := range got {
			if math.Abs(got[i]-c.out[i]) > 1e-12 {
				t.Errorf("isotonic(%v, %v) = %v, want %v", c.want, c.gaps, got, c.out)
				break
			}
		}
	}
}

// The crossing count of two rows equals the number of inverted pairs.
func TestCrossings(t *testing.T) {
	// Row 0: a, b; row 1: c, d. a→d and b→c cross once; a→c, b→d do not.
	lg := &layered{n: 4, rows: [][]int{{0, 1}, {2, 3}}, down: [][]int{{3}, {2}, nil, nil}}
	pos := []float64{0, 1, 0, 1}
	if c := lg.crossings(pos); c != 1 {
		t.Errorf("crossings %d, want 1", c)
	}
	lg.down = [][]int{{2, 3}, {2, 3}, nil, nil} // K2,2: one crossing
	if c := lg.crossings(pos); c != 1 {
		t.Errorf("K2,2 crossings %d, want 1", c)
	}
	lg.down = [][]int{{2}, {3}, nil, nil}
	if c := lg.crossings(pos); c != 0 {
		t.Errorf("parallel crossings %d, want 0", c)
	}
}

func chain() *Diagram {
	d := &Diagram{
		Nodes: []Node{
			{Kind: Species, Name: "A", Present: true}, {Kind: Reaction, Name: "r1"}, {Kind: Species, Name: "B"},
			{Kind: Reaction, Name: "r2", Reversible: true}, {Kind: Species, Name: "C"}, {Kind: Species, Name: "E", Present: true},
		},
		Edges: []Edge{
			{From: 0, To: 1, Role: Consumes}, {From: 1, To: 2, Role: Produces, Coef: 2},
			{From: 2, To: 3, Role: Consumes}, {From: 3, To: 4, Role: Produces}, {From: 5, To: 3, Role: Catalyses},
		},
	}
	return d
}

// A chain is drawn in layers in the order of the flow: a long, narrow
// chain in columns from left to right.
func TestLayeredChain(t *testing.T) {
	d := chain()
	st := Layout(d, Settings{})
	if st.Method != Layered || st.Crossings != 0 || !st.Across {
		t.Errorf("stats %+v, want layered across", st)
	}
	for _, p := range [][2]int{{0, 1}, {1, 2}, {2, 3}, {3, 4}} {
		if !(d.Box(p[0]).Max.X < d.Box(p[1]).Min.X) {
			t.Errorf("%s (%v) is not left of %s (%v)", d.Nodes[p[0]].Name, d.Box(p[0]), d.Nodes[p[1]].Name, d.Box(p[1]))
		}
	}
	if len(d.Labels) != 1 || d.Labels[0].Text != "2" {
		t.Errorf("labels %+v, want the coefficient 2", d.Labels)
	}
}

// Every export format draws the names; the PDF and SVG carry them as
// text (fonts embedded by plotting).
func TestExport(t *testing.T) {
	for _, style := range []Style{Plain, SBGN} {
		d := chain()
		Layout(d, Settings{})
		p := Plot(d, Options{Style: style, Title: "chain", Selected: []int{2}})
		for _, ext := range []string{".svg", ".pdf", ".png"} {
			b, err := plotting.Encode(p, ext, 300, 300, 0, nil)
			if err != nil || len(b) < 500 {
				t.Fatalf("%v %s: %d bytes, %v", style, ext, len(b), err)
			}
			if ext == ".svg" && !bytes.Contains(b, []byte(">r1<")) && !strings.Contains(string(b), "r1") {
				t.Errorf("the SVG does not hold the reaction's name")
			}
		}
	}
}

// A frame maps diagram points to pixels and back.
func TestPixelFrame(t *testing.T) {
	d := chain()
	Layout(d, Settings{})
	o := Options{View: View{Zoom: 2.5, Centre: &Point{10, 20}}}
	f := FrameOf(Plot(d, o), d, o, 640, 480, 96)
	x, y := f.ToPixel(Point{10, 20})
	// The data area is the picture less gonum/plot's padding of a few points.
	if math.Abs(x-320) > 5 || math.Abs(y-240) > 5 {
		t.Errorf("the centre maps to (%v, %v), want about (320, 240)", x, y)
	}
	// The pixel where the frame puts the inside of species A is A's fill.
	o.View = View{}
	p := Plot(d, o)
	f = FrameOf(p, d, o, 640, 480, 96)
	img := plotting.Render(p, 640, 480)
	b := d.Box(0)
	px, py := f.ToPixel(Point{b.Min.X + 3, d.Nodes[0].Y})
	r, g, bl, _ := img.At(int(px), int(py)).RGBA()
	tr, tg, tb, _ := speciesTint.RGBA()
	if absDiff(r, tr) > 0x800 || absDiff(g, tg) > 0x800 || absDiff(bl, tb) > 0x800 {
		t.Errorf("pixel (%v, %v) inside A is %x %x %x, want the species tint", px, py, r>>8, g>>8, bl>>8)
	}
	q := f.ToDiagram(x+33, y-7)
	if bx, by := f.ToPixel(q); math.Abs(bx-(x+33)) > 1e-9 || math.Abs(by-(y-7)) > 1e-9 {
		t.Errorf("round trip gives (%v, %v)", bx, by)
	}
	if i := d.NodeAt(Point{d.Nodes[0].X, d.Nodes[0].Y}); i != 0 {
		t.Errorf("NodeAt the centre of A gives %d", i)
	}
}

func absDiff(a, b uint32) uint32 {
	if a > b {
		return a - b
	}
	return b - a
}
