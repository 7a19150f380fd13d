package study

import (
	"bytes"
	"context"
	"testing"

	"kinetarium/examples"
	"kinetarium/network"
	"kinetarium/solve"
	"kinetarium/solve/explore"
)

func loadExample(tb testing.TB, name string) *network.Model {
	tb.Helper()
	b, err := examples.Open(name)
	if err != nil {
		tb.Fatal(err)
	}
	m, err := network.Read(bytes.NewReader(b), name)
	if err != nil {
		tb.Fatal(err)
	}
	return m
}

// BenchmarkWeekOfDoses solves the twice-daily schedule (14 doses, each a
// restart of the method); for comparison, the same model with one dose at
// time 0 only, and with one dose and 13 restarts that change nothing
// (stop times at the other dose times), whose extra time over the single
// dose is the cost of the restarts themselves. It reports steps, events,
// Jacobians and right-hand sides per solve.
func BenchmarkWeekOfDoses(b *testing.B) {
	for _, c := range []struct {
		name     string
		count    int
		restarts bool
	}{{"14doses", 14, false}, {"1dose", 1, false}, {"1dose+13restarts", 1, true}} {
		b.Run(c.name, func(b *testing.B) {
			m := loadExample(b, "twice-daily-oral-dose.json")
			m.Events[0].Count = c.count
			if c.count == 1 {
				m.Events[0].Every = network.Value{}
			}
			p, err := Prepare(m)
			if err != nil {
				b.Fatal(err)
			}
			set := p.Settings
			if c.restarts {
				for k := 1; k < 14; k++ {
					set.StopTimes = append(set.StopTimes, 12*float64(k))
				}
			}
			sv := solve.NewSolver(p.Sys, set)
			y0 := p.Sys.Initial()
			var res *solve.Result
			b.ReportAllocs()
			for b.Loop() {
				res, err = sv.Solve(context.Background(), 0, p.Sim.TEnd, y0)
				if err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(res.Steps), "steps/op")
			b.ReportMetric(float64(len(res.Events)), "events/op")
			b.ReportMetric(float64(res.JacobianEvals), "jacobians/op")
			b.ReportMetric(float64(res.RHSEvals), "rhs/op")
		})
	}
}

// BenchmarkPopulationDoses runs populations of the twice-daily schedule
// with the absorption and clearance constants sampled, with the doses and
// with a single dose, and reports samples per second.
func BenchmarkPopulationDoses(b *testing.B) {
	for _, c := range []struct {
		name  string
		count int
	}{{"14doses", 14}, {"1dose", 1}} {
		b.Run(c.name, func(b *testing.B) {
			m := loadExample(b, "twice-daily-oral-dose.json")
			m.Events[0].Count = c.count
			if c.count == 1 {
				m.Events[0].Every = network.Value{}
			}
			p, err := Prepare(m)
			if err != nil {
				b.Fatal(err)
			}
			const size = 10000
			job, err := p.Population([]Vary{{Knob: "ka", Dist: explore.LogNormal{Median: 0.9, CVPercent: 30}},
				{Knob: "Vmax", Dist: explore.LogNormal{Median: 6, CVPercent: 30}}}, size, 1, explore.LatinHypercube,
				[]ReadoutSpec{{Kind: explore.Max, Species: "D_plasma"}}, nil)
			if err != nil {
				b.Fatal(err)
			}
			for b.Loop() {
				res, err := job.Run(context.Background(), 0, nil)
				if err != nil || len(res.Samples) != size {
					b.Fatalf("%v, %d samples", err, len(res.Samples))
				}
			}
			b.ReportMetric(float64(size*b.N)/b.Elapsed().Seconds(), "samples/s")
		})
	}
}
