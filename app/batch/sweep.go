package main

// The sweep subcommand, and what sweep and population share: the strict
// spec decoder, knobs on a compiled network, readouts and simulation
// settings.

import (
	"bytes"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strconv"
	"strings"
	"time"

	"kinetarium/app/run"
	"kinetarium/app/study"
	"kinetarium/network"
	"kinetarium/solve/explore"
)

// SweepFormat is the format tag of a sweep spec.
const SweepFormat = "kinetarium.sweep/1"

// sweepSpec is a sweep spec file:
//
//	{"format": "kinetarium.sweep/1",
//	 "model": "model.json",
//	 "parameter": {"target": "kon", "from": 1, "to": 100, "points": 20, "spacing": "log"},
//	 "second": {...},                       (optional: a two-parameter grid)
//	 "readouts": [{"name": "peak", "kind": "max", "species": "C"}, ...],
//	 "plot_species": ["C"],                 (optional: species of the family plots)
//	 "simulation": {"t_end": 24, "points": 97, "spacing": "linear"}}   (optional)
type sweepSpec struct {
	Format      string          `json:"format"`
	Model       string          `json:"model"`
	Parameter   json.RawMessage `json:"parameter"`
	Second      json.RawMessage `json:"second"`
	Readouts    json.RawMessage `json:"readouts"`
	PlotSpecies []string        `json:"plot_species"`
	Simulation  json.RawMessage `json:"simulation"`
}

// axisSpec is one swept knob.
type axisSpec struct {
	Target  string  `json:"target"`
	From    float64 `json:"from"`
	To      float64 `json:"to"`
	Points  int     `json:"points"`
	Spacing string  `json:"spacing"` // "linear" (default) or "log"
}

// readoutSpec is one readout of a spec.
type readoutSpec struct {
	Name    string   `json:"name"`
	Kind    string   `json:"kind"`
	Species string   `json:"species"`
	Time    *float64 `json:"time"`  // value_at
	Level   *float64 `json:"level"` // cross_up, cross_down
	From    *float64 `json:"from"`  // a window, with to
	To      *float64 `json:"to"`
}

// simSpec overrides the model's simulation settings.
type simSpec struct {
	TEnd    *float64 `json:"t_end"`
	Points  *int     `json:"points"`
	Spacing string   `json:"spacing"`
}

// strict decodes raw into v, refusing unknown keys; errors name path.
func strict(raw []byte, v any, path string) error {
	dec := json.NewDecoder(bytes.NewReader(raw))
	dec.DisallowUnknownFields()
	if err := dec.Decode(v); err != nil {
		var te *json.UnmarshalTypeError
		msg := strings.TrimPrefix(err.Error(), "json: ")
		if errors.As(err, &te) {
			field := te.Field
			if path != "" && field != "" {
				field = path + "." + field
			} else if field == "" {
				field = path
			}
			return fmt.Errorf("%s: expected %s, found %s", field, typeWord(te.Type), valueWord(te.Value))
		}
		if path == "" {
			return errors.New(msg)
		}
		return fmt.Errorf("%s: %s", path, msg)
	}
	if dec.More() {
		return fmt.Errorf("%s: unexpected data after the JSON value", orTop(path))
	}
	return nil
}

// typeWord says in words what a Go type holds, for messages about a JSON
// value of the wrong kind ("a whole number", not "int").
func typeWord(t reflect.Type) string {
	switch t.Kind() {
	case reflect.Pointer:
		return typeWord(t.Elem())
	case reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64:
		return "a whole number"
	case reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64:
		return "a whole number ≥ 0"
	case reflect.Float32, reflect.Float64:
		return "a number"
	case reflect.String:
		return "text"
	case reflect.Bool:
		return "true or false"
	case reflect.Slice, reflect.Array:
		return "a list"
	case reflect.Map, reflect.Struct:
		return "an object"
	}
	return t.String()
}

// valueWord says in words what kind of JSON value json.UnmarshalTypeError
// found ("string", "number 1.5", …).
func valueWord(v string) string {
	switch {
	case v == "string":
		return "text"
	case v == "number":
		return "a number"
	case strings.HasPrefix(v, "number "):
		return "the number " + strings.TrimPrefix(v, "number ")
	case v == "bool":
		return "true or false"
	case v == "array":
		return "a list"
	case v == "object":
		return "an object"
	}
	return v
}

// orTop names an empty path "top level" in messages.
func orTop(path string) string {
	if path == "" {
		return "top level"
	}
	return path
}

