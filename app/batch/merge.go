package main

// The merge subcommand, and the outputs that sweep, population and merge
// all write.

import (
	"bytes"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strconv"

	"gonum.org/v1/plot"

	"kinetarium/app/study"
	"kinetarium/internal/atomicfile"
	"kinetarium/plotting"
	"kinetarium/solve/explore"
)

// PartFormat is the format tag of a partial-result file.
const PartFormat = "kinetarium.batch-part/1"

// runMeta is what the outputs need besides the explore result; it travels
// in partial-result files so that merge can write the same outputs.
type runMeta struct {
	Kind           string      `json:"kind"` // "sweep" or "population"
	Spec           string      `json:"spec"` // the spec's file name
	Title          string      `json:"title"`
	TimeUnit       string      `json:"time_unit"`
	AmountUnit     string      `json:"amount_unit"`
	Knobs          []string    `json:"knobs"`
	Axes           [][]float64 `json:"axes,omitempty"`     // sweep
	AxisLog        []bool      `json:"axis_log,omitempty"` // sweep
	Species        []string    `json:"species"`
	PlotSpecies    []string    `json:"plot_species,omitempty"` // sweep
	ReadoutSpecies []string    `json:"readout_species"`
	BandSpecies    []string    `json:"band_species,omitempty"` // population
	LogTime        bool        `json:"log_time,omitempty"`     // the output grid is log-spaced
}

// partFile is a partial-result file.
type partFile struct {
	Format string          `json:"format"`
	Meta   *runMeta        `json:"meta"`
	Result json.RawMessage `json:"result"`
}

// finish writes a partial result (with --shard) or the full outputs.
func finish(meta *runMeta, res *explore.Result, c *cmdFlags, stdout io.Writer) error {
	if err := os.MkdirAll(c.out, 0o755); err != nil {
		return fmt.Errorf("making the output folder: %w", err)
	}
	if c.shard.N > 1 {
		var buf bytes.Buffer
		if err := res.WriteJSON(&buf); err != nil {
			return err
		}
		data, err := json.Marshal(partFile{Format: PartFormat, Meta: meta, Result: buf.Bytes()})
		if err != nil {
			return err
		}
		path := filepath.Join(c.out, fmt.Sprintf("part-%d-of-%d.json", c.shard.I, c.shard.N))
		if err := atomicfile.Write(path, append(data, '\n')); err != nil {
			return err
		}
		fmt.Fprintf(stdout, "%s shard %v: %d runs, %d failed; wrote %s (combine the shards with merge)\n",
			meta.Kind, c.shard, res.Points, res.Failed, path)
		return nil
	}
	return writeOutputs(meta, res, c.out, stdout)
}

// runMerge is the merge subcommand.
func runMerge(args []string, stdout, stderr io.Writer) int {
	return exitStatus("merge", mergeParts(args, stdout, stderr), stderr)
}

// mergeParts reads partial results, merges them and writes the outputs.
func mergeParts(args []string, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("merge", flag.ContinueOnError)
	fs.SetOutput(stderr)
	out := fs.String("out", "", "folder for the merged results (required)")
	fs.Usage = func() {
		fmt.Fprintln(stderr, "usage: batch merge PART.json... --out DIR")
		fs.PrintDefaults()
	}
	var files []string
	for {
		if err := fs.Parse(args); err != nil {
			return badInput(err)
		}
		args = fs.Args()
		if len(args) == 0 {
			break
		}
		files = append(files, args[0])
		args = args[1:]
	}
	if len(files) == 0 || *out == "" {
		fs.Usage()
		return badInput(errors.New("need the partial-result files and --out DIR"))
	}
	var (
		meta     *runMeta
		metaJSON []byte
		parts    []*explore.Result
	)
	for _, f := range files {
		data, err := os.ReadFile(f)
		if err != nil {
			return badInput(fmt.Errorf("reading a part: %w", err))
		}
		var p partFile
		if err := strict(data, &p, ""); err != nil {
			return badInput(fmt.Errorf("%s: %w", f, err))
		}
		if p.Format != PartFormat || p.Meta == nil {
			return badInput(fmt.Errorf("%s: format: expected %q with meta and result, got %q", f, PartFormat, p.Format))
		}
		mj, _ := json.Marshal(p.Meta)
		if meta == nil {
			meta, metaJSON = p.Meta, mj
		} else if !bytes.Equal(mj, metaJSON) {
			return badInput(fmt.Errorf("%s: comes from a different run than %s (spec, model or settings differ)", f, files[0]))
		}
		r, err := explore.ReadJSON(bytes.NewReader(p.Result))
		if err != nil {
			return badInput(fmt.Errorf("%s: %w", f, err))
		}
		parts = append(parts, r)
	}
	res, err := explore.Merge(parts...)
	if err != nil {
		return badInput(err)
	}
	if err := os.MkdirAll(*out, 0o755); err != nil {
		return fmt.Errorf("making the output folder: %w", err)
	}
	return writeOutputs(meta, res, *out, stdout)
}

