package main

// The sensitivity subcommand.

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"os/signal"
	"path/filepath"

	"kinetarium/app/analyse"
	"kinetarium/app/run"
	"kinetarium/app/study"
	"kinetarium/plotting"
)

func init() { register("sensitivity", runSensitivity) }

// SensitivityFormat is the format tag of a sensitivity spec.
const SensitivityFormat = "kinetarium.sensitivity/1"

// sensitivitySpec is a sensitivity spec file:
//
//	{"format": "kinetarium.sensitivity/1", "model": "model.json",
//	 "method": "sobol",             (or "morris"; default sobol)
//	 "samples": 1024, "seed": 7,    (sobol: base samples N, runs N·(knobs+2);
//	                                 morris: paths, runs paths·(knobs+1))
//	 "levels": 4,                   (morris only; even)
//	 "bootstrap": 1000, "level": 0.95,   (sobol only; optional)
//	 "vary": [{"target": "CL", "distribution": "lognormal", ...}, ...],
//	 "readouts": [{"name": "cmax", "kind": "max", "species": "C"}, ...],
//	 "simulation": {"t_end": 24}}   (optional)
type sensitivitySpec struct {
	Format     string          `json:"format"`
	Model      string          `json:"model"`
	Method     string          `json:"method"`
	Samples    int             `json:"samples"`
	Seed       *uint64         `json:"seed"`
	Levels     int             `json:"levels"`
	Bootstrap  int             `json:"bootstrap"`
	Level      float64         `json:"level"`
	Vary       json.RawMessage `json:"vary"`
	Readouts   json.RawMessage `json:"readouts"`
	Simulation json.RawMessage `json:"simulation"`
}

// readSensitivitySpec reads and checks a sensitivity spec file (the
// varied quantities and readouts are checked against the model later).
func readSensitivitySpec(path string) (*sensitivitySpec, error) {
	var spec sensitivitySpec
	if err := readSpec(path, SensitivityFormat, &spec); err != nil {
		return nil, err
	}
	switch {
	case spec.Method != "" && spec.Method != analyse.Sobol && spec.Method != analyse.Morris:
		return nil, fmt.Errorf("%s: method: expected %q or %q, got %q", path, analyse.Sobol, analyse.Morris, spec.Method)
	case spec.Samples < 0:
		return nil, fmt.Errorf("%s: samples: expected a positive number, got %d", path, spec.Samples)
	case spec.Seed == nil:
		return nil, fmt.Errorf("%s: seed: missing (a whole number ≥ 0; the same seed gives the same result)", path)
	case spec.Bootstrap < 0:
		return nil, fmt.Errorf("%s: bootstrap: expected a positive number of resamples, got %d", path, spec.Bootstrap)
	case spec.Levels < 0 || spec.Levels%2 != 0:
		return nil, fmt.Errorf("%s: levels: expected an even number of levels, at least 2, got %d", path, spec.Levels)
	case spec.Level != 0 && !(spec.Level > 0 && spec.Level < 1):
		return nil, fmt.Errorf("%s: level: expected a confidence between 0 and 1 (e.g. 0.95), got %g", path, spec.Level)
	case spec.Method != analyse.Morris && spec.Levels != 0:
		return nil, fmt.Errorf("%s: levels: only the morris method takes levels", path)
	case spec.Method == analyse.Morris && (spec.Bootstrap != 0 || spec.Level != 0):
		return nil, fmt.Errorf("%s: bootstrap and level: only the sobol method takes them", path)
	}
	return &spec, nil
}

// runSensitivity is the sensitivity subcommand.
func runSensitivity(args []string, stdout, stderr io.Writer) int {
	return exitStatus("sensitivity", sensitivity(args, stdout, stderr), stderr)
}

func sensitivity(args []string, stdout, stderr io.Writer) error {
	c, err := parseCmd("sensitivity", args, stderr)
	if err != nil {
		return badInput(err)
	}
	spec, err := readSensitivitySpec(c.spec)
	if err != nil {
		return badInput(err)
	}
	l, prov, err := loadModel("sensitivity", c.spec, spec.Model, spec.Simulation, c.show)
	if err != nil {
		return badInput(err)
	}
	var items []json.RawMessage
	if err := strict(spec.Vary, &items, "vary"); err != nil || len(items) == 0 {
		if err == nil {
			err = fmt.Errorf("vary: missing or empty (the knobs to vary and their distributions)")
		}
		return badInput(fmt.Errorf("%s: %w", c.spec, err))
	}
	var vary []study.Vary
	var paths []string
	for i, it := range items {
		path := fmt.Sprintf("vary[%d]", i)
		var v varySpec
		if err := strict(it, &v, path); err != nil {
			return badInput(fmt.Errorf("%s: %w", c.spec, err))
		}
		if v.Target == "" {
			return badInput(fmt.Errorf("%s: %s.target: missing (a parameter name, init:SPECIES or volume:COMPARTMENT)", c.spec, path))
		}
		d, err := v.distribution(path)
		if err != nil {
			return badInput(fmt.Errorf("%s: %w", c.spec, err))
		}
		vary, paths = append(vary, study.Vary{Knob: v.Target, Dist: d}), append(paths, path+".target")
	}
	ro, err := readoutSpecs(c.spec, spec.Readouts)
	if err != nil {
		return badInput(err)
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	prog, _ := progressPrinter("sensitivity", stderr, c.quiet)
	s, err := analyse.GlobalSensitivity(ctx, l, analyse.SensitivityOptions{Method: spec.Method, Vary: vary,
		Samples: spec.Samples, Levels: spec.Levels, Seed: *spec.Seed, Bootstrap: spec.Bootstrap, Level: spec.Level,
		Readouts: ro, Workers: c.workers, Progress: prog})
	if s == nil && err != nil {
		return badInput(jobError(c.spec, err, paths))
	}
	if err != nil {
		return fmt.Errorf("%s: %w", c.spec, err)
	}
	if err := os.MkdirAll(c.out, 0o755); err != nil {
		return err
	}
	pv := *prov
	pv.Exported = run.ExportTime()
	out := &outputs{dir: c.out, prov: &pv, title: l.Model.Title}
	if s.Method == analyse.Morris {
		if err := out.csv("morris.csv", analyse.EffectRows(s)); err != nil {
			return err
		}
	} else {
		if err := out.csv("indices.csv", analyse.IndexRows(s)); err != nil {
			return err
		}
		for r, name := range s.Readouts {
			first, total := analyse.IndexIntervals(s, r)
			p, perr := plotting.IndexBars(s.Knobs, first, total, plotting.Options{
				Title: fmt.Sprintf("Sensitivity of %s (%.0f%% intervals)", name, 100*s.Level), XLabel: "varied quantity"})
			if err := out.figure(p, perr, "indices-"+fileName(name)+".png"); err != nil {
				return err
			}
		}
	}
	fmt.Fprintf(stdout, "sensitivity (%s): %d runs, %d failed; wrote %d files in %s\n", s.Method, s.Runs, s.Failed, len(out.written), filepath.Clean(c.out))
	for _, n := range s.Notes {
		fmt.Fprintf(stdout, "  %s\n", n)
	}
	for r, d := range s.Dropped {
		if d > 0 {
			fmt.Fprintf(stdout, "  %s: %d left out (failed runs or undefined readouts)\n", s.Readouts[r], d)
		}
	}
	return nil
}
