package stochastic

import (
	"context"
	"fmt"
	"math/rand/v2"
	"testing"
)

// benchFirings runs net for a run of at least 1e5 firings per iteration
// and reports firings per second and nanoseconds per firing.
func benchFirings(b *testing.B, net *Network, set Settings, tEnd float64) {
	s, err := NewSimulator(net, set)
	if err != nil {
		b.Fatal(err)
	}
	times := []float64{tEnd}
	out := make([]float64, len(net.Species))
	var fired int64
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; b.Loop(); i++ {
		st, err := s.Run(context.Background(), 1, i, 0, times, out, nil, nil)
		if err != nil {
			b.Fatal(err)
		}
		fired += st.Firings
	}
	sec := b.Elapsed().Seconds()
	b.ReportMetric(float64(fired)/sec, "firings/s")
	b.ReportMetric(sec*1e9/float64(fired), "ns/firing")
}

// BenchmarkDimerisation: the 4-species, 6-channel gene–dimer network
// (dimerisation in stochastic_test.go), about 1e5 firings per run.
func BenchmarkDimerisation(b *testing.B) {
	for _, m := range methodCases {
		b.Run(methodName(m), func(b *testing.B) { benchFirings(b, dimerisation(), m, 100) })
	}
}

// randomNetwork has n species and 2n first- and second-order channels
// between random species, with one inflow and decay per species so that
// it settles at a few hundred molecules of each.
func randomNetwork(n int) *Network {
	r := rand.New(rand.NewPCG(3, uint64(n)))
	net := &Network{}
	for i := range n {
		net.Species = append(net.Species, fmt.Sprintf("S%d", i))
		net.Initial = append(net.Initial, 100)
		net.Channels = append(net.Channels,
			Channel{Name: "in", Change: []Term{{i, 1}}, C: 100},
			Channel{Name: "out", Change: []Term{{i, -1}}, Reactants: []Term{{i, 1}}, C: 1})
	}
	for range n {
		a, c := r.IntN(n), r.IntN(n)
		net.Channels = append(net.Channels, Channel{Name: "conv", Change: []Term{{a, -1}, {c, 1}}, Reactants: []Term{{a, 1}}, C: 1})
		a, bb := r.IntN(n), r.IntN(n)
		for bb == a {
			bb = r.IntN(n)
		}
		net.Channels = append(net.Channels, Channel{Name: "bind", Change: []Term{{a, -1}, {bb, -1}, {c, 1}}, Reactants: []Term{{a, 1}, {bb, 1}}, C: 0.001})
	}
	return net
}

// BenchmarkSearch measures the direct method's two searches against the
// number of channels (4 per species), to place TreeThreshold.
func BenchmarkSearch(b *testing.B) {
	for _, n := range []int{2, 4, 8, 16, 32, 64, 256, 1024} {
		net := randomNetwork(n)
		tEnd := 1000.0 / float64(n) // about 2e5 firings
		for _, s := range []Search{SearchLinear, SearchTree} {
			name := map[Search]string{SearchLinear: "linear", SearchTree: "tree"}[s]
			b.Run(fmt.Sprintf("channels=%d/%s", 4*n, name), func(b *testing.B) {
				benchFirings(b, net, Settings{Method: Direct, Search: s}, tEnd)
			})
		}
		b.Run(fmt.Sprintf("channels=%d/next", 4*n), func(b *testing.B) {
			benchFirings(b, net, Settings{Method: NextReaction}, tEnd)
		})
	}
}
