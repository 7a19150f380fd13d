package main

// The population subcommand.

import (
	"encoding/json"
	"fmt"
	"io"
	"path/filepath"
	"slices"

	"kinetarium/solve/explore"
)

// PopulationFormat is the format tag of a population spec.
const PopulationFormat = "kinetarium.population/1"

// populationSpec is a population spec file:
//
//	{"format": "kinetarium.population/1",
//	 "model": "model.json",
//	 "samples": 1000, "seed": 7, "sampling": "latin_hypercube",
//	 "vary": [{"target": "CL", "distribution": "lognormal", "median": 2, "cv_percent": 30}, ...],
//	 "readouts": [{"name": "cmax", "kind": "max", "species": "C"}, ...],
//	 "bands": {"species": ["C"]},            (optional)
//	 "simulation": {"t_end": 24, "points": 97}}   (optional)
type populationSpec struct {
	Format     string          `json:"format"`
	Model      string          `json:"model"`
	Samples    int             `json:"samples"`
	Seed       *uint64         `json:"seed"`
	Sampling   string          `json:"sampling"`
	Vary       json.RawMessage `json:"vary"`
	Readouts   json.RawMessage `json:"readouts"`
	Bands      json.RawMessage `json:"bands"`
	Simulation json.RawMessage `json:"simulation"`
}

// varySpec is one varied knob and its distribution. Which fields are used
// depends on the distribution:
//
//	lognormal:  median, cv_percent
//	normal:     mean, sd (truncated at zero: only positive values)
//	uniform:    low, high
//	loguniform: low, high
type varySpec struct {
	Target       string   `json:"target"`
	Distribution string   `json:"distribution"`
	Median       *float64 `json:"median"`
	CVPercent    *float64 `json:"cv_percent"`
	Mean         *float64 `json:"mean"`
	SD           *float64 `json:"sd"`
	Low          *float64 `json:"low"`
	High         *float64 `json:"high"`
}

// distribution returns the explore distribution of v; path names v in
// errors.
func (v varySpec) distribution(path string) (explore.Distribution, error) {
	given := map[string]bool{
		"median": v.Median != nil, "cv_percent": v.CVPercent != nil, "mean": v.Mean != nil,
		"sd": v.SD != nil, "low": v.Low != nil, "high": v.High != nil,
	}
	need := func(keys ...string) error {
		for _, k := range keys {
			if !given[k] {
				return fmt.Errorf("%s.%s: missing (a %s distribution needs %v)", path, k, v.Distribution, keys)
			}
			delete(given, k)
		}
		for k, ok := range given {
			if ok {
				return fmt.Errorf("%s.%s: not used by a %s distribution (it takes %v)", path, k, v.Distribution, keys)
			}
		}
		return nil
	}
	var d explore.Distribution
	var err error
	switch v.Distribution {
	case "lognormal":
		if err = need("median", "cv_percent"); err == nil {
			d = explore.LogNormal{Median: *v.Median, CVPercent: *v.CVPercent}
		}
	case "normal":
		if err = need("mean", "sd"); err == nil {
			d = explore.TruncNormal{Mean: *v.Mean, SD: *v.SD}
		}
	case "uniform":
		if err = need("low", "high"); err == nil {
			d = explore.Uniform{Low: *v.Low, High: *v.High}
		}
	case "loguniform":
		if err = need("low", "high"); err == nil {
			d = explore.LogUniform{Low: *v.Low, High: *v.High}
		}
	default:
		return nil, fmt.Errorf("%s.distribution: expected lognormal, normal, uniform or loguniform, got %q", path, v.Distribution)
	}
	if err != nil {
		return nil, err
	}
	if err := d.Validate(); err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return d, nil
}

// runPopulation is the population subcommand.
func runPopulation(args []string, stdout, stderr io.Writer) int {
	c, job, err := populationJob(args, stderr)
	if err != nil {
		return exitStatus("population", badInput(err), stderr)
	}
	return exitStatus("population", job.run(c, stdout, stderr), stderr)
}