// readSpec reads a spec file into v (strictly) and checks its format tag.
func readSpec(path, format string, v any) error {
	_, err := readSpecData(path, format, v)
	return err
}

// readSpecData is readSpec that also returns the file's content.
func readSpecData(path, format string, v any) ([]byte, error) {
	data, err := readInput(path, maxSpecSize)
	if err != nil {
		return nil, fmt.Errorf("reading spec: %w", err)
	}
	var head struct {
		Format *string `json:"format"`
	}
	if err := json.Unmarshal(data, &head); err != nil {
		return nil, jsonError(path, data, err)
	}
	if head.Format == nil || *head.Format != format {
		got := "none"
		if head.Format != nil {
			got = strconv.Quote(*head.Format)
		}
		return nil, fmt.Errorf("%s: format: expected %q, got %s", path, format, got)
	}
	if err := strict(data, v, ""); err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return data, nil
}

// loadModel loads the model named by a spec (relative to the spec's
// folder), applies the simulation override and compiles it. The
// provenance of the outputs (of the given kind) names the model as saved,
// before the override.
//
// show, when a field is set, overrides the model's display units (the
// --time-unit and --concentration-unit of sweep and population); a unit
// that does not serve is an error naming the flag.
func loadModel(kind, specPath, model string, simRaw json.RawMessage, show network.Display) (*study.Prepared, *run.Provenance, error) {
	if model == "" {
		return nil, nil, fmt.Errorf("%s: model: missing (the model file, relative to the spec)", specPath)
	}
	if !filepath.IsAbs(model) {
		model = filepath.Join(filepath.Dir(specPath), model)
	}
	m, err := network.Load(model)
	var pe *fs.PathError
	if errors.As(err, &pe) {
		// The file cannot be opened: name the spec's key that points to it.
		return nil, nil, fmt.Errorf("%s: model: cannot open %s (the model file, relative to the spec's folder): %w", specPath, model, pe.Err)
	}
	if err != nil {
		return nil, nil, err
	}
	saved := m.Clone()
	sim := m.Simulation.WithDefaults()
	if len(simRaw) > 0 {
		var o simSpec
		if err := strict(simRaw, &o, "simulation"); err != nil {
			return nil, nil, fmt.Errorf("%s: %w", specPath, err)
		}
		// A present key means what it says: 0 is not "the default".
		switch {
		case o.TEnd != nil && !(*o.TEnd > 0 && !math.IsInf(*o.TEnd, 0)):
			return nil, nil, fmt.Errorf("%s: simulation.t_end: expected a positive time, got %v", specPath, *o.TEnd)
		case o.Points != nil && (*o.Points < 2 || *o.Points > network.MaxPoints):
			return nil, nil, fmt.Errorf("%s: simulation.points: expected from 2 to %d output times, got %d", specPath, network.MaxPoints, *o.Points)
		case o.Spacing != "" && o.Spacing != "linear" && o.Spacing != "log":
			return nil, nil, fmt.Errorf("%s: simulation.spacing: expected \"linear\" or \"log\", got %q", specPath, o.Spacing)
		}
		if o.TEnd != nil {
			sim.TEnd = *o.TEnd
		}
		if o.Points != nil {
			sim.Output.Points = *o.Points
		}
		if o.Spacing != "" {
			sim.Output.Spacing = o.Spacing
		}
	}
	if err := setDisplay(&sim, m.Units, show); err != nil {
		return nil, nil, err
	}
	m.Simulation = sim
	p, err := study.Prepare(m)
	if err != nil {
		return nil, nil, fmt.Errorf("%s: %w", model, err)
	}
	prov, err := run.NewProvenance(kind, saved, sim, nil)
	if err != nil {
		return nil, nil, fmt.Errorf("%s: %w", model, err)
	}
	return p, prov, nil
}

// readoutSpecs decodes the readouts of a spec; study resolves them.
func readoutSpecs(specPath string, raw json.RawMessage) ([]study.ReadoutSpec, error) {
	if len(raw) == 0 {
		return nil, nil
	}
	var items []json.RawMessage
	if err := strict(raw, &items, "readouts"); err != nil {
		return nil, fmt.Errorf("%s: %w", specPath, err)
	}
	var out []study.ReadoutSpec
	for i, it := range items {
		var rs readoutSpec
		if err := strict(it, &rs, fmt.Sprintf("readouts[%d]", i)); err != nil {
			return nil, fmt.Errorf("%s: %w", specPath, err)
		}
		out = append(out, study.ReadoutSpec{Name: rs.Name, Kind: explore.Kind(rs.Kind), Species: rs.Species, Time: rs.Time, Level: rs.Level, From: rs.From, To: rs.To})
	}
	return out, nil
}

