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

	"gonum.org/v1/plot"

	"kinetarium/app/run"
	"kinetarium/app/study"
	"kinetarium/internal/atomicfile"
	"kinetarium/plotting"
	"kinetarium/solve/explore"
)

// PartFormat is the format tag of a partial-result file.
const PartFormat = "kinetarium.batch-part/2"

// runMeta is what the outputs need besides the explore result; it travels
// in partial-result files so that merge can write the same outputs.
type runMeta struct {
	Kind        string   `json:"kind"` // "sweep" or "population"
	Spec        string   `json:"spec"` // the spec's file name
	Title       string   `json:"title"`
	Knobs       []string `json:"knobs"`
	PlotSpecies []string `json:"plot_species,omitempty"` // sweep
	BandSpecies []string `json:"band_species,omitempty"` // population
	LogTime     bool     `json:"log_time,omitempty"`     // the output grid is log-spaced
	// Figures describes the figures, drawn as the window draws them.
	Figures study.Figures `json:"figures"`
	// Provenance goes into every output, stamped with the time they are
	// written.
	Provenance *run.Provenance `json:"provenance"`
	// Fingerprint identifies everything that determines the result;
	// merge refuses parts whose fingerprints differ.
	Fingerprint *fingerprint `json:"fingerprint,omitempty"`
	// Partial is set when the run was stopped before it finished.
	Partial bool `json:"partial,omitempty"`
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
	if err := checkOutDir(*out); err != nil {
		return err
	}
	if isStochasticPart(files[0]) {
		return mergeStochastic(files, *out, stdout)
	}
	var (
		meta     *runMeta
		metaJSON []byte
		parts    []*explore.Result
	)
	for _, f := range files {
		data, err := readInput(f, maxPartSize)
		if err != nil {
			return badInput(fmt.Errorf("reading a part: %w", err))
		}
		if !json.Valid(data) {
			var v any
			return badInput(jsonError(f, data, json.Unmarshal(data, &v)))
		}
		var p partFile
		if err := strict(data, &p, ""); err != nil {
			return badInput(fmt.Errorf("%s: %w", f, err))
		}
		if p.Format != PartFormat || p.Meta == nil {
			return badInput(fmt.Errorf("%s: format: expected %q with meta and result, got %q", f, PartFormat, p.Format))
		}
		if p.Meta.Fingerprint == nil {
			return badInput(fmt.Errorf("%s: has no fingerprint of its spec and model (written by an earlier version); run that shard again", f))
		}
		if meta != nil {
			if how := meta.Fingerprint.differ(p.Meta.Fingerprint); how != "" {
				return badInput(fmt.Errorf("%s does not belong with %s: %s", f, files[0], how))
			}
		}
		if p.Meta.Partial {
			return badInput(fmt.Errorf("%s: this shard was stopped before it finished (partial: true); run it again, then merge", f))
		}
		// Parts are written at different times: compare all but that.
		same := *p.Meta
		same.Provenance = same.Provenance.WithoutTime()
		mj, _ := json.Marshal(&same)
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

// outputs writes the files of one result into a folder, each CSV table
// with its provenance beside it, each figure with its provenance inside,
// and lists what it wrote.
type outputs struct {
	dir     string
	prov    *run.Provenance
	title   string // of the figures' metadata
	written []string
}

// csv writes rows to dir/name atomically, with its provenance.
func (o *outputs) csv(name string, rows [][]string) error {
	path := filepath.Join(o.dir, name)
	if err := atomicfile.WriteCSV(path, rows); err != nil {
		return err
	}
	if err := run.SaveProvenance(path, o.prov); err != nil {
		return err
	}
	o.written = append(o.written, path, run.ProvenancePath(path))
	return nil
}

// figure saves p as dir/name; err is the error of drawing p.
func (o *outputs) figure(p *plot.Plot, err error, name string) error {
	if err != nil {
		return fmt.Errorf("figure %s: %w", name, err)
	}
	path := filepath.Join(o.dir, name)
	if err := plotting.Save(p, path, 0, 0, 0, o.prov.Metadata(o.title)); err != nil {
		return err
	}
	o.written = append(o.written, path)
	return nil
}

// unsafeName matches runs of characters kept out of file names.
var unsafeName = regexp.MustCompile(`[^A-Za-z0-9_.-]+`)

// fileName makes s safe to use in a file name.
func fileName(s string) string { return unsafeName.ReplaceAllString(s, "_") }

// writeOutputs writes the CSV files and figures of a complete result.
func writeOutputs(meta *runMeta, res *explore.Result, dir string, stdout io.Writer) error {
	prov := *meta.Provenance
	prov.Exported = run.ExportTime()
	out := &outputs{dir: dir, prov: &prov, title: meta.Title}
	// Per-point knob values and readouts.
	name := "samples.csv"
	if meta.Kind == "sweep" {
		name = "runs.csv"
	}
	if err := out.csv(name, meta.Figures.RunRows(res)); err != nil {
		return err
	}
	if err := out.csv("failures.csv", meta.Figures.FailureRows(res)); err != nil {
		return err
	}
	var err error
	if meta.Kind == "sweep" {
		err = writeSweep(meta, res, out)
	} else {
		err = writePopulation(meta, res, out)
	}
	if err != nil {
		return err
	}
	partial := ""
	if meta.Partial {
		partial = fmt.Sprintf(" of %d (partial: true)", res.Size)
	}
	fmt.Fprintf(stdout, "%s: %d runs%s, %d failed; wrote %d files in %s\n", meta.Kind, res.Points, partial, res.Failed, len(out.written), dir)
	for _, f := range res.Failures {
		fmt.Fprintf(stdout, "  failed %d %v: %s\n", f.Index, f.X, f.Err)
		if f.Index >= 10 && len(res.Failures) > 10 {
			fmt.Fprintf(stdout, "  … see failures.csv\n")
			break
		}
	}
	return nil
}

// writeSweep writes trajectories, readout matrices and the sweep figures.
func writeSweep(meta *runMeta, res *explore.Result, out *outputs) error {
	fig := meta.Figures
	if err := out.csv("trajectories.csv", fig.TrajectoryRows(res)); err != nil {
		return err
	}
	if len(fig.Axes) == 2 {
		for r, name := range res.Readouts {
			if err := out.csv("matrix_"+fileName(name)+".csv", fig.MatrixRows(res, r)); err != nil {
				return err
			}
			p, err := fig.Readout(res, r)
			if err := out.figure(p, err, "heatmap_"+fileName(name)+".png"); err != nil {
				return err
			}
		}
		return nil
	}
	// One axis: a family of curves per plotted species, readouts against
	// the parameter.
	for _, sp := range meta.PlotSpecies {
		p, err := fig.Family(res, sp, 0, meta.LogTime)
		if err := out.figure(p, err, "family_"+fileName(sp)+".png"); err != nil {
			return err
		}
	}
	for r, name := range res.Readouts {
		p, err := fig.Readout(res, r)
		if err := out.figure(p, err, "readout_"+fileName(name)+".png"); err != nil {
			return err
		}
	}
	return nil
}

// writePopulation writes bands, readout summaries and the population
// figures.
func writePopulation(meta *runMeta, res *explore.Result, out *outputs) error {
	fig := meta.Figures
	// Readout percentiles, exact from the samples; NaN (undefined) values
	// are counted apart.
	for r, name := range res.Readouts {
		pl, err := fig.Histogram(res, r)
		if err := out.figure(pl, err, "hist_"+fileName(name)+".png"); err != nil {
			return err
		}
	}
	if err := out.csv("readouts.csv", fig.ReadoutSummaryRows(res)); err != nil {
		return err
	}
	b := res.Bands
	if b == nil {
		return nil
	}
	for _, sp := range meta.BandSpecies {
		p, err := fig.Bands(res, sp, meta.LogTime, false)
		if err := out.figure(p, err, "bands_"+fileName(sp)+".png"); err != nil {
			return err
		}
	}
	return out.csv("bands.csv", fig.BandRows(b, meta.BandSpecies))
}
