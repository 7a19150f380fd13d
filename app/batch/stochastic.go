package main

// The stochastic subcommand: an ensemble of stochastic runs of a model,
// and the merging of its shards.

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"kinetarium/app/ensemble"
	"kinetarium/app/run"
	"kinetarium/internal/atomicfile"
	"kinetarium/network"
	"kinetarium/solve/explore"
	"kinetarium/solve/stochastic"
)

// StochasticPartFormat is the format tag of a shard of a stochastic
// ensemble.
const StochasticPartFormat = "kinetarium.stochastic-part/1"

func init() { register("stochastic", runStochastic) }

// stochasticMeta is what the outputs need besides the ensemble; it travels
// in the parts so that merge writes the same outputs.
type stochasticMeta struct {
	Title    string `json:"title"`
	TimeUnit string `json:"time_unit"`
	LogTime  bool   `json:"log_time,omitempty"`
	// Shown says how times are shown (display units); absent without.
	Shown      *ensemble.Shown `json:"shown,omitempty"`
	Notes      []string        `json:"notes"`
	ODE        [][]float64     `json:"ode,omitempty"` // in molecules, row by time
	Provenance *run.Provenance `json:"provenance"`
}

type stochasticPart struct {
	Format   string          `json:"format"`
	Meta     *stochasticMeta `json:"meta"`
	Ensemble json.RawMessage `json:"ensemble"`
}

// multiFlag collects a repeated flag.
type multiFlag []string

func (m *multiFlag) String() string     { return strings.Join(*m, ",") }
func (m *multiFlag) Set(s string) error { *m = append(*m, s); return nil }

// runStochastic is the stochastic subcommand.
func runStochastic(args []string, stdout, stderr io.Writer) int {
	return exitStatus("stochastic", stochasticCmd(args, stdout, stderr), stderr)
}