// jobError names the spec key of a problem that study found: knobPaths
// are the keys of the knobs, in order; a readout or a varied quantity is
// named by its list and position.
func jobError(specPath string, err error, knobPaths []string) error {
	var ke *study.KnobError
	var ie *study.ItemError
	switch {
	case errors.As(err, &ke):
		return fmt.Errorf("%s: %s: %w", specPath, knobPaths[ke.Index], ke.Err)
	case errors.As(err, &ie):
		list := map[string]string{"readout": "readouts", "quantity": "vary"}[ie.List]
		return fmt.Errorf("%s: %s[%d].%s: %w", specPath, list, ie.Index, ie.Field, ie.Err)
	}
	return fmt.Errorf("%s: %w", specPath, err)
}

// axis decodes a swept knob.
func axis(specPath string, raw json.RawMessage, path string) (study.Axis, error) {
	var a axisSpec
	if err := strict(raw, &a, path); err != nil {
		return study.Axis{}, fmt.Errorf("%s: %w", specPath, err)
	}
	bad := func(format string, x ...any) (study.Axis, error) {
		return study.Axis{}, fmt.Errorf("%s: %s.%s", specPath, path, fmt.Sprintf(format, x...))
	}
	switch {
	case a.Target == "":
		return bad("target: missing (a parameter name, init:SPECIES or volume:COMPARTMENT)")
	case a.Points < 1 || a.Points > study.MaxSweepRuns:
		return bad("points: expected from 1 to %d, got %d", study.MaxSweepRuns, a.Points)
	case math.IsNaN(a.From) || math.IsInf(a.From, 0) || math.IsNaN(a.To) || math.IsInf(a.To, 0):
		return bad("from/to: expected finite numbers")
	}
	switch a.Spacing {
	case "", "linear":
	case "log":
		if !(a.From > 0 && a.To > 0) {
			return bad("from: log spacing needs positive from and to, got %v and %v", a.From, a.To)
		}
	default:
		return bad("spacing: expected \"linear\" or \"log\", got %q", a.Spacing)
	}
	return study.Axis{Knob: a.Target, From: a.From, To: a.To, Points: a.Points, Log: a.Spacing == "log"}, nil
}

// cmdFlags are the options of sweep and population.
type cmdFlags struct {
	spec    string
	out     string
	shard   explore.Shard
	workers int
	quiet   bool
	show    network.Display // --time-unit, --concentration-unit (sweep, population)
}

// setDisplay sets the display units the --time-unit and
// --concentration-unit flags ask for (show; an empty field keeps the
// model's choice) in sim, checked against the model's units u: a unit
// that does not read or convert is an error naming its flag.
func setDisplay(sim *network.Simulation, u network.Units, show network.Display) error {
	if show.Time != "" {
		sim.Display.Time = show.Time
	}
	if show.Concentration != "" {
		sim.Display.Concentration = show.Concentration
	}
	if show != (network.Display{}) {
		flag := map[string]string{"display.time": "--time-unit", "display.concentration": "--concentration-unit"}
		for _, p := range sim.Display.Check(u) {
			set := p.Pos.Field == "display.time" && show.Time != "" || p.Pos.Field == "display.concentration" && show.Concentration != ""
			if set {
				return fmt.Errorf("%s: %s", flag[p.Pos.Field], p.Message)
			}
		}
	}
	return nil
}

