package analyse

import (
	"bytes"
	"context"
	"testing"

	"kinetarium/app/study"
	"kinetarium/examples"
	"kinetarium/network"
	"kinetarium/solve/explore"
)

func exampleModel(b *testing.B, name string) *network.Model {
	data, err := examples.Open(name)
	if err != nil {
		b.Fatal(err)
	}
	m, err := network.Read(bytes.NewReader(data), name)
	if err != nil {
		b.Fatal(err)
	}
	return m
}

// Continuation of the 50-species cascade (its reporter made clearable,
// see withClearableReporter) in its held ligand across two decades,
// 0.01 to 1: total time, points, and time per point.
func BenchmarkContinuation50(b *testing.B) {
	m, err := Prepare(withClearableReporter(b, exampleModel(b, "signalling-cascade-50.json")))
	if err != nil {
		b.Fatal(err)
	}
	var d *Diagram
	for b.Loop() {
		d, err = m.Continue(context.Background(), ContinueOptions{Knob: "init:L", From: 0.01, To: 1, MaxPoints: 2000})
		if err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(len(d.Points)), "points")
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(len(d.Points)), "ns/point")
}

// Global sensitivity of the 20-species cascade to 5 parameters at
// N = 4,096 (28,672 runs), against a population of as many runs on the
// same runner: runs per second of each.
func BenchmarkSensitivity20(b *testing.B) {
	p, err := study.Prepare(exampleModel(b, "signalling-cascade-20.json"))
	if err != nil {
		b.Fatal(err)
	}
	var vary []study.Vary
	for _, k := range []string{"kcat1", "kon2", "kcat2", "kcat3", "vtx"} {
		i, _ := p.Sys.ParameterIndex(k)
		vary = append(vary, study.Vary{Knob: k, Dist: explore.LogNormal{Median: p.Sys.Parameter(i), CVPercent: 30}})
	}
	ro := []study.ReadoutSpec{{Name: "Rep_final", Kind: explore.Final, Species: "Rep"}, {Name: "K3p_max", Kind: explore.Max, Species: "K3p"}}
	const n = 4096
	runs := n * (len(vary) + 2)
	b.Run("saltelli", func(b *testing.B) {
		for b.Loop() {
			s, err := GlobalSensitivity(context.Background(), p, SensitivityOptions{Vary: vary, Samples: n, Seed: 1, Readouts: ro})
			if err != nil || s.Failed > 0 {
				b.Fatal(err, s.Failed)
			}
		}
		b.ReportMetric(float64(runs)*float64(b.N)/b.Elapsed().Seconds(), "runs/s")
	})
	b.Run("population", func(b *testing.B) {
		j, err := p.Population(vary, runs, 1, explore.Random, ro, nil)
		if err != nil {
			b.Fatal(err)
		}
		for b.Loop() {
			if _, err := j.Run(context.Background(), 0, nil); err != nil {
				b.Fatal(err)
			}
		}
		b.ReportMetric(float64(runs)*float64(b.N)/b.Elapsed().Seconds(), "runs/s")
	})
}
