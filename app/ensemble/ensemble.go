// Package ensemble runs stochastic ensembles of a model without widgets,
// for the window and the batch command alike: it converts the model into
// molecule counts (network.Net.Counts), runs the ensemble
// (solve/stochastic), solves the ODE for comparison (app/run), and lays
// out the tables and figures of the result.
package ensemble

import (
	"context"
	"errors"
	"fmt"
	"math"
	"strings"

	"kinetarium/app/run"
	"kinetarium/network"
	"kinetarium/solve/explore"
	"kinetarium/solve/stochastic"
)

// Spec is what a user asks of an ensemble. The zero value of every field
// means a sensible default.
type Spec struct {
	Runs    int    // default stochastic.DefaultRuns
	Seed    uint64 // the same seed gives the same ensemble
	Method  stochastic.Method
	Workers int
	Shard   explore.Shard
	// HistTimes are times at which the counts of every species are
	// tallied; each is moved to the nearest output time.
	HistTimes []float64
	// Passages are first-passage levels, in molecules.
	Passages []Passage
}

// Passage is a first-passage level of a species, in molecules.
type Passage struct {
	Species string
	Level   float64
}

// Job is a prepared ensemble of a model.
type Job struct {
	Model    *network.Model
	Counts   *network.Counts
	Network  *stochastic.Network
	Settings stochastic.EnsembleSettings
	Spec     Spec
	LogGrid  bool // the output grid is log-spaced
}

// Network converts counts into the stochastic package's network: channels
// with their changes and combinatorial constants, and, when a channel is
// general or the model has events, a network.CountDynamic for each
// simulator.
func Network(c *network.Counts, hasEvents bool) *stochastic.Network {
	net := &stochastic.Network{Species: c.Species, Initial: c.Initial}
	general := false
	for _, ch := range c.Channels {
		sc := stochastic.Channel{Name: ch.Name, C: ch.C, General: ch.General, Reads: ch.Reads, TimeDependent: ch.TimeDependent}
		for _, t := range ch.Change {
			sc.Change = append(sc.Change, stochastic.Term{Species: t.Species, N: t.N})
		}
		for _, t := range ch.Reactants {
			sc.Reactants = append(sc.Reactants, stochastic.Term{Species: t.Species, N: t.N})
		}
		general = general || ch.General
		net.Channels = append(net.Channels, sc)
	}
	if general || hasEvents {
		net.NewDynamic = func() stochastic.Dynamic { return c.NewDynamic() }
	}
	return net
}

// Prepare checks m and spec and prepares the ensemble. Problems of the
// model come as a network.ErrorList; problems of the spec name the
// setting.
func Prepare(m *network.Model, spec Spec) (*Job, error) {
	net, probs := network.Check(m)
	if err := probs.Err(); err != nil {
		return nil, fmt.Errorf("the model cannot be simulated: %w", err)
	}
	c, err := net.Counts()
	if err != nil {
		return nil, fmt.Errorf("the model cannot be run in molecule counts: %w", err)
	}
	method, err := stochastic.ParseMethod(string(spec.Method))
	if err != nil {
		return nil, err
	}
	spec.Method = method
	if spec.Runs == 0 {
		spec.Runs = stochastic.DefaultRuns
	}
	if spec.Runs < 1 {
		return nil, fmt.Errorf("runs: expected a positive number of runs, got %d", spec.Runs)
	}
	sim := m.Simulation.WithDefaults()
	times := network.OutputTimes(sim.TEnd, sim.Output)
	set := stochastic.EnsembleSettings{Runs: spec.Runs, Seed: spec.Seed, Workers: spec.Workers, Shard: spec.Shard,
		Times: times, Sim: stochastic.Settings{Method: method}}
	for k, h := range spec.HistTimes {
		if !(h >= 0) || h > sim.TEnd {
			return nil, fmt.Errorf("histogram time %d: %v is outside the run, [0, %v]", k+1, h, sim.TEnd)
		}
		set.HistTimes = append(set.HistTimes, nearest(times, h))
	}
	for k, p := range spec.Passages {
		i, ok := net.SpeciesIndex(p.Species)
		if !ok {
			return nil, fmt.Errorf("passage %d: no species %q in the model", k+1, p.Species)
		}
		if !(p.Level >= 0) || math.IsInf(p.Level, 0) {
			return nil, fmt.Errorf("passage %d: level %v; expected a number of molecules ≥ 0", k+1, p.Level)
		}
		set.Passages = append(set.Passages, stochastic.Passage{Species: i, Level: p.Level})
	}
	return &Job{Model: m, Counts: c, Network: Network(c, len(net.Events) > 0), Settings: set, Spec: spec,
		LogGrid: sim.Output.Spacing == "log"}, nil
}

// nearest returns the index of the time nearest t.
func nearest(times []float64, t float64) int {
	best := 0
	for i, x := range times {
		if math.Abs(x-t) < math.Abs(times[best]-t) {
			best = i
		}
	}
	return best
}

// Run runs the ensemble; progress, when not nil, gets the fraction done.
func (j *Job) Run(ctx context.Context, progress func(float64)) (*stochastic.Ensemble, error) {
	set := j.Settings
	set.Progress = progress
	return stochastic.RunEnsemble(ctx, j.Network, set)
}

// ODE solves the model's ODE and returns its species in molecules
// (concentration × Ω) on the ensemble's output grid, row by time.
func (j *Job) ODE(ctx context.Context) ([][]float64, error) {
	o, err := run.Run(ctx, j.Model, nil)
	if err != nil {
		return nil, err
	}
	if len(o.T) != len(j.Settings.Times) {
		return nil, errors.New("the ODE solution has another output grid")
	}
	out := make([][]float64, len(o.T))
	for i := range o.T {
		out[i] = make([]float64, o.Species)
		for s := range o.Species {
			out[i][s] = o.Y[i][s] * j.Counts.Omega[s]
		}
	}
	return out, nil
}

// Notes says, in sentences for people, how the counts were obtained and
// which results are approximations: the molecules per amount, rounded
// initial counts, non-elementary rate laws, the leaping method.
func (j *Job) Notes() []string {
	c := j.Counts
	notes := []string{"Counts from concentrations: " + c.HowFound + "."}
	if len(c.Rounded) > 0 {
		notes = append(notes, fmt.Sprintf("Initial counts rounded to whole molecules: %s.", strings.Join(c.Rounded, ", ")))
	}
	if len(c.Approximate) > 0 {
		notes = append(notes, fmt.Sprintf("Approximation: %s %s not mass action; their propensity is rate × volume × molecules per amount, which holds only when those rates do not hinge on single molecules (Michaelis–Menten and other lumped laws assume fast steps that the stochastic run does not resolve).",
			strings.Join(c.Approximate, ", "), plural(len(c.Approximate), "is", "are")))
	}
	if j.Spec.Method == stochastic.TauLeap {
		notes = append(notes, "Tau-leaping is approximate: it fires Poisson numbers of reactions per leap (Cao, Gillespie and Petzold 2006, ε = 0.03); use the direct method for exact runs.")
	}
	return notes
}

func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}
