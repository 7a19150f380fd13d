package main

// The fit subcommand: estimate a model's quantities from measured time
// courses, with their uncertainty.

import (
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"os/signal"
	"path/filepath"
	"slices"
	"sort"
	"strings"

	"kinetarium/app/calibrate"
	"kinetarium/app/run"
	"kinetarium/internal/atomicfile"
	"kinetarium/plotting"
)

// fitFlags are the options of fit.
type fitFlags struct {
	spec     string
	out      string
	workers  int
	profiles bool
	quiet    bool
}

func parseFitFlags(args []string) (*fitFlags, error) {
	fs := flag.NewFlagSet("fit", flag.ContinueOnError)
	fs.SetOutput(io.Discard)
	f := &fitFlags{}
	fs.StringVar(&f.out, "out", "", "")
	fs.IntVar(&f.workers, "workers", 0, "")
	fs.BoolVar(&f.profiles, "profiles", false, "")
	fs.BoolVar(&f.quiet, "quiet", false, "")
	pos, err := parseAnywhere(fs, args)
	if err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return nil, err
		}
		return nil, badInput(fmt.Errorf("%v (see batch help)", err))
	}
	if len(pos) != 1 {
		return nil, badInput(fmt.Errorf("expected one fit specification, got %d arguments %q (see batch help)", len(pos), pos))
	}
	if f.workers < 0 {
		return nil, badInput(fmt.Errorf("--workers: expected 0 (every core) or more, got %d", f.workers))
	}
	f.spec = pos[0]
	if f.out == "" {
		f.out = strings.TrimSuffix(f.spec, filepath.Ext(f.spec)) + "-results"
	}
	return f, nil
}

// runFit is the fit subcommand.
func runFit(args []string, stdout, stderr io.Writer) int {
	f, err := parseFitFlags(args)
	if errors.Is(err, flag.ErrHelp) {
		fmt.Fprint(stdout, usageText)
		return exitOK
	}
	if err == nil {
		ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
		defer stop()
		err = fitCmd(ctx, f, stdout, stderr)
	}
	return exitStatus("fit", err, stderr)
}

// fitSummary is fit.json.
type fitSummary struct {
	Objective       float64          `json:"objective"`
	WSSR            float64          `json:"wssr"`
	SSR             float64          `json:"ssr"`
	NData           int              `json:"n_data"`
	NParams         int              `json:"n_params"`
	DOF             int              `json:"dof"`
	AIC             float64          `json:"aic"`
	AICc            *float64         `json:"aicc"`
	BIC             float64          `json:"bic"`
	Starts          int              `json:"starts"`
	ConvergedStarts int              `json:"converged_starts"`
	BestStart       int              `json:"best_start"`
	Iterations      int              `json:"iterations"`
	Seconds         float64          `json:"seconds"`
	Sigma           *float64         `json:"sigma,omitempty"`
	SigmaC          *float64         `json:"sigma_c,omitempty"` // proportional noise: σ = c·|fitted|
	SigmaA          *float64         `json:"sigma_a,omitempty"` // combined noise: σ² = a² + (b·fitted)²
	SigmaB          *float64         `json:"sigma_b,omitempty"`
	Noise           string           `json:"noise"`
	Notes           []string         `json:"notes"`
	Estimates       []map[string]any `json:"estimates"`
}

// fitJSONNum is a number for JSON, or nil where JSON has none.
func fitJSONNum(v float64) any {
	if math.IsNaN(v) {
		return nil
	}
	if math.IsInf(v, 0) {
		return calibrate.Num(v)
	}
	return v
}

