package main

// The population subcommand.

import (
	"encoding/json"
	"fmt"
	"io"
	"path/filepath"

	"kinetarium/app/study"
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
	d, err := study.LookupDistribution(v.Distribution)
	if err != nil {
		return nil, fmt.Errorf("%s.distribution: %w", path, err)
	}
	given := map[string]*float64{
		"median": v.Median, "cv_percent": v.CVPercent, "mean": v.Mean,
		"sd": v.SD, "low": v.Low, "high": v.High,
	}
	for _, k := range []string{d.A, d.B} {
		if given[k] == nil {
			return nil, fmt.Errorf("%s.%s: missing (a %s distribution needs %s and %s)", path, k, d.Name, d.A, d.B)
		}
	}
	for _, k := range []string{"median", "cv_percent", "mean", "sd", "low", "high"} {
		if given[k] != nil && k != d.A && k != d.B {
			return nil, fmt.Errorf("%s.%s: not used by a %s distribution (it takes %s and %s)", path, k, d.Name, d.A, d.B)
		}
	}
	x, err := d.Make(*given[d.A], *given[d.B])
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return x, nil
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
	specData, err := readSpecData(c.spec, PopulationFormat, &spec)
	if err != nil {
		return nil, nil, err
	}
	switch {
	case spec.Samples < 1 || spec.Samples > study.MaxSamples:
		return nil, nil, fmt.Errorf("%s: samples: expected from 1 to %d samples, got %d", c.spec, study.MaxSamples, spec.Samples)
	case spec.Seed == nil:
		return nil, nil, fmt.Errorf("%s: seed: missing (a whole number ≥ 0; the same seed gives the same population)", c.spec)
	case spec.Sampling != "" && spec.Sampling != string(explore.Random) && spec.Sampling != string(explore.LatinHypercube):
		return nil, nil, fmt.Errorf("%s: sampling: expected %q or %q, got %q", c.spec, explore.Random, explore.LatinHypercube, spec.Sampling)
	case len(spec.Vary) == 0:
		return nil, nil, fmt.Errorf("%s: vary: missing (the knobs to vary and their distributions)", c.spec)
	}
	l, prov, err := loadModel("population", c.spec, spec.Model, spec.Simulation, c.show)
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
		vary  []study.Vary
		paths []string
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
		d, err := v.distribution(path)
		if err != nil {
			return nil, nil, fmt.Errorf("%s: %w", c.spec, err)
		}
		vary, paths = append(vary, study.Vary{Knob: v.Target, Dist: d}), append(paths, path+".target")
	}
	ro, err := readoutSpecs(c.spec, spec.Readouts)
	if err != nil {
		return nil, nil, err
	}
	var bandSp []string
	if len(spec.Bands) > 0 && string(spec.Bands) != "null" {
		var b struct {
			Species []string `json:"species"`
		}
		if err := strict(spec.Bands, &b, "bands"); err != nil {
			return nil, nil, fmt.Errorf("%s: %w", c.spec, err)
		}
		for i, sp := range b.Species {
			if _, ok := l.Quantity(sp); !ok {
				return nil, nil, fmt.Errorf("%s: bands.species[%d]: no species or assignment %q in the model", c.spec, i, sp)
			}
		}
		bandSp = b.Species
	}
	pj, err := l.Population(vary, spec.Samples, *spec.Seed, explore.Sampling(spec.Sampling), ro, bandSp)
	if err != nil {
		return nil, nil, jobError(c.spec, err, paths)
	}
	meta := &runMeta{
		Kind: "population", Spec: filepath.Base(c.spec), Title: l.Model.Title, Provenance: prov, Figures: pj.Figures(),
		Knobs: pj.Settings.Knobs, BandSpecies: bandSp, LogTime: l.Sim.Output.Spacing == "log",
	}
	if meta.Fingerprint, err = newFingerprint(specData, prov, spec.Seed); err != nil {
		return nil, nil, err
	}
	return c, &job{meta: meta, Job: pj}, nil
}