func stochasticCmd(args []string, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("stochastic", flag.ContinueOnError)
	fs.SetOutput(stderr)
	var (
		spec                 ensemble.Spec
		seed                 int64 = -1
		out, method, shard   string
		tEnd                 float64
		points               int
		quiet, noODE         bool
		histAt, passageFlags multiFlag
	)
	fs.IntVar(&spec.Runs, "runs", 0, "number of runs (required)")
	fs.Int64Var(&seed, "seed", -1, "seed of the random numbers, a whole number ≥ 0 (required; the same seed gives the same ensemble)")
	fs.StringVar(&out, "out", "", "folder for the results (required)")
	fs.StringVar(&method, "method", "direct", "direct, next or tau")
	fs.IntVar(&spec.Workers, "workers", 0, "number of parallel workers (default: one per CPU); results do not depend on it")
	fs.StringVar(&shard, "shard", "", "run only part i of n (i/n) and write a partial result for merge")
	fs.Float64Var(&tEnd, "t-end", 0, "end time (default: the model's)")
	fs.IntVar(&points, "points", 0, "number of output times (default: the model's)")
	fs.Var(&histAt, "hist-at", "a time at which to tally the counts of every species (repeatable)")
	fs.Var(&passageFlags, "passage", "SPECIES=LEVEL: first-passage times to LEVEL molecules (repeatable)")
	fs.BoolVar(&noODE, "no-ode", false, "leave the ODE solution out of the figures")
	fs.BoolVar(&quiet, "quiet", false, "do not report progress")
	var show network.Display
	fs.StringVar(&show.Time, "time-unit", "", "show times in this unit (s, min, h, day) instead of the model's display unit; counts stay molecules")
	fs.Usage = func() {
		fmt.Fprintln(stderr, "usage: batch stochastic MODEL.json --runs N --seed S --out DIR [--method direct|next|tau] [--workers N] [--shard i/n] [--time-unit U]")
		fs.PrintDefaults()
	}
	pos, err := parseAnywhere(fs, args)
	if err != nil {
		return badInput(err)
	}
	switch {
	case len(pos) != 1:
		fs.Usage()
		return badInput(fmt.Errorf("expected one model file, got %d arguments", len(pos)))
	case spec.Runs < 1:
		return badInput(fmt.Errorf("--runs: expected a positive number of runs, got %d", spec.Runs))
	case seed < 0:
		return badInput(errors.New("--seed: missing or negative (a whole number ≥ 0; the same seed gives the same ensemble)"))
	case out == "":
		return badInput(errors.New("--out: missing (the folder for the results)"))
	case spec.Workers < 0:
		return badInput(fmt.Errorf("--workers: expected a positive number, got %d", spec.Workers))
	case tEnd < 0 || math.IsInf(tEnd, 0) || math.IsNaN(tEnd):
		return badInput(fmt.Errorf("--t-end: expected a positive time, got %v", tEnd))
	case points < 0 || points == 1:
		return badInput(fmt.Errorf("--points: expected at least 2, got %d", points))
	}
	spec.Seed = uint64(seed)
	m, err := stochastic.ParseMethod(method)
	if err != nil {
		return badInput(fmt.Errorf("--method: %w", err))
	}
	spec.Method = m
	if shard != "" {
		s, err := explore.ParseShard(shard)
		if err != nil {
			return badInput(fmt.Errorf("--shard: %w", err))
		}
		spec.Shard = s
	}
	for _, h := range histAt {
		v, err := strconv.ParseFloat(h, 64)
		if err != nil {
			return badInput(fmt.Errorf("--hist-at %q: expected a time", h))
		}
		spec.HistTimes = append(spec.HistTimes, v)
	}
	for _, p := range passageFlags {
		sp, lv, ok := strings.Cut(p, "=")
		v, err := strconv.ParseFloat(lv, 64)
		if !ok || err != nil {
			return badInput(fmt.Errorf("--passage %q: expected SPECIES=LEVEL, e.g. P=100", p))
		}
		spec.Passages = append(spec.Passages, ensemble.Passage{Species: sp, Level: v})
	}
	model, err := network.Load(pos[0])
	if err != nil {
		return badInput(err)
	}
	saved := model.Clone()
	if tEnd > 0 {
		model.Simulation.TEnd = tEnd
	}
	if points > 0 {
		model.Simulation.Output.Points = points
	}
	if err := setDisplay(&model.Simulation, model.Units, show); err != nil {
		return badInput(err)
	}
	shown, err := ensemble.Show(model)
	if err != nil {
		return badInput(fmt.Errorf("%s: %w", pos[0], err))
	}
	job, err := ensemble.Prepare(model, spec)
	if err != nil {
		return badInput(fmt.Errorf("%s: %w", pos[0], err))
	}
	prov, err := run.NewProvenance("stochastic", saved, model.Simulation, nil)
	if err != nil {
		return err
	}
	prov.Stochastic = &run.Stochastic{Method: string(spec.Method), Runs: spec.Runs, Seed: spec.Seed, MoleculesPerAmount: job.Counts.PerAmount}
	meta := &stochasticMeta{Title: model.Title, TimeUnit: model.Units.Time, LogTime: job.LogGrid, Notes: job.Notes(), Provenance: prov, Shown: shown}
	ctx := context.Background()
	if !noODE {
		ode, err := job.ODE(ctx)
		if err != nil {
			fmt.Fprintf(stderr, "stochastic: the ODE solution for comparison failed (%v); figures leave it out\n", err)
		} else {
			meta.ODE = ode
		}
	}
	progress, _ := progressPrinter("stochastic", stderr, quiet)
	prog := everySecond(progress)
	if prog == nil {
		prog = func(float64) {}
	}
	e, runErr := job.Run(ctx, prog)
	if runErr != nil && e == nil {
		return runErr
	}
	if err := os.MkdirAll(out, 0o755); err != nil {
		return fmt.Errorf("making the output folder: %w", err)
	}
	if spec.Shard.N > 1 {
		var buf bytes.Buffer
		if err := e.WriteJSON(&buf); err != nil {
			return err
		}
		data, err := json.Marshal(stochasticPart{Format: StochasticPartFormat, Meta: meta, Ensemble: buf.Bytes()})
		if err != nil {
			return err
		}
		path := filepath.Join(out, fmt.Sprintf("part-%d-of-%d.json", spec.Shard.I, spec.Shard.N))
		if err := atomicfile.Write(path, append(data, '\n')); err != nil {
			return err
		}
		fmt.Fprintf(stdout, "stochastic shard %v: %d runs, %d failed; wrote %s (combine the shards with merge)\n",
			spec.Shard, e.Done, len(e.Failures), path)
		return runErr
	}
	if err := writeStochastic(meta, e, out, stdout); err != nil {
		return err
	}
	return runErr
}

// isStochasticPart reports whether the file holds a stochastic part: its
// first key, as written, is the format. Only the head is read.
func isStochasticPart(path string) bool {
	f, err := os.Open(path)
	if err != nil {
		return false
	}
	defer f.Close()
	dec := json.NewDecoder(io.LimitReader(f, 4<<10))
	var format string
	if t, err := dec.Token(); err != nil || t != json.Delim('{') {
		return false
	}
	if t, err := dec.Token(); err != nil || t != "format" {
		return false
	}
	return dec.Decode(&format) == nil && format == StochasticPartFormat
}

