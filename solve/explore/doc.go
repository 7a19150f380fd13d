// Package explore runs one model many times: parameter sweeps over a grid,
// virtual populations drawn from distributions, and scalar readouts and
// percentile bands of the resulting trajectories.
//
// The package is generic. It varies numbered inputs ("knobs") of a model
// through a Simulator, which computes one trajectory for one set of knob
// values; ODE adapts any solve.System that can set its knobs and be cloned.
// What a knob means (a rate constant, an initial amount, a volume) is the
// caller's business.
//
// A run is reproducible: the knob values of design point i depend only on the
// design (for a population: the distributions, the sample size, the sampling
// method and the random seed), never on the number of workers or on the
// shard, and every summary is accumulated in an order-independent way. So a
// run split into shards and merged with Merge is bit for bit the same as the
// run done at once, with any number of workers.
package explore
