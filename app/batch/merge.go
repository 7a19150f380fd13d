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
	"strings"

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
		path := filepath.Join(c.out, fmt.Sprintf("part-%d-of-%d.json", c.shard.I, c.shard.N))
		if err := writePart(path, meta, res); err != nil {
			return err
		}
		next := "combine the shards with merge"
		if meta.Partial {
			next = "partial: true; run this shard again before merging"
		}
		fmt.Fprintf(stdout, "%s shard %v: %d runs, %d failed; wrote %s (%s)\n",
			meta.Kind, c.shard, res.Points, res.Failed, path, next)
		return nil
	}
	return writeOutputs(meta, res, c.out, stdout)
}

// writePart writes a partial-result file, the points one at a time (from
// the spill file when res has one), atomically.
func writePart(path string, meta *runMeta, res *explore.Result) error {
	mj, err := json.Marshal(meta)
	if err != nil {
		return err
	}
	f, err := atomicfile.Create(path)
	if err != nil {
		return err
	}
	defer f.Abort()
	// The layout of json.Marshal(partFile{…}) with the result inside.
	fmt.Fprintf(f, `{"format":%q,"meta":%s,"result":`, PartFormat, mj)
	nl := &dropNewline{w: f}
	if err := res.WriteJSON(nl); err != nil {
		return fmt.Errorf("writing %s: %w", path, err)
	}
	if _, err := f.Write([]byte("}\n")); err != nil {
		return err
	}
	return f.Commit()
}

// dropNewline passes writes on but holds back a final newline, so that a
// JSON value written with its newline can be embedded in another.
type dropNewline struct {
	w       io.Writer
	pending bool
}

func (d *dropNewline) Write(p []byte) (int, error) {
	if len(p) == 0 {
		return 0, nil
	}
	if d.pending {
		if _, err := d.w.Write([]byte{'\n'}); err != nil {
			return 0, err
		}
		d.pending = false
	}
	q := p
	if q[len(q)-1] == '\n' {
		q, d.pending = q[:len(q)-1], true
	}
	if _, err := d.w.Write(q); err != nil {
		return 0, err
	}
	return len(p), nil
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
	files, err := parseAnywhere(fs, args)
	if err != nil {
		return badInput(err)
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
	_, err = os.Stat(*out)
	made := errors.Is(err, os.ErrNotExist)
	if err := os.MkdirAll(*out, 0o755); err != nil {
		return fmt.Errorf("making the output folder: %w", err)
	}
	// The parts' points go to a spill file as they are read, so that
	// memory does not grow with the number of points.
	sp, err := explore.NewSpill(*out)
	if err != nil {
		return err
	}
	defer sp.Close()
	meta, res, err := readParts(files, sp)
	if err != nil {
		if sp.Close(); made {
			os.Remove(*out) // the folder made above, empty: parts refused leave nothing
		}
		return err
	}
	return writeOutputs(meta, res, *out, stdout)
}

// readParts reads the partial-result files (their points into sp), checks
// that they belong together and cover the run once, and merges them.
func readParts(files []string, sp *explore.Spill) (*runMeta, *explore.Result, error) {
	var (
		meta     *runMeta
		metaJSON []byte
		parts    []*explore.Result
	)
	for _, f := range files {
		p, r, err := readPart(f, sp)
		if err != nil {
			return nil, nil, badInput(err)
		}
		if p.Meta.Fingerprint == nil {
			return nil, nil, badInput(fmt.Errorf("%s: has no fingerprint of its spec and model (written by an earlier version); run that shard again", f))
		}
		if meta != nil {
			if how := meta.Fingerprint.differ(p.Meta.Fingerprint); how != "" {
				return nil, nil, badInput(fmt.Errorf("%s does not belong with %s: %s", f, files[0], how))
			}
		}
		// Parts are written at different times: compare all but that.
		same := *p.Meta
		same.Provenance = same.Provenance.WithoutTime()
		mj, _ := json.Marshal(&same)
		if meta == nil {
			meta, metaJSON = p.Meta, mj
		} else if !bytes.Equal(mj, metaJSON) {
			return nil, nil, badInput(fmt.Errorf("%s: comes from a different run than %s (spec, model or settings differ)", f, files[0]))
		}
		for k, q := range parts {
			if q.Shard == r.Shard {
				return nil, nil, badInput(fmt.Errorf("%s and %s are the same shard %v; give each shard once", files[k], f, r.Shard))
			}
		}
		parts = append(parts, r)
	}
	res, err := explore.Merge(parts...)
	if err != nil {
		// The command's name already leads the message.
		return nil, nil, badInput(errors.New(strings.TrimPrefix(err.Error(), "merge: ")))
	}
	return meta, res, nil
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

// csvEach writes the rows that each gives for res to dir/name, one at a
// time, atomically, with its provenance.
func (o *outputs) csvEach(name string, res *explore.Result, each func(*explore.Result, func([]string) error) error) error {
	path := filepath.Join(o.dir, name)
	w, err := atomicfile.CreateCSV(path)
	if err != nil {
		return err
	}
	defer w.Abort()
	if err := each(res, w.Row); err != nil {
		return err
	}
	if err := w.Commit(); err != nil {
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
	// Per-point knob values and readouts, and the failures, a row at a
	// time: a population's come from its spill file.
	name := "samples.csv"
	if meta.Kind == "sweep" {
		name = "runs.csv"
	}
	if err := out.csvEach(name, res, meta.Figures.EachRunRow); err != nil {
		return err
	}
	if err := out.csvEach("failures.csv", res, meta.Figures.EachFailureRow); err != nil {
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
	first, err := res.FirstFailures(11)
	if err != nil {
		return err
	}
	for _, f := range first {
		fmt.Fprintf(stdout, "  failed %d %v: %s\n", f.Index, f.X, f.Err)
		if f.Index >= 10 && res.Failed > 10 {
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
	ro, err := fig.ReadoutSummaryRows(res)
	if err != nil {
		return err
	}
	if err := out.csv("readouts.csv", ro); err != nil {
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