// writeCSV writes rows to dir/name atomically.
func writeCSV(dir, name string, rows [][]string) (string, error) {
	path := filepath.Join(dir, name)
	return path, atomicfile.WriteCSV(path, rows)
}

// unsafeName matches runs of characters kept out of file names.
var unsafeName = regexp.MustCompile(`[^A-Za-z0-9_.-]+`)

// fileName makes s safe to use in a file name.
func fileName(s string) string { return unsafeName.ReplaceAllString(s, "_") }

// writeOutputs writes the CSV files and figures of a complete result.
func writeOutputs(meta *runMeta, res *explore.Result, dir string, stdout io.Writer) error {
	var written []string
	add := func(path string, err error) error {
		if err == nil {
			written = append(written, path)
		}
		return err
	}
	// Per-point knob values and readouts.
	rows := study.RunRows(res)
	name := "samples.csv"
	if meta.Kind == "sweep" {
		name = "runs.csv"
	}
	if err := add(writeCSV(dir, name, rows)); err != nil {
		return err
	}
	rows = study.FailureRows(res)
	if err := add(writeCSV(dir, "failures.csv", rows)); err != nil {
		return err
	}
	var err error
	if meta.Kind == "sweep" {
		err = writeSweep(meta, res, dir, add)
	} else {
		err = writePopulation(meta, res, dir, add)
	}
	if err != nil {
		return err
	}
	fmt.Fprintf(stdout, "%s: %d runs, %d failed; wrote %d files in %s\n", meta.Kind, res.Points, res.Failed, len(written), dir)
	for _, f := range res.Failures {
		fmt.Fprintf(stdout, "  failed %d %v: %s\n", f.Index, f.X, f.Err)
		if f.Index >= 10 && len(res.Failures) > 10 {
			fmt.Fprintf(stdout, "  … see failures.csv\n")
			break
		}
	}
	return nil
}

// savePlot saves p as dir/name.
func savePlot(p *plot.Plot, err error, dir, name string, add func(string, error) error) error {
	if err != nil {
		return fmt.Errorf("figure %s: %w", name, err)
	}
	path := filepath.Join(dir, name)
	return add(path, plotting.Save(p, path, 0, 0, 0))
}

