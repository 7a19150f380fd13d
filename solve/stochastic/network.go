// Package stochastic simulates reaction networks in molecule counts:
// Gillespie's direct method with a dependency graph, the next-reaction
// method of Gibson and Bruck with an indexed priority queue, and
// tau-leaping with the step selection of Cao, Gillespie and Petzold, with
// exact steps for critical reactions. Ensembles of runs are summarised on
// an output grid (mean, standard deviation, percentile bands, histograms
// of counts, first-passage times) so that the summaries do not depend on
// the number of workers or on how the runs are split into shards.
//
// A network is given as stoichiometry and propensities: each channel has
// the change it makes to the counts when it fires and either a
// combinatorial mass-action propensity (a constant and the orders of its
// reactants) or a propensity computed by the network's Dynamic part, which
// also applies events to the counts. The package knows nothing of model
// files; the caller converts a model into a Network.
package stochastic

import (
	"fmt"
	"math"
)

// Term is a species index with a whole number: a reactant's order or a
// change of count.
type Term struct {
	Species int
	N       int
}

// Channel is one reaction channel.
type Channel struct {
	Name string
	// Change is the change of the counts each time the channel fires (one
	// term per species that changes; species held fixed have none).
	Change []Term
	// Reactants and C give the combinatorial mass-action propensity
	//
	//	a = C · Π x_i (x_i − 1) … (x_i − N_i + 1)
	//
	// over the reactant terms (Species i, order N_i). No reactants means a
	// constant propensity C.
	Reactants []Term
	C         float64
	// General channels take their propensity from Dynamic.Propensity
	// instead; Reads lists the species whose counts it reads, and
	// TimeDependent says that it reads time (it is then recomputed after
	// every firing, and held constant between firings, an approximation).
	General       bool
	Reads         []int
	TimeDependent bool
}

// Dynamic is the part of a network that is not plain data: propensities of
// general channels, and events. Each simulator gets its own Dynamic (see
// Network.NewDynamic), so implementations need not be safe for concurrent
// use. The counts x are whole numbers held in float64.
type Dynamic interface {
	// Propensity returns the propensity of general channel j at time t and
	// counts x.
	Propensity(j int, t float64, x []float64) float64
	// Constants writes the current constant C of every mass-action channel
	// into c (events may change the parameters behind them).
	Constants(c []float64)
	// ResetEvents is called at the start of every run.
	ResetEvents(t0 float64)
	// NextEvent returns the earliest scheduled event time ≥ t not yet
	// applied, or +Inf.
	NextEvent(t float64) float64
	// Conditions returns the number of triggered events' conditions.
	Conditions() int
	// Watch writes g_k(t, x) for every condition; condition k becomes true
	// when g_k rises from below zero to zero or above.
	Watch(t float64, x, g []float64)
	// Fire applies the scheduled events due at t and the triggered events
	// k with rose[k] (rose is nil when only scheduled ones are due) to the
	// counts x, which must stay whole numbers ≥ 0, and returns the names
	// of those that fired.
	Fire(t float64, x []float64, rose []bool) []string
}

// Network is a reaction network in molecule counts.
type Network struct {
	Species  []string
	Initial  []float64 // initial counts, whole numbers ≥ 0
	Channels []Channel
	// NewDynamic, when not nil, returns a fresh Dynamic for a simulator.
	// It is needed when a channel is General and to apply events.
	NewDynamic func() Dynamic
}

// MaxCount is the largest count the simulators accept: above it float64
// no longer holds every whole number.
const MaxCount = 1 << 53

// Check reports the first structural mistake in net: species indices out
// of range, orders below one, changes of zero, counts that are not whole
// numbers ≥ 0, a general channel without NewDynamic.
func (net *Network) Check() error {
	n := len(net.Species)
	if len(net.Initial) != n {
		return fmt.Errorf("stochastic: %d initial counts for %d species", len(net.Initial), n)
	}
	for i, x := range net.Initial {
		if !(x >= 0) || x != math.Trunc(x) || x > MaxCount {
			return fmt.Errorf("stochastic: species %q: initial count %v is not a whole number in [0, 2^53]", net.Species[i], x)
		}
	}
	for j, ch := range net.Channels {
		name := ch.Name
		if name == "" {
			name = fmt.Sprintf("#%d", j+1)
		}
		for _, t := range ch.Change {
			if t.Species < 0 || t.Species >= n {
				return fmt.Errorf("stochastic: channel %s: changes species %d, out of range [0, %d)", name, t.Species, n)
			}
			if t.N == 0 {
				return fmt.Errorf("stochastic: channel %s: change of species %q is zero", name, net.Species[t.Species])
			}
		}
		if ch.General {
			if net.NewDynamic == nil {
				return fmt.Errorf("stochastic: channel %s is general but the network has no NewDynamic", name)
			}
			for _, s := range ch.Reads {
				if s < 0 || s >= n {
					return fmt.Errorf("stochastic: channel %s: reads species %d, out of range [0, %d)", name, s, n)
				}
			}
			continue
		}
		if !(ch.C >= 0) || math.IsInf(ch.C, 0) {
			return fmt.Errorf("stochastic: channel %s: constant %v is not a finite number ≥ 0", name, ch.C)
		}
		for _, t := range ch.Reactants {
			if t.Species < 0 || t.Species >= n {
				return fmt.Errorf("stochastic: channel %s: reactant species %d out of range [0, %d)", name, t.Species, n)
			}
			if t.N < 1 {
				return fmt.Errorf("stochastic: channel %s: order %d of species %q is below 1", name, t.N, net.Species[t.Species])
			}
		}
	}
	return nil
}

// reads returns the species channel ch's propensity depends on.
func (ch *Channel) reads() []int {
	if ch.General {
		return ch.Reads
	}
	out := make([]int, len(ch.Reactants))
	for i, t := range ch.Reactants {
		out[i] = t.Species
	}
	return out
}

// order returns the order of a mass-action channel (Σ N_i), and 1 for a
// general one that reads any species.
func (ch *Channel) order() int {
	if ch.General {
		if len(ch.Reads) > 0 {
			return 1
		}
		return 0
	}
	o := 0
	for _, t := range ch.Reactants {
		o += t.N
	}
	return o
}