// mergeStochastic merges the shards of a stochastic ensemble.
func mergeStochastic(files []string, out string, stdout io.Writer) error {
	var (
		meta     *stochasticMeta
		metaJSON []byte
		parts    []*stochastic.Ensemble
	)
	for _, f := range files {
		data, err := readInput(f, maxPartSize)
		if err != nil {
			return badInput(fmt.Errorf("reading a part: %w", err))
		}
		var p stochasticPart
		if err := strict(data, &p, ""); err != nil {
			return badInput(fmt.Errorf("%s: %w", f, err))
		}
		if p.Format != StochasticPartFormat || p.Meta == nil || p.Meta.Provenance == nil {
			return badInput(fmt.Errorf("%s: format: expected %q with meta and ensemble, got %q", f, StochasticPartFormat, p.Format))
		}
		same := *p.Meta
		same.Provenance = same.Provenance.WithoutTime()
		mj, _ := json.Marshal(&same)
		if meta == nil {
			meta, metaJSON = p.Meta, mj
		} else if !bytes.Equal(mj, metaJSON) {
			return badInput(fmt.Errorf("%s: comes from a different run than %s (model or settings differ)", f, files[0]))
		}
		e, err := stochastic.ReadJSON(bytes.NewReader(p.Ensemble))
		if err != nil {
			return badInput(fmt.Errorf("%s: %w", f, err))
		}
		parts = append(parts, e)
	}
	e, err := stochastic.Merge(parts...)
	if err != nil {
		return badInput(err)
	}
	if err := os.MkdirAll(out, 0o755); err != nil {
		return fmt.Errorf("making the output folder: %w", err)
	}
	return writeStochastic(meta, e, out, stdout)
}

// writeStochastic writes the tables and figures of a complete ensemble.
func writeStochastic(meta *stochasticMeta, e *stochastic.Ensemble, dir string, stdout io.Writer) error {
	prov := *meta.Provenance
	prov.Exported = run.ExportTime()
	o := &outputs{dir: dir, prov: &prov, title: meta.Title}
	for _, t := range []struct {
		name string
		rows [][]string
		skip bool
	}{
		{"mean.csv", ensemble.MeanRows(e, meta.Shown), false},
		{"sd.csv", ensemble.SDRows(e, meta.Shown), false},
		{"bands.csv", ensemble.BandRows(e, meta.Shown), false},
		{"runs.csv", ensemble.RunRows(e, meta.Shown), false},
		{"histograms.csv", ensemble.HistogramRows(e, meta.Shown), len(e.HistTimes) == 0},
		{"passages.csv", ensemble.PassageRows(e, meta.Shown), len(e.Passages) == 0},
		{"failures.csv", failureRows(e), len(e.Failures) == 0},
	} {
		if t.skip {
			continue
		}
		if err := o.csv(t.name, t.rows); err != nil {
			return err
		}
	}
	for s, sp := range e.Species {
		p, err := ensemble.Figure(e, s, meta.ODE, meta.TimeUnit, meta.LogTime, meta.Shown)
		if err := o.figure(p, err, "stochastic_"+fileName(sp)+".png"); err != nil {
			return err
		}
	}
	for h := range e.HistTimes {
		for s, sp := range e.Species {
			p, err := ensemble.HistogramFigure(e, h, s, meta.Shown)
			name := fmt.Sprintf("hist_%s_t%s.png", fileName(sp), fileName(strconv.FormatFloat(e.Times[e.HistTimes[h]], 'g', -1, 64)))
			if err := o.figure(p, err, name); err != nil {
				return err
			}
		}
	}
	for k := range e.Passages {
		p, err := ensemble.PassageFigure(e, k, meta.Shown)
		if err := o.figure(p, err, fmt.Sprintf("passage_%d.png", k+1)); err != nil {
			return err
		}
	}
	notes := append(append([]string(nil), meta.Notes...), run.Caution)
	path := filepath.Join(dir, "notes.txt")
	if err := atomicfile.Write(path, []byte(strings.Join(notes, "\n")+"\n")); err != nil {
		return err
	}
	o.written = append(o.written, path)
	fmt.Fprintf(stdout, "stochastic: %d runs (%s method, seed %d), %d failed, %d firings; wrote %d files in %s\n",
		e.Done, e.Method, e.Seed, len(e.Failures), e.Stats.Firings, len(o.written), dir)
	for _, n := range meta.Notes {
		fmt.Fprintf(stdout, "  %s\n", n)
	}
	for i, f := range e.Failures {
		if i == 10 {
			fmt.Fprintf(stdout, "  … see failures.csv\n")
			break
		}
		fmt.Fprintf(stdout, "  run %d failed: %s\n", f.Run, f.Err)
	}
	return nil
}

func failureRows(e *stochastic.Ensemble) [][]string {
	rows := [][]string{{"run", "error"}}
	for _, f := range e.Failures {
		rows = append(rows, []string{strconv.Itoa(f.Run), f.Err})
	}
	return rows
}
