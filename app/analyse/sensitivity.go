package analyse

import (
	"context"
	"fmt"
	"math"
	"strings"
	"time"

	"kinetarium/app/study"
	"kinetarium/plotting"
	"kinetarium/solve/explore"
)

// The global sensitivity methods.
const (
	Sobol  = "sobol"  // variance-based indices (Saltelli sampling, Jansen estimators)
	Morris = "morris" // elementary effects (screening)
)

// SensitivityOptions describe a global sensitivity analysis. The zero
// value of every field but Vary and Readouts means a sensible default.
type SensitivityOptions struct {
	Method string // Sobol (default) or Morris
	Vary   []study.Vary
	// Samples is N, the base sample size, for Sobol (default 1024; the
	// runs number N·(knobs+2)), or the number of paths for Morris
	// (default 20; runs: paths·(knobs+1)).
	Samples int
	Levels  int // Morris: levels per knob (even; default 4)
	Seed    uint64
	// Bootstrap resamples and the intervals' Level for Sobol (defaults
	// 1000 and 0.95).
	Bootstrap int
	Level     float64
	Readouts  []study.ReadoutSpec
	Workers   int
	Progress  func(float64)
}

// Sensitivity holds the indices of every readout for every knob.
type Sensitivity struct {
	Method   string
	Knobs    []string
	Readouts []string
	Level    float64
	// Indices[r][k] (Sobol) or Effects[r][k] (Morris): readout r, knob k.
	Indices [][]explore.SobolIndex
	Effects [][]explore.Effect
	// Runs and Failed count the simulations; Dropped[r] the base samples
	// or moves left out of readout r because a run failed or the readout
	// was undefined.
	Runs, Failed int
	Dropped      []int
	// ReadoutUnits, set when the model chooses display units, name the
	// unit each readout is shown in; Morris effects (μ*, μ, σ) are then in
	// it. Sobol indices are pure numbers and never change.
	ReadoutUnits []string
	// Notes name readouts whose indices are undefined, and why.
	Notes []string
	Wall  time.Duration
}

// GlobalSensitivity runs the design on the population runner (every
// core, the same results for any number of workers) and estimates the
// indices.
func GlobalSensitivity(ctx context.Context, p *study.Prepared, o SensitivityOptions) (*Sensitivity, error) {
	start := time.Now()
	if o.Method == "" {
		o.Method = Sobol
	}
	if o.Method != Sobol && o.Method != Morris {
		return nil, fmt.Errorf("method: expected %q or %q, got %q", Sobol, Morris, o.Method)
	}
	if len(o.Readouts) == 0 {
		return nil, fmt.Errorf("readouts: give at least one readout to analyse")
	}
	// Resolve knobs and readouts as a population does; the design is
	// replaced below.
	j, err := p.Population(o.Vary, 1, o.Seed, explore.Random, o.Readouts, nil)
	if err != nil {
		return nil, err
	}
	var dists []explore.Distribution
	for _, v := range o.Vary {
		dists = append(dists, v.Dist)
	}
	d := len(dists)
	var steps [][]explore.MorrisStep
	switch o.Method {
	case Sobol:
		if o.Samples == 0 {
			o.Samples = 1024
		}
		pts, err := explore.Saltelli{Vary: dists, N: o.Samples, Seed: o.Seed}.Sample()
		if err != nil {
			return nil, err
		}
		j.Design = pts
	case Morris:
		pts, st, err := explore.Morris{Vary: dists, Trajectories: o.Samples, Levels: o.Levels, Seed: o.Seed}.Sample()
		if err != nil {
			return nil, err
		}
		j.Design, steps = pts, st
	}
	res, err := j.Run(ctx, o.Workers, o.Progress)
	if err != nil {
		return nil, err
	}
	s := &Sensitivity{Method: o.Method, Knobs: res.Knobs, Readouts: res.Readouts, Runs: res.Points, Failed: res.Failed}
	if res.Points > 0 && res.Failed == res.Points {
		return s, fmt.Errorf("all %d runs failed; the first: %s", res.Failed, res.Failures[0].Err)
	}
	fig := j.Figures()
	if j.Shown != nil {
		for r := range res.Readouts {
			s.ReadoutUnits = append(s.ReadoutUnits, fig.ReadoutUnit(r))
		}
	}
	for r := range res.Readouts {
		y := res.Values(r)
		switch o.Method {
		case Sobol:
			idx, dropped, err := explore.SobolIndices(y, o.Samples, d, explore.IndexSettings{Bootstrap: o.Bootstrap, Level: o.Level, Seed: o.Seed})
			if err != nil {
				// The other readouts still have their indices.
				s.Notes = append(s.Notes, fmt.Sprintf("%s: %v", res.Readouts[r], strings.TrimPrefix(err.Error(), "sensitivity: ")))
				idx = make([]explore.SobolIndex, d)
				for k := range idx {
					idx[k] = explore.SobolIndex{First: math.NaN(), FirstLow: math.NaN(), FirstHigh: math.NaN(), Total: math.NaN(), TotalLow: math.NaN(), TotalHigh: math.NaN()}
				}
			}
			s.Indices = append(s.Indices, idx)
			s.Dropped = append(s.Dropped, dropped)
		case Morris:
			if j.Shown != nil {
				y = fig.Values(res, r) // effects in the readout's shown unit
			}
			eff, err := explore.ElementaryEffects(y, steps, d)
			if err != nil {
				return s, err
			}
			n := 0
			for _, e := range eff {
				n += len(steps) - e.N
			}
			s.Effects = append(s.Effects, eff)
			s.Dropped = append(s.Dropped, n)
		}
	}
	s.Level = o.Level
	if s.Level <= 0 || s.Level >= 1 {
		s.Level = 0.95
	}
	s.Wall = time.Since(start)
	return s, nil
}

