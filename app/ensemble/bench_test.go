package ensemble

import (
	"context"
	"testing"

	"kinetarium/internal/gennet"
	"kinetarium/network"
	"kinetarium/solve/stochastic"
)

// BenchmarkGenerated200 runs the 200-species generated network of the
// work-precision report (internal/gennet, 50 modules) in counts, with 1,000
// molecules per amount unit × volume unit, for each method, and reports
// firings per second.
func BenchmarkGenerated200(b *testing.B) {
	m := gennet.Signalling(50)
	m.Units.MoleculesPerAmount = 1000
	net, probs := network.Check(m)
	if err := probs.Err(); err != nil {
		b.Fatal(err)
	}
	c, err := net.Counts()
	if err != nil {
		b.Fatal(err)
	}
	sn := Network(c, false)
	for _, set := range []stochastic.Settings{
		{Method: stochastic.Direct, Search: stochastic.SearchLinear},
		{Method: stochastic.Direct, Search: stochastic.SearchTree},
		{Method: stochastic.NextReaction},
		{Method: stochastic.TauLeap},
	} {
		name := string(set.Method)
		if set.Method == stochastic.Direct {
			name += map[stochastic.Search]string{stochastic.SearchLinear: "-linear", stochastic.SearchTree: "-tree"}[set.Search]
		}
		b.Run(name, func(b *testing.B) {
			s, err := stochastic.NewSimulator(sn, set)
			if err != nil {
				b.Fatal(err)
			}
			times := []float64{1}
			out := make([]float64, len(sn.Species))
			var fired int64
			b.ReportAllocs()
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
			b.ReportMetric(float64(fired)/float64(b.N), "firings/run")
		})
	}
}