// writeSweep writes trajectories, readout matrices and the sweep figures.
func writeSweep(meta *runMeta, res *explore.Result, dir string, add func(string, error) error) error {
	head := append([]string{"index"}, meta.Knobs...)
	head = append(head, "time")
	head = append(head, meta.Species...)
	rows := [][]string{head}
	for _, s := range res.Samples {
		if s.Traj == nil {
			continue
		}
		for i, t := range s.Traj.T {
			row := []string{strconv.Itoa(s.Index)}
			for _, v := range s.X {
				row = append(row, study.FormatNumber(v))
			}
			row = append(row, study.FormatNumber(t))
			for _, v := range s.Traj.Y[i] {
				row = append(row, study.FormatNumber(v))
			}
			rows = append(rows, row)
		}
	}
	if err := add(writeCSV(dir, "trajectories.csv", rows)); err != nil {
		return err
	}
	if len(meta.Axes) == 2 {
		xs, ys := meta.Axes[1], meta.Axes[0]
		for r, name := range res.Readouts {
			vals := res.Values(r)
			z := make([][]float64, len(ys))
			rows := [][]string{{meta.Knobs[0] + " \\ " + meta.Knobs[1]}}
			for _, x := range xs {
				rows[0] = append(rows[0], study.FormatNumber(x))
			}
			for i1 := range ys {
				z[i1] = vals[i1*len(xs) : (i1+1)*len(xs)]
				row := []string{study.FormatNumber(ys[i1])}
				for _, v := range z[i1] {
					row = append(row, study.FormatNumber(v))
				}
				rows = append(rows, row)
			}
			if err := add(writeCSV(dir, "matrix_"+fileName(name)+".csv", rows)); err != nil {
				return err
			}
			p, err := plotting.HeatMap(xs, ys, z, plotting.Options{
				Title: name, XLabel: meta.Knobs[1], YLabel: meta.Knobs[0], LogX: meta.AxisLog[1], LogY: meta.AxisLog[0],
			}, name)
			if err := savePlot(p, err, dir, "heatmap_"+fileName(name)+".png", add); err != nil {
				return err
			}
		}
		return nil
	}
	// One axis: a family of curves per plotted species, readouts against
	// the parameter.
	for _, sp := range meta.PlotSpecies {
		j := slices.Index(meta.Species, sp)
		var curves [][]float64
		var values, times []float64
		for _, s := range res.Samples {
			if s.Traj == nil {
				continue
			}
			times = s.Traj.T
			c := make([]float64, len(s.Traj.T))
			for i := range c {
				c[i] = s.Traj.Y[i][j]
			}
			curves, values = append(curves, c), append(values, s.X[0])
		}
		p, err := plotting.FamilyPlot(times, curves, values, meta.Knobs[0], plotting.Options{
			Title: sp, XLabel: "time", XUnit: meta.TimeUnit, YLabel: sp, YUnit: meta.AmountUnit, LogX: meta.LogTime,
		})
		if err := savePlot(p, err, dir, "family_"+fileName(sp)+".png", add); err != nil {
			return err
		}
	}
	for r, name := range res.Readouts {
		p, err := plotting.XYPlot(meta.Axes[0], res.Values(r), plotting.Options{
			Title: name, XLabel: meta.Knobs[0], YLabel: name + " (" + meta.ReadoutSpecies[r] + ")", LogX: meta.AxisLog[0],
		})
		if err := savePlot(p, err, dir, "readout_"+fileName(name)+".png", add); err != nil {
			return err
		}
	}
	return nil
}

// writePopulation writes bands, readout summaries and the population
// figures.
func writePopulation(meta *runMeta, res *explore.Result, dir string, add func(string, error) error) error {
	// Readout percentiles, exact from the samples; NaN (undefined) values
	// are counted apart.
	rows := [][]string{{"readout", "species", "n", "undefined", "p5", "p25", "p50", "p75", "p95"}}
	for r, name := range res.Readouts {
		vals, undefined := study.ReadoutValues(res, r)
		row := []string{name, meta.ReadoutSpecies[r], strconv.Itoa(len(vals)), strconv.Itoa(undefined)}
		for _, p := range study.Percentiles {
			row = append(row, study.FormatNumber(study.EmpiricalQuantile(vals, p)))
		}
		rows = append(rows, row)
		pl, err := plotting.Histogram(vals, 0, plotting.Options{Title: name, XLabel: name + " (" + meta.ReadoutSpecies[r] + ")"})
		if err := savePlot(pl, err, dir, "hist_"+fileName(name)+".png", add); err != nil {
			return err
		}
	}
	if err := add(writeCSV(dir, "readouts.csv", rows)); err != nil {
		return err
	}
	b := res.Bands
	if b == nil {
		return nil
	}
	for c, sp := range meta.BandSpecies {
		q := study.BandCurves(b, c)
		p, err := plotting.BandPlot(b.Times, q[2], q[0], q[4], q[1], q[3], sp, plotting.Options{
			Title: sp + ": median, 25–75 % and 5–95 %", XLabel: "time", XUnit: meta.TimeUnit, YLabel: sp, YUnit: meta.AmountUnit,
			LogX: meta.LogTime,
		})
		if err := savePlot(p, err, dir, "bands_"+fileName(sp)+".png", add); err != nil {
			return err
		}
	}
	return add(writeCSV(dir, "bands.csv", study.BandRows(b, meta.BandSpecies)))
}