// parseCmd parses "SPEC [--shard i/n] [--out DIR] [--workers N] [--quiet]
// [--time-unit U] [--concentration-unit U]" with flags before or after the
// spec; only sweep and population take --shard, and continue takes no
// --workers (they are refused with the reason).
func parseCmd(name string, args []string, stderr io.Writer) (*cmdFlags, error) {
	fs := flag.NewFlagSet(name, flag.ContinueOnError)
	fs.SetOutput(stderr)
	var c cmdFlags
	var shard string
	usage := "usage: batch " + name + " SPEC.json"
	fs.StringVar(&shard, "shard", "", "run only part i of n (i/n, 0 ≤ i < n) and write a partial result for merge (sweep and population)")
	if name == "sweep" || name == "population" {
		usage += " [--shard i/n]"
	}
	fs.StringVar(&c.out, "out", "", "folder for the results (default: the spec's name with -results, beside it)")
	usage += " [--out DIR]"
	fs.IntVar(&c.workers, "workers", 0, "number of parallel workers (default: one per CPU; not continue)")
	if name != "continue" {
		usage += " [--workers N]"
	}
	fs.BoolVar(&c.quiet, "quiet", false, "do not report progress")
	fs.StringVar(&c.show.Time, "time-unit", "", "show times in this unit (s, min, h, day) instead of the model's display unit")
	fs.StringVar(&c.show.Concentration, "concentration-unit", "", "show concentrations in this unit (such as nM or mg/L) instead of the model's display unit")
	usage += " [--quiet] [--time-unit U] [--concentration-unit U]"
	fs.Usage = func() {
		fmt.Fprintln(stderr, usage)
		fs.PrintDefaults()
	}
	pos, err := parseAnywhere(fs, args)
	if err != nil {
		return nil, err
	}
	if len(pos) != 1 {
		fs.Usage()
		return nil, fmt.Errorf("%s: expected one spec file, got %d arguments", name, len(pos))
	}
	c.spec = pos[0]
	// A continuation follows one branch on one core, and a sensitivity
	// analysis needs every run: they refuse what they cannot honour.
	switch {
	case shard != "" && name == "continue":
		return nil, errors.New("--shard: a continuation follows one branch and runs whole")
	case shard != "" && name == "sensitivity":
		return nil, errors.New("--shard: a sensitivity analysis runs whole (its estimates need every run); use --workers")
	case c.workers != 0 && name == "continue":
		return nil, errors.New("--workers: a continuation follows one branch, one point after another, on one core")
	}
	if shard != "" {
		s, err := explore.ParseShard(shard)
		if err != nil {
			return nil, fmt.Errorf("--shard: %w", err)
		}
		c.shard = s
	}
	if c.workers < 0 {
		return nil, fmt.Errorf("--workers: expected a positive number, got %d", c.workers)
	}
	if c.out == "" {
		c.out = strings.TrimSuffix(c.spec, filepath.Ext(c.spec)) + "-results"
	}
	if err := checkOutDir(c.out); err != nil {
		return nil, err
	}
	return &c, nil
}

// progressPrinter reports progress on w about once a second.
func progressPrinter(name string, w io.Writer, quiet bool) (func(float64), time.Duration) {
	if quiet {
		return nil, 0
	}
	return func(f float64) { fmt.Fprintf(w, "%s: %3.0f %%\n", name, 100*f) }, time.Second
}

// everySecond passes progress on to f at most once a second, and when it
// is complete, for runs that report every step (f may be nil). It is
// called from one goroutine.
func everySecond(f func(float64)) func(float64) {
	if f == nil {
		return nil
	}
	var last time.Time
	return func(done float64) {
		if time.Since(last) >= time.Second || done == 1 {
			last = time.Now()
			f(done)
		}
	}
}

// inputError marks an error in the command line or an input file (exit
// status 2), as opposed to a run that failed (exit status 1).
type inputError struct{ error }

// Unwrap returns the underlying error.
func (e inputError) Unwrap() error { return e.error }

// badInput marks err as an input error; nil stays nil.
func badInput(err error) error {
	if err == nil {
		return nil
	}
	return inputError{err}
}

// exitStatus reports err on stderr and returns the exit status for it.
// A request for help (-h) has already printed the usage and succeeds.
func exitStatus(name string, err error, stderr io.Writer) int {
	if err == nil || errors.Is(err, flag.ErrHelp) {
		return exitOK
	}
	fmt.Fprintf(stderr, "%s: %v\n", name, err)
	var ie inputError
	var bug *internalError
	switch {
	case errors.As(err, &bug):
		fmt.Fprintf(stderr, "%s\n", bug.stack)
		return exitInternal
	case errors.As(err, &ie):
		return exitBadInput
	}
	return exitFailed
}

// runSweep is the sweep subcommand.
func runSweep(args []string, stdout, stderr io.Writer) int {
	return exitStatus("sweep", sweep(args, stdout, stderr), stderr)
}

// sweep prepares and runs a sweep.
func sweep(args []string, stdout, stderr io.Writer) error {
	c, job, err := sweepJob(args, stderr)
	if err != nil {
		return badInput(err)
	}
	return job.run(c, stdout, stderr)
}

// job is a prepared sweep or population with what its outputs need.
type job struct {
	meta *runMeta
	*study.Job
}