func fitCmd(ctx context.Context, f *fitFlags, stdout, stderr io.Writer) error {
	spec, err := calibrate.LoadSpec(f.spec)
	if err != nil {
		return badInput(err)
	}
	p, err := calibrate.NewProblem(spec)
	if err != nil {
		return badInput(fmt.Errorf("%s: %w", f.spec, err))
	}
	prov, err := run.NewProvenance("fit", p.Model, p.Model.Simulation, nil)
	if err != nil {
		return badInput(err)
	}
	if err := os.MkdirAll(f.out, 0o755); err != nil {
		return fmt.Errorf("creating %s: %w", f.out, err)
	}
	set := calibrate.Settings{Workers: f.workers, Profiles: f.profiles}
	if !f.quiet {
		set.Progress = func(fr float64) { fmt.Fprintf(stderr, "\rfit: %3.0f%% of %d starts", 100*fr, spec.Starts) }
	}
	rep, err := p.Run(ctx, set)
	if !f.quiet {
		fmt.Fprintln(stderr)
	}
	if err != nil {
		var nc *calibrate.NoConvergence
		if errors.As(err, &nc) && rep != nil {
			_ = writeStarts(f.out, rep, prov)
		}
		return err
	}
	if err := writeFit(ctx, f.out, p, rep, prov); err != nil {
		return err
	}
	fmt.Fprintf(stdout, "fit: %d of %d starts converged; best objective %.6g (−log-likelihood), %d data, %d estimated\n",
		rep.Converged, len(rep.Starts), rep.Objective, rep.NData, rep.NParams)
	for _, e := range rep.All() {
		fmt.Fprintf(stdout, "  %-24s %-14s SE %-12s 95%% [%s, %s]\n", e.Name, calibrate.Num(e.Value), calibrate.Num(e.SE), calibrate.Num(e.Low), calibrate.Num(e.High))
	}
	for _, n := range rep.Notes {
		fmt.Fprintf(stdout, "  note: %s\n", n)
	}
	fmt.Fprintf(stdout, "fit: results in %s\n", f.out)
	return nil
}

// writeStarts writes starts.csv: every start's outcome.
func writeStarts(dir string, rep *calibrate.Report, prov *run.Provenance) error {
	return saveCSV(filepath.Join(dir, "starts.csv"), calibrate.StartRows(rep), prov)
}

func saveCSV(path string, rows [][]string, prov *run.Provenance) error {
	if err := atomicfile.WriteCSV(path, rows); err != nil {
		return err
	}
	return run.SaveProvenance(path, prov)
}

// writeFit writes every table and figure of a fit.
func writeFit(ctx context.Context, dir string, p *calibrate.Problem, rep *calibrate.Report, prov *run.Provenance) error {
	sum := fitSummary{Objective: rep.Objective, WSSR: rep.WSSR, SSR: rep.SSR, NData: rep.NData, NParams: rep.NParams, DOF: rep.DOF,
		AIC: rep.AIC, BIC: rep.BIC, Starts: len(rep.Starts), ConvergedStarts: rep.Converged, BestStart: rep.Best + 1,
		Iterations: rep.Iterations, Seconds: rep.Seconds, Noise: rep.Noise, Notes: rep.Notes}
	if !math.IsInf(rep.AICc, 0) {
		sum.AICc = &rep.AICc
	}
	if !math.IsNaN(rep.Sigma) {
		sum.Sigma = &rep.Sigma
	}
	if sum.Notes == nil {
		sum.Notes = []string{}
	}
	for _, e := range rep.NoiseEstimates {
		v := e.Value
		switch e.Name {
		case calibrate.SigmaC:
			sum.SigmaC = &v
		case calibrate.SigmaA:
			sum.SigmaA = &v
		case calibrate.SigmaB:
			sum.SigmaB = &v
		}
	}
	for _, e := range rep.All() {
		sum.Estimates = append(sum.Estimates, map[string]any{"name": e.Name, "target": e.Target, "value": e.Value, "se": fitJSONNum(e.SE),
			"ci95_low": fitJSONNum(e.Low), "ci95_high": fitJSONNum(e.High), "profile_low": fitJSONNum(e.ProfileLow), "profile_high": fitJSONNum(e.ProfileHigh),
			"determined": e.Determined, "at_bound": e.AtBound, "unit": e.Unit})
	}
	if err := saveCSV(filepath.Join(dir, "estimates.csv"), calibrate.EstimateRows(rep), prov); err != nil {
		return err
	}
	js, err := json.MarshalIndent(sum, "", "  ")
	if err != nil {
		return err
	}
	if err := atomicfile.Write(filepath.Join(dir, "fit.json"), append(js, '\n')); err != nil {
		return err
	}
	if err := saveCSV(filepath.Join(dir, "fitted.csv"), calibrate.FittedRows(rep), prov); err != nil {
		return err
	}
	if err := saveCSV(filepath.Join(dir, "correlation.csv"), calibrate.CorrelationRows(rep), prov); err != nil {
		return err
	}
	if err := writeStarts(dir, rep, prov); err != nil {
		return err
	}
	return fitFigures(ctx, dir, p, rep, prov)
}