// IndexRows lays out Sobol indices as indices.csv:
// readout,target,first,first_low,first_high,total,total_low,total_high.
func IndexRows(s *Sensitivity) [][]string {
	rows := [][]string{{"readout", "target", "first", "first_low", "first_high", "total", "total_low", "total_high"}}
	for r, name := range s.Readouts {
		if r >= len(s.Indices) {
			break
		}
		for k, x := range s.Indices[r] {
			rows = append(rows, []string{name, s.Knobs[k], num(x.First), num(x.FirstLow), num(x.FirstHigh), num(x.Total), num(x.TotalLow), num(x.TotalHigh)})
		}
	}
	return rows
}

// EffectRows lays out Morris effects as morris.csv:
// readout,target,mu_star,mu,sigma,effects. With display units the readout
// column names the unit the effects are in ("cmax (nM)").
func EffectRows(s *Sensitivity) [][]string {
	rows := [][]string{{"readout", "target", "mu_star", "mu", "sigma", "effects"}}
	for r, name := range s.Readouts {
		if r >= len(s.Effects) {
			break
		}
		if u := s.ReadoutUnit(r); u != "" {
			name += " (" + u + ")"
		}
		for k, e := range s.Effects[r] {
			rows = append(rows, []string{name, s.Knobs[k], num(e.MuStar), num(e.Mu), num(e.Sigma), fmt.Sprint(e.N)})
		}
	}
	return rows
}

// ReadoutUnit returns the unit readout r is shown in: "" without display
// units or when none is known.
func (s *Sensitivity) ReadoutUnit(r int) string {
	if r < len(s.ReadoutUnits) {
		return s.ReadoutUnits[r]
	}
	return ""
}

// IndexIntervals returns readout r's first-order and total indices for
// plotting.IndexBars.
func IndexIntervals(s *Sensitivity, r int) (first, total []plotting.Interval) {
	for _, x := range s.Indices[r] {
		first = append(first, plotting.Interval{Value: x.First, Low: x.FirstLow, High: x.FirstHigh})
		total = append(total, plotting.Interval{Value: x.Total, Low: x.TotalLow, High: x.TotalHigh})
	}
	return first, total
}