// run runs the job and writes its outputs. It fails (exit status 1) when
// every point failed.
func (j *job) run(c *cmdFlags, stdout, stderr io.Writer) error {
	if sh := j.meta.Figures.Shown; sh != nil {
		for _, n := range sh.Notes {
			fmt.Fprintf(stderr, "%s: note: %s\n", j.meta.Kind, n)
		}
	}
	s := j.Settings
	s.Workers, s.Shard = c.workers, c.shard
	s.Progress, s.ProgressEvery = progressPrinter(j.meta.Kind, stderr, c.quiet)
	ctx, stop := signalContext()
	defer stop()
	if j.meta.Kind == "population" {
		// Samples go to a spill file in the output folder as they finish,
		// so that memory does not grow with the population.
		if err := os.MkdirAll(c.out, 0o755); err != nil {
			return fmt.Errorf("making the output folder: %w", err)
		}
		sp, err := explore.NewSpill(c.out)
		if err != nil {
			return err
		}
		defer sp.Close()
		s.Spill = sp
	}
	res, err := explore.Run(ctx, j.Design, j.ODE.NewSimulator, s)
	if err != nil && (ctx.Err() == nil || res == nil) {
		return internal(err)
	}
	if err != nil {
		// Stopped by Ctrl-C or SIGTERM: write the points that are
		// complete, marked partial.
		meta := *j.meta
		prov := *meta.Provenance
		prov.Partial = true
		meta.Provenance, meta.Partial = &prov, true
		if werr := finish(&meta, res, c, stdout); werr != nil {
			return werr
		}
		return fmt.Errorf("stopped by a signal after %d of the %d runs; wrote those, marked partial (partial: true)", res.Points, res.Size)
	}
	if err := finish(j.meta, res, c, stdout); err != nil {
		return err
	}
	if res.Points > 0 && res.Failed == res.Points {
		first, err := res.FirstFailures(1)
		if err != nil || len(first) == 0 {
			return fmt.Errorf("all %d runs failed", res.Failed)
		}
		return fmt.Errorf("all %d runs failed; the first: %s", res.Failed, first[0].Err)
	}
	return nil
}

// sweepJob reads the command line and the spec of a sweep.
func sweepJob(args []string, stderr io.Writer) (*cmdFlags, *job, error) {
	c, err := parseCmd("sweep", args, stderr)
	if err != nil {
		return nil, nil, err
	}
	var spec sweepSpec
	specData, err := readSpecData(c.spec, SweepFormat, &spec)
	if err != nil {
		return nil, nil, err
	}
	if len(spec.Parameter) == 0 {
		return nil, nil, fmt.Errorf("%s: parameter: missing (the knob to sweep)", c.spec)
	}
	l, prov, err := loadModel("sweep", c.spec, spec.Model, spec.Simulation, c.show)
	if err != nil {
		return nil, nil, err
	}
	a1, err := axis(c.spec, spec.Parameter, "parameter")
	if err != nil {
		return nil, nil, err
	}
	axes, paths := []study.Axis{a1}, []string{"parameter.target"}
	if len(spec.Second) > 0 && string(spec.Second) != "null" {
		a2, err := axis(c.spec, spec.Second, "second")
		if err != nil {
			return nil, nil, err
		}
		axes, paths = append(axes, a2), append(paths, "second.target")
	}
	ro, err := readoutSpecs(c.spec, spec.Readouts)
	if err != nil {
		return nil, nil, err
	}
	sj, err := l.Sweep(axes, ro)
	if err != nil {
		return nil, nil, jobError(c.spec, err, paths)
	}
	plotSp := spec.PlotSpecies
	for i, sp := range plotSp {
		if _, ok := l.Sys.SpeciesIndex(sp); !ok {
			return nil, nil, fmt.Errorf("%s: plot_species[%d]: no species %q in the model", c.spec, i, sp)
		}
	}
	if plotSp == nil {
		for _, sp := range sj.Species {
			if !slices.Contains(plotSp, sp) {
				plotSp = append(plotSp, sp)
			}
		}
	}
	meta := &runMeta{
		Kind: "sweep", Spec: filepath.Base(c.spec), Title: l.Model.Title, Provenance: prov, Figures: sj.Figures(),
		Knobs: sj.Settings.Knobs, PlotSpecies: plotSp, LogTime: l.Sim.Output.Spacing == "log",
	}
	if meta.Fingerprint, err = newFingerprint(specData, prov, nil); err != nil {
		return nil, nil, err
	}
	return c, &job{meta: meta, Job: sj}, nil
}
