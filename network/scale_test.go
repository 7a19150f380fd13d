package network_test

import (
	"bytes"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"runtime"
	"testing"

	"kinetarium/internal/gennet"
	"kinetarium/network"
)

// allocated returns the bytes f allocates on the heap.
func allocated(f func()) uint64 {
	var a, b runtime.MemStats
	runtime.GC()
	runtime.ReadMemStats(&a)
	f()
	runtime.ReadMemStats(&b)
	return b.TotalAlloc - a.TotalAlloc
}

// pipeline reads the model file, checks, compiles and finds the
// conservation laws, as the stages of a run do, and writes the model
// again, as the provenance of a result does (into its hash).
func pipeline(tb testing.TB, data []byte, laws func(*network.Net) []network.ConservationLaw) func() {
	return func() {
		m, err := network.Read(bytes.NewReader(data), "gen.json")
		if err != nil {
			tb.Fatal(err)
		}
		net, probs := network.Check(m)
		if err := probs.Err(); err != nil {
			tb.Fatal(err)
		}
		if _, err := net.Compile(); err != nil {
			tb.Fatal(err)
		}
		if len(laws(net)) == 0 {
			tb.Fatal("no conservation laws")
		}
		if err := m.Write(io.Discard); err != nil {
			tb.Fatal(err)
		}
	}
}

// perSpecies returns the bytes per species that reading, checking,
// compiling, the conservation laws and writing of gen(n) allocate.
func perSpecies(tb testing.TB, gen func(int) *network.Model, n int, laws func(*network.Net) []network.ConservationLaw) float64 {
	data := modelFile(tb, gen(n))
	return float64(allocated(pipeline(tb, data, laws))) / float64(n)
}

// The work of the stages before the solve grows linearly with the size of
// the network: the bytes allocated per species at 8,000 species are within
// a factor 1.5 of those at 2,000 (work counted, not timed; a quadratic
// step would make the ratio about 4, and an n·log n one about 1.2 — the
// bound leaves room for the growth of maps and lists). The dense method of
// conservation laws, on smaller networks, breaks the bound: the check can
// fail.
func TestStagesScaleLinearly(t *testing.T) {
	laws := (*network.Net).ConservationLaws
	for _, fam := range []struct {
		name string
		gen  func(int) *network.Model
	}{{"cascade", gennet.Cascade}, {"feedback", gennet.Feedback}} {
		small, large := perSpecies(t, fam.gen, 2000, laws), perSpecies(t, fam.gen, 8000, laws)
		t.Logf("%s: %.0f bytes per species at 2,000, %.0f at 8,000", fam.name, small, large)
		if large > 1.5*small {
			t.Errorf("%s: %.0f bytes per species at 8,000 species against %.0f at 2,000 (ratio %.2f, bound 1.5): the stages before the solve no longer grow linearly",
				fam.name, large, small, large/small)
		}
	}
	small, large := perSpecies(t, gennet.Cascade, 100, network.DenseConservationLaws), perSpecies(t, gennet.Cascade, 400, network.DenseConservationLaws)
	if large <= 1.5*small {
		t.Errorf("the dense method allocates %.0f bytes per species at 400 species and %.0f at 100: the bound would not catch quadratic work", large, small)
	}
}

// The generated cascade keeps one total per module: B binds A into C and
// is released when C turns into D, so B + C is conserved in each module
// (moiety conservation, common practice), and nothing else is (A, D are
// made and removed). At 20,000 species: 5,000 laws, each "Bi + Ci =
// constant", each unchanged by the right-hand side at random states.
func TestCascadeConservation(t *testing.T) {
	const n = 20000
	m := gennet.Cascade(n)
	net, probs := network.Check(m)
	if err := probs.Err(); err != nil {
		t.Fatal(err)
	}
	laws := net.ConservationLaws()
	if len(laws) != n/4 {
		t.Fatalf("%d laws, want %d (one per module)", len(laws), n/4)
	}
	for i, l := range laws {
		if want := fmt.Sprintf("B%d + C%d = constant", i, i); l.Text != want {
			t.Fatalf("law %d is %q, want %q", i, l.Text, want)
		}
	}
	sys, err := net.Compile()
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(1, 2))
	y, f := make([]float64, sys.Dim()), make([]float64, sys.Dim())
	for k := 0; k < 3; k++ {
		for i := range y {
			y[i] = rng.Float64()
		}
		sys.RHS(0, y, f)
		for _, l := range laws {
			sum, scale := 0.0, 0.0
			for _, tm := range l.Terms {
				sum += float64(tm.Weight) * f[tm.Species]
				scale += math.Abs(float64(tm.Weight) * f[tm.Species])
			}
			if math.Abs(sum) > 1e-12*(1+scale) {
				t.Fatalf("law %q changes at rate %g", l.Text, sum)
			}
		}
	}
}

// The modifiers of every reaction (the diagram's arrows) cost the same per
// reaction at 8,000 species as at 2,000 (bytes allocated within a factor
// 1.5, as in TestStagesScaleLinearly; the earlier pass over every species
// and assignment for each reaction made this quadratic). In the feedback
// network, the product D of module i is the enzyme of the return in an
// earlier module for odd i (∂rate/∂D > 0: activates) and represses it for
// even i (∂/∂D of k·X/(1 + (D/K)²) < 0: inhibits).
func TestModifiersScaleLinearly(t *testing.T) {
	perReaction := func(n int) float64 {
		net, _ := network.Check(gennet.Feedback(n))
		var count int
		b := allocated(func() {
			for i := range net.Reactions {
				ms := net.Modifiers(i)
				r := net.Reactions[i]
				var k int
				if _, err := fmt.Sscanf(r.Name, "fb%d", &k); err != nil {
					continue
				}
				want := network.Inhibits
				if k%2 == 1 {
					want = network.Activates
				}
				if len(ms) != 1 || ms[0].Species != fmt.Sprintf("D%d", k) || ms[0].Effect != want {
					t.Fatalf("reaction %s: modifiers %+v, want D%d %v", r.Name, ms, k, want)
				}
				count++
			}
		})
		if count != n/4-1 {
			t.Fatalf("%d feedback reactions in %d species, want %d", count, n, n/4-1)
		}
		return float64(b) / float64(len(net.Reactions))
	}
	small, large := perReaction(2000), perReaction(8000)
	t.Logf("%.0f bytes per reaction at 2,000 species, %.0f at 8,000", small, large)
	if large > 1.5*small {
		t.Errorf("modifiers: %.0f bytes per reaction at 8,000 species against %.0f at 2,000 (bound 1.5)", large, small)
	}
}