// fitFigures draws the fitted curves over the data and the residuals of
// each experiment, the sorted objectives of the starts, the correlation
// heat map and the profiles.
func fitFigures(ctx context.Context, dir string, p *calibrate.Problem, rep *calibrate.Report, prov *run.Provenance) error {
	x := make([]float64, len(rep.Estimates))
	for j, e := range rep.Estimates {
		x[j] = e.Value
	}
	units := p.Model.Units
	logX := p.Model.Simulation.WithDefaults().Output.Spacing == "log"
	for i, e := range p.Exps {
		res, err := p.Curves(ctx, i, x, 300)
		if err != nil {
			return fmt.Errorf("experiment %q: drawing the fit: %w", e.Name, err)
		}
		tr := plotting.Trajectories{Times: res.T, Names: res.Names, Values: res.Y}
		var pts, resid []plotting.Measured
		for _, r := range rep.Residuals {
			if r.Experiment != e.Name {
				continue
			}
			pts = append(pts, plotting.Measured{T: r.Time, Y: r.Observed, SD: r.SD, Name: r.Name})
			resid = append(resid, plotting.Measured{T: r.Time, Y: r.Residual, SD: r.SD, Name: r.Name})
		}
		o := plotting.Options{Title: fmt.Sprintf("Fit to %s", e.Name), XLabel: "time", XUnit: units.Time, YLabel: "concentration", YUnit: units.Amount, LogX: logX}
		pl, err := plotting.MeasuredPlot(tr, pts, o)
		if err != nil {
			return err
		}
		if err := plotting.Save(pl, filepath.Join(dir, "fit_"+fileSafe(e.Name)+".png"), 0, 0, 0, prov.Metadata(o.Title)); err != nil {
			return err
		}
		o.Title, o.YLabel = fmt.Sprintf("Residuals, %s (observed − fitted)", e.Name), "residual"
		zero := plotting.Trajectories{Times: []float64{0, res.T[len(res.T)-1]}, Names: []string{"zero"}, Values: [][]float64{{0}, {0}}}
		pl, err = plotting.MeasuredPlot(zero, resid, o)
		if err != nil {
			return err
		}
		if err := plotting.Save(pl, filepath.Join(dir, "residuals_"+fileSafe(e.Name)+".png"), 0, 0, 0, prov.Metadata(o.Title)); err != nil {
			return err
		}
	}
	// The starts' objectives, sorted: a best found repeatedly shows as a
	// flat run at the left.
	var objs []float64
	for _, s := range rep.Starts {
		if s.Converged && !math.IsNaN(s.Objective) {
			objs = append(objs, s.Objective)
		}
	}
	sort.Float64s(objs)
	rank := make([]float64, len(objs))
	for i := range rank {
		rank[i] = float64(i + 1)
	}
	o := plotting.Options{Title: "Final objective of each converged start, sorted", XLabel: "start (sorted)", YLabel: "objective (−log-likelihood)"}
	pl, err := plotting.XYPlot(rank, objs, o)
	if err != nil {
		return err
	}
	if err := plotting.Save(pl, filepath.Join(dir, "starts.png"), 0, 0, 0, prov.Metadata(o.Title)); err != nil {
		return err
	}
	if n := len(rep.Estimates) + len(rep.NoiseEstimates); n > 1 {
		idx := make([]float64, n)
		z := make([][]float64, n)
		for a := range z {
			idx[a] = float64(a + 1)
			z[a] = make([]float64, n)
			for b := range z[a] {
				z[a][b] = rep.Corr.At(a, b)
			}
		}
		o := plotting.Options{Title: "Correlation of the estimates (numbered as in estimates.csv)", XLabel: "estimate", YLabel: "estimate", Signed: true}
		pl, err := plotting.HeatMap(idx, idx, z, o, "correlation")
		if err != nil {
			return err
		}
		if err := plotting.Save(pl, filepath.Join(dir, "correlation.png"), 0, 0, 0, prov.Metadata(o.Title)); err != nil {
			return err
		}
	}
	all := append(slices.Clone(rep.Estimates), rep.NoiseEstimates...)
	for j, pr := range rep.Profiles {
		e := all[j]
		o := plotting.Options{Title: fmt.Sprintf("Profile of %s (the 95%% interval is where it stays within 1.92 of the best)", e.Name),
			XLabel: e.Name, XUnit: e.Unit, YLabel: "objective (−log-likelihood)", LogX: e.Log}
		pl, err := plotting.XYPlot(pr.Values, pr.Objectives, o)
		if err != nil {
			return err
		}
		if err := plotting.Save(pl, filepath.Join(dir, "profile_"+fileSafe(e.Name)+".png"), 0, 0, 0, prov.Metadata(o.Title)); err != nil {
			return err
		}
	}
	return nil
}

// fileSafe turns a name into a file-name part.
func fileSafe(s string) string {
	return strings.Map(func(r rune) rune {
		switch r {
		case '/', '\\', ':', '*', '?', '"', '<', '>', '|', '[', ']', ' ':
			return '_'
		}
		return r
	}, s)
}
