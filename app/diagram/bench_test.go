package diagram

import (
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"testing"

	"kinetarium/network"
	pd "kinetarium/plotting/diagram"
)

// generated is the generated network of the work-precision report
// (internal/workprecision): modules of four species, A binding B to C, C
// turning over to D and releasing B, D feeding the next module's A and
// decaying. 50 modules make 200 species.
func generated(modules int) *network.Model {
	m := &network.Model{Title: "generated network"}
	k := network.NewRate(network.MassAction, "k", 1.0)
	kr := network.NewRate(network.MassAction, "k", 1.0, "k_reverse", 1.0)
	for i := 0; i < modules; i++ {
		for _, s := range "ABCD" {
			init := 0.0
			if s == 'B' || s == 'A' && i == 0 {
				init = 1
			}
			m.Species = append(m.Species, network.Species{Name: fmt.Sprintf("%c%d", s, i), Initial: init})
		}
		r := func(eq string, rate network.Rate) {
			m.Reactions = append(m.Reactions, network.Reaction{Name: fmt.Sprintf("r%d", len(m.Reactions)), Equation: eq, Rate: rate})
		}
		r(fmt.Sprintf("A%d + B%d <=> C%d", i, i, i), kr)
		r(fmt.Sprintf("C%d -> D%d + B%d", i, i, i), k)
		if i+1 < modules {
			r(fmt.Sprintf("D%d -> A%d", i, i+1), k)
		}
		r(fmt.Sprintf("D%d ->", i), k)
	}
	m.Reactions = append(m.Reactions, network.Reaction{Name: "feed", Equation: "-> A0", Rate: k})
	return m
}

// tangled is a network with no main direction: n species, each reaction
// turning one or two random species into one or two others, from a fixed
// random stream.
func tangled(n, reactions int) *network.Model {
	rng := rand.New(rand.NewPCG(15, 200))
	m := &network.Model{Title: "tangled network"}
	for i := 0; i < n; i++ {
		m.Species = append(m.Species, network.Species{Name: fmt.Sprintf("S%d", i), Initial: float64(i % 2)})
	}
	side := func() string {
		a := fmt.Sprintf("S%d", rng.IntN(n))
		if rng.IntN(2) == 0 {
			return a
		}
		b := fmt.Sprintf("S%d", rng.IntN(n))
		if b == a {
			return "2 " + a
		}
		return a + " + " + b
	}
	for j := 0; j < reactions; j++ {
		m.Reactions = append(m.Reactions, network.Reaction{Name: fmt.Sprintf("v%d", j), Equation: side() + " -> " + side(),
			Rate: network.NewRate(network.MassAction, "k", 1.0)})
	}
	return m
}

// The large networks are laid out without overlaps too.
func TestLargeNetworksDoNotOverlap(t *testing.T) {
	for _, m := range []*network.Model{generated(50), tangled(200, 300)} {
		d, st := laidOut(t, m)
		if len(m.Species) != 200 {
			t.Fatalf("%s has %d species", m.Title, len(m.Species))
		}
		for _, o := range overlaps(d) {
			t.Errorf("%s (%s): %s overlap", m.Title, st.Method, o)
		}
		t.Logf("%s: %s, %d nodes, %d crossings, feedback %.2f", m.Title, st.Method, len(d.Nodes), st.Crossings, st.Feedback)
	}
}

func benchLayout(b *testing.B, m *network.Model) {
	net, _ := network.Check(m)
	var st pd.Stats
	for b.Loop() {
		d := Build(net)
		st = Arrange(d)
	}
	b.ReportMetric(float64(st.Crossings), "crossings")
	b.Logf("%s: %s", m.Title, st.Method)
}

// Targets (issue 15): the 50-species example under 200 ms, the
// 200-species generated network under 2 s.
func BenchmarkLayoutCascade50(b *testing.B) {
	benchLayout(b, loadExample(b, "signalling-cascade-50.json"))
}
func BenchmarkLayoutGenerated200(b *testing.B) { benchLayout(b, generated(50)) }
func BenchmarkLayoutTangled200(b *testing.B)   { benchLayout(b, tangled(200, 300)) }

func TestDrawLarge(t *testing.T) {
	dir := os.Getenv("DIAGRAM_OUT")
	if dir == "" {
		t.Skip("DIAGRAM_OUT not set")
	}
	for i, m := range []*network.Model{generated(50), tangled(200, 300), loadExample(t, "signalling-cascade-50.json")} {
		d, _ := laidOut(t, m)
		b := d.Bounds()
		if err := saveFigure(pd.Plot(d, pd.Options{}), filepath.Join(dir, fmt.Sprintf("large-%d.png", i)), (b.Max.X-b.Min.X)/2, (b.Max.Y-b.Min.Y)/2); err != nil {
			t.Fatal(err)
		}
	}
}