// populationJob reads the command line and the spec of a population.
func populationJob(args []string, stderr io.Writer) (*cmdFlags, *job, error) {
	c, err := parseCmd("population", args, stderr)
	if err != nil {
		return nil, nil, err
	}
	var spec populationSpec
	if err := readSpec(c.spec, PopulationFormat, &spec); err != nil {
		return nil, nil, err
	}
	switch {
	case spec.Samples < 1:
		return nil, nil, fmt.Errorf("%s: samples: expected a positive number of samples, got %d", c.spec, spec.Samples)
	case spec.Seed == nil:
		return nil, nil, fmt.Errorf("%s: seed: missing (a whole number ≥ 0; the same seed gives the same population)", c.spec)
	case spec.Sampling != "" && spec.Sampling != string(explore.Random) && spec.Sampling != string(explore.LatinHypercube):
		return nil, nil, fmt.Errorf("%s: sampling: expected %q or %q, got %q", c.spec, explore.Random, explore.LatinHypercube, spec.Sampling)
	case len(spec.Vary) == 0:
		return nil, nil, fmt.Errorf("%s: vary: missing (the knobs to vary and their distributions)", c.spec)
	}
	l, err := loadModel(c.spec, spec.Model, spec.Simulation)
	if err != nil {
		return nil, nil, err
	}
	var items []json.RawMessage
	if err := strict(spec.Vary, &items, "vary"); err != nil {
		return nil, nil, fmt.Errorf("%s: %w", c.spec, err)
	}
	if len(items) == 0 {
		return nil, nil, fmt.Errorf("%s: vary: empty; give at least one knob", c.spec)
	}
	var (
		knobs, paths []string
		dists        []explore.Distribution
	)
	for i, it := range items {
		path := fmt.Sprintf("vary[%d]", i)
		var v varySpec
		if err := strict(it, &v, path); err != nil {
			return nil, nil, fmt.Errorf("%s: %w", c.spec, err)
		}
		if v.Target == "" {
			return nil, nil, fmt.Errorf("%s: %s.target: missing (a parameter name, init:SPECIES or volume:COMPARTMENT)", c.spec, path)
		}
		if slices.Contains(knobs, v.Target) {
			return nil, nil, fmt.Errorf("%s: %s.target: %q is varied twice", c.spec, path, v.Target)
		}
		d, err := v.distribution(path)
		if err != nil {
			return nil, nil, fmt.Errorf("%s: %w", c.spec, err)
		}
		knobs, paths, dists = append(knobs, v.Target), append(paths, path+".target"), append(dists, d)
	}
	tg, err := newTarget(c.spec, l.Sys, knobs, paths)
	if err != nil {
		return nil, nil, err
	}
	ro, err := readouts(l, c.spec, spec.Readouts)
	if err != nil {
		return nil, nil, err
	}
	var bands *explore.Bands
	var bandSp []string
	if len(spec.Bands) > 0 && string(spec.Bands) != "null" {
		var b struct {
			Species []string `json:"species"`
		}
		if err := strict(spec.Bands, &b, "bands"); err != nil {
			return nil, nil, fmt.Errorf("%s: %w", c.spec, err)
		}
		var comps []int
		for i, sp := range b.Species {
			j, ok := l.Sys.SpeciesIndex(sp)
			if !ok {
				return nil, nil, fmt.Errorf("%s: bands.species[%d]: no species %q in the model", c.spec, i, sp)
			}
			comps = append(comps, j)
		}
		bandSp = b.Species
		bands = explore.NewBands(comps, l.Times)
	}
	pts, err := explore.Population{Vary: dists, Size: spec.Samples, Seed: *spec.Seed, Sampling: explore.Sampling(spec.Sampling)}.Sample()
	if err != nil {
		return nil, nil, fmt.Errorf("%s: %w", c.spec, err)
	}
	meta := &runMeta{
		Kind: "population", Spec: filepath.Base(c.spec), Title: l.Model.Title,
		TimeUnit: l.Model.Units.Time, AmountUnit: l.Model.Units.Amount,
		Knobs: knobs, Species: l.Sys.Species(), BandSpecies: bandSp, LogTime: l.Sim.Output.Spacing == "log",
	}
	for _, r := range ro {
		meta.ReadoutSpecies = append(meta.ReadoutSpecies, l.Sys.Species()[r.Component])
	}
	return c, &job{
		meta:     meta,
		design:   pts,
		ode:      &explore.ODE{Target: tg, TEnd: l.Sim.TEnd, Settings: l.Settings},
		settings: explore.Settings{Knobs: knobs, Readouts: ro, Bands: bands},
	}, nil
}
