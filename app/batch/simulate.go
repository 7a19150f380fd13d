package main

// The simulate subcommand: one model, one solve, a CSV table, optionally a
// figure and solver statistics.

import (
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"sort"
	"strings"
	"time"

	"kinetarium/app/calibrate"
	"kinetarium/app/run"
	"kinetarium/internal/atomicfile"
	"kinetarium/internal/stages"
	"kinetarium/network"
	"kinetarium/plotting"
	"kinetarium/solve"
)

// simFlags are the options of simulate. Fields matter only when the flag
// was given (set records which were).
type simFlags struct {
	model   string
	tEnd    float64
	points  int
	spacing string
	rtol    float64
	atol    float64
	method  string
	out     string
	figure  string
	logY    bool
	stats   bool
	events  bool // --event-rows
	amounts bool // --amounts
	repeat  int
	// display units: --time-unit and --concentration-unit
	timeUnit, concUnit string
	sens               string // --sensitivities
	sensOut            string // --sens-out
	data               string // --data: measurements drawn over --figure
	sensMap            string // --sens-map: the output whose scaled sensitivities are drawn
	timings            bool   // --timings
	set                map[string]bool
}

// simBadf returns an input error (exit status 2) of the command line.
func simBadf(format string, args ...any) error {
	return badInput(fmt.Errorf(format, args...))
}

// parseSimFlags parses "MODEL.json [flags]", flags before or after the
// model, and checks every value.
func parseSimFlags(args []string) (*simFlags, error) {
	fs := flag.NewFlagSet("simulate", flag.ContinueOnError)
	fs.SetOutput(io.Discard) // errors are reported once, by the caller
	f := &simFlags{set: map[string]bool{}}
	fs.Float64Var(&f.tEnd, "t-end", 0, "")
	fs.IntVar(&f.points, "points", 0, "")
	fs.StringVar(&f.spacing, "spacing", "", "")
	fs.Float64Var(&f.rtol, "rtol", 0, "")
	fs.Float64Var(&f.atol, "atol", 0, "")
	fs.StringVar(&f.method, "method", "", "")
	fs.StringVar(&f.out, "out", "", "")
	fs.StringVar(&f.figure, "figure", "", "")
	fs.BoolVar(&f.logY, "log-y", false, "")
	fs.BoolVar(&f.stats, "stats", false, "")
	fs.BoolVar(&f.events, "event-rows", false, "")
	fs.BoolVar(&f.amounts, "amounts", false, "")
	fs.IntVar(&f.repeat, "repeat", 1, "")
	fs.StringVar(&f.timeUnit, "time-unit", "", "")
	fs.StringVar(&f.concUnit, "concentration-unit", "", "")
	fs.StringVar(&f.sens, "sensitivities", "", "")
	fs.StringVar(&f.sensOut, "sens-out", "", "")
	fs.StringVar(&f.data, "data", "", "")
	fs.StringVar(&f.sensMap, "sens-map", "", "")
	fs.BoolVar(&f.timings, "timings", false, "")
	pos, err := parseAnywhere(fs, args)
	if err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return nil, err
		}
		return nil, simBadf("%v (see batch help)", err)
	}
	fs.Visit(func(fl *flag.Flag) { f.set[fl.Name] = true })
	if len(pos) != 1 {
		return nil, simBadf("expected one model file, got %d arguments %q (see batch help)", len(pos), pos)
	}
	f.model = pos[0]
	finite := func(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
	switch {
	case f.set["t-end"] && !(f.tEnd > 0 && finite(f.tEnd)):
		return nil, simBadf("--t-end: expected a positive end time, got %v", f.tEnd)
	case f.set["points"] && (f.points < 2 || f.points > network.MaxPoints):
		return nil, simBadf("--points: expected from 2 to %d output times, got %d", network.MaxPoints, f.points)
	case f.set["spacing"] && f.spacing != "linear" && f.spacing != "log":
		return nil, simBadf("--spacing: expected linear or log, got %q", f.spacing)
	case f.set["rtol"] && !(f.rtol > 0 && f.rtol < 1):
		return nil, simBadf("--rtol: expected a relative tolerance between 0 and 1, got %v", f.rtol)
	case f.set["atol"] && !(f.atol > 0 && finite(f.atol)):
		return nil, simBadf("--atol: expected a positive absolute tolerance, got %v", f.atol)
	case f.set["method"] && methodErr(f.method) != nil:
		return nil, simBadf("--method: %v", methodErr(f.method))
	case f.repeat < 1:
		return nil, simBadf("--repeat: expected at least 1, got %d", f.repeat)
	case f.set["figure"] && !slices.Contains(plotting.Formats, strings.ToLower(filepath.Ext(f.figure))):
		return nil, simBadf("--figure: cannot draw %q: expected a file name ending in %s", f.figure, strings.Join(plotting.Formats, ", "))
	case f.set["out"] && f.out == "":
		return nil, simBadf("--out: expected a file name")
	case f.set["sensitivities"] && strings.TrimSpace(f.sens) == "":
		return nil, simBadf("--sensitivities: expected all or a comma-separated list such as kcat,init:S,volume:well")
	case f.set["sensitivities"] && f.sensOut == "" && f.out == "":
		return nil, simBadf("--sensitivities: give --sens-out FILE.csv (or --out, beside which FILE-sensitivities.csv is written)")
	case f.set["sens-out"] && !f.set["sensitivities"]:
		return nil, simBadf("--sens-out: give --sensitivities too")
	case f.set["data"] && !f.set["figure"]:
		return nil, simBadf("--data: give --figure too; the measurements are drawn over its curves")
	case f.set["sens-map"] && !f.set["sensitivities"]:
		return nil, simBadf("--sens-map: give --sensitivities too (the heat map shows their scaled values)")
	}
	if f.sens != "" && f.sensOut == "" {
		f.sensOut = strings.TrimSuffix(f.out, filepath.Ext(f.out)) + "-sensitivities.csv"
	}
	for _, o := range [][2]string{{"--out", f.out}, {"--figure", f.figure}, {"--sens-out", f.sensOut}} {
		if o[1] != "" {
			if err := checkOutFile(o[0], o[1]); err != nil {
				return nil, err
			}
		}
	}
	return f, nil
}

// isDir reports whether path names an existing folder.
func isDir(path string) bool {
	fi, err := os.Stat(path)
	return err == nil && fi.IsDir()
}

// methodErr is run.LookupMethod's verdict on a method word.
func methodErr(name string) error {
	_, err := run.LookupMethod(name)
	return err
}

// runSimulate is the simulate subcommand.
func runSimulate(args []string, stdout, stderr io.Writer) int {
	f, err := parseSimFlags(args)
	if errors.Is(err, flag.ErrHelp) {
		fmt.Fprint(stdout, usageText)
		return exitOK
	}
	if err == nil {
		ctx, stop := signalContext()
		defer stop()
		err = simulate(ctx, f, stdout, stderr)
	}
	return exitStatus("simulate", err, stderr)
}

// simStats is the JSON line --stats prints.
type simStats struct {
	Method         string   `json:"method"`    // method(s) used, joined by "+"
	Requested      string   `json:"requested"` // method asked for
	Choice         string   `json:"choice"`    // why auto chose as it did
	Steps          int      `json:"steps"`
	Rejected       int      `json:"rejected"`
	RHSEvals       int      `json:"rhs_evals"`
	JacobianEvals  int      `json:"jacobian_evals"`
	Factorizations int      `json:"factorizations"`
	LinearSolves   int      `json:"linear_solves"`
	FactorNonzeros int      `json:"factor_nonzeros,omitempty"` // entries of the sparse LU factors; absent when dense
	NonNegFixes    int      `json:"nonneg_fixes"`
	SolveSeconds   float64  `json:"solve_seconds"` // median over repeat solves
	Repeat         int      `json:"repeat"`
	Species        int      `json:"species"`
	Points         int      `json:"points"` // output rows written
	EventsFired    int      `json:"events_fired"`
	TEnd           float64  `json:"t_end"`
	RTol           float64  `json:"rtol"`
	ATol           float64  `json:"atol"`
	Error          string   `json:"error,omitempty"`
	Partial        bool     `json:"partial,omitempty"` // stopped by a signal
	Methods        []string `json:"methods"`
}

// simulate runs the subcommand after the command line was parsed. Notes
// on the table (columns the display units leave as computed) go to
// stderr.
func simulate(ctx context.Context, f *simFlags, stdout, stderr io.Writer) error {
	var rec stages.Recorder
	if f.timings {
		defer writeTimings(stderr, "simulate", &rec)
	}
	var m *network.Model
	err := rec.Do("read", func() (err error) { m, err = network.Load(f.model); return err })
	if err != nil {
		return badInput(err)
	}
	sim := m.Simulation.WithDefaults()
	// The model as saved, before the flags change its settings: the
	// provenance is taken from m before they do, and a copy is kept only
	// for the sensitivities (a large model's copy would be held
	// through the whole run).
	var saved *network.Model
	if f.sens != "" {
		saved = m.Clone()
	}
	if f.set["t-end"] {
		sim.TEnd = f.tEnd
	}
	if f.set["points"] {
		sim.Output.Points = f.points
	}
	if f.set["spacing"] {
		sim.Output.Spacing = f.spacing
	}
	if f.set["rtol"] {
		sim.RTol = f.rtol
	}
	if f.set["atol"] {
		sim.ATol = f.atol
	}
	if f.set["method"] {
		sim.Method = f.method
	}
	if f.set["time-unit"] {
		sim.Display.Time = f.timeUnit
	}
	if f.set["concentration-unit"] {
		sim.Display.Concentration = f.concUnit
	}
	if f.set["time-unit"] || f.set["concentration-unit"] {
		flag := map[string]string{"display.time": "--time-unit", "display.concentration": "--concentration-unit"}
		for _, p := range sim.Display.Check(m.Units) {
			if name := flag[p.Pos.Field]; f.set[strings.TrimPrefix(name, "--")] {
				return simBadf("%s: %s", name, p.Message)
			}
		}
	}
	var measured []plotting.Measured
	if f.data != "" {
		d, err := calibrate.LoadData(f.data, calibrate.MeasurableNames(m))
		if err != nil {
			return badInput(fmt.Errorf("--data: %w", err))
		}
		for _, p := range d.Points {
			measured = append(measured, plotting.Measured{T: p.Time, Y: p.Value, SD: p.SD, Name: p.Name})
		}
	}
	prov, err := run.NewProvenance("simulation", m, sim, nil)
	if err != nil {
		return badInput(fmt.Errorf("%s: %w", f.model, err))
	}
	m.Simulation = sim
	var net *network.Net
	err = rec.Do("check", func() error {
		var probs network.ErrorList
		net, probs = network.Check(m)
		return probs.Err()
	})
	if err != nil {
		return badInput(inFile(f.model, err))
	}
	var sys *network.System
	if err := rec.Do("compile", func() (err error) { sys, err = net.Compile(); return err }); err != nil {
		return badInput(fmt.Errorf("%s: %w", f.model, err))
	}
	settings, err := run.Settings(sim)
	if err != nil {
		return badInput(fmt.Errorf("%s: %w", f.model, err))
	}

	solver := solve.NewSolver(sys, settings)
	y0 := sys.Initial()
	var (
		res      *solve.Result
		solveErr error
		walls    []time.Duration
	)
	rec.Do("solve", func() error {
		for range f.repeat {
			start := time.Now()
			res, solveErr = solver.Solve(ctx, 0, sim.TEnd, slices.Clone(y0))
			walls = append(walls, time.Since(start))
			if solveErr != nil {
				break
			}
		}
		return nil
	})
	partial := ctx.Err() != nil
	if partial {
		// Stopped by Ctrl-C or SIGTERM: write what was computed, marked.
		prov.Partial = true
		end := 0.0
		if res != nil && len(res.T) > 0 {
			end = res.T[len(res.T)-1]
		}
		solveErr = fmt.Errorf("%s: stopped by a signal at t = %v; the output up to there is written, marked partial", f.model, end)
	} else if solveErr != nil {
		solveErr = fmt.Errorf("%s: %w", f.model, run.NameSpecies(solveErr, sys.Species()))
	}

	// Write what was computed, even after a failure.
	var outErr error
	rec.Do("write", func() error {
		traj, _ := run.NewOutcome(m, sys, res, nil, time.Now()) // species and assignments
		for _, n := range traj.Notes {
			fmt.Fprintf(stderr, "simulate: note: %s\n", n)
		}
		table := traj
		if f.amounts {
			table = traj.Amounts(sys)
		}
		if f.events {
			table = table.WithEventRows()
		}
		if f.out != "" {
			if err := run.SaveCSV(f.out, table, prov); err != nil {
				outErr = fmt.Errorf("writing the trajectories: %w", err)
			}
		} else if err := run.WriteCSV(stdout, table); err != nil {
			outErr = fmt.Errorf("writing the trajectories: %w", err)
		}
		if f.figure != "" && res != nil {
			v := run.View{LogX: sim.Output.Spacing == "log", LogY: f.logY, Measured: run.MeasuredShown(m, traj, measured)}
			if err := drawFigure(f.figure, traj, v, prov); err != nil {
				outErr = errors.Join(outErr, fmt.Errorf("drawing the figure: %w", err))
			}
		}
		return nil
	})
	if f.sens != "" && solveErr == nil {
		rec.Do("sensitivities", func() error {
			if err := writeSensitivities(ctx, f, m, saved); err != nil {
				outErr = errors.Join(outErr, err)
			}
			return nil
		})
	}
	if f.stats {
		st := simStats{
			Requested: sim.Method, Repeat: len(walls), Species: sys.Dim(),
			TEnd: sim.TEnd, RTol: sim.RTol, ATol: sim.ATol, SolveSeconds: median(walls).Seconds(),
			Methods: []string{},
		}
		if res != nil {
			s := res.Stats
			st.Choice, st.Steps, st.Rejected, st.RHSEvals = s.Choice, s.Steps, s.Rejected, s.RHSEvals
			st.JacobianEvals, st.Factorizations, st.LinearSolves, st.NonNegFixes = s.JacobianEvals, s.Factorizations, s.LinearSolves, s.NonNegFixes
			st.FactorNonzeros = s.FactorNonzeros
			for _, mm := range s.Methods {
				st.Methods = append(st.Methods, string(mm))
			}
			st.Points = len(res.T)
			st.EventsFired = len(res.Events)
		}
		st.Method = strings.Join(st.Methods, "+")
		if solveErr != nil {
			st.Error = solveErr.Error()
		}
		st.Partial = partial
		line, err := json.Marshal(st)
		if err != nil {
			return fmt.Errorf("encoding the statistics: %w", err)
		}
		fmt.Fprintf(stdout, "%s\n", line)
	}
	return errors.Join(solveErr, outErr)
}

// writeTimings prints the stages of a command with their time, memory
// allocated and the peak memory of the process (--timings), to w.
func writeTimings(w io.Writer, cmd string, rec *stages.Recorder) {
	fmt.Fprintf(w, "%s: time and memory of each stage (peak: the process's high-water mark at the stage's end)\n", cmd)
	rec.Write(w)
}

// drawFigure saves the trajectories of o, drawn as the window draws them,
// to path, with the provenance prov.
func drawFigure(path string, o *run.Outcome, v run.View, prov *run.Provenance) error {
	p, err := run.Figure(o, v)
	if err != nil {
		return err
	}
	return plotting.Save(p, path, 0, 0, 0, prov.Metadata(""))
}

// median returns the median of d (0 for none).
func median(d []time.Duration) time.Duration {
	if len(d) == 0 {
		return 0
	}
	s := slices.Clone(d)
	sort.Slice(s, func(i, j int) bool { return s[i] < s[j] })
	if len(s)%2 == 1 {
		return s[len(s)/2]
	}
	return (s[len(s)/2-1] + s[len(s)/2]) / 2
}

// writeSensitivities solves m with the sensitivities --sensitivities asks
// for and writes them to --sens-out, with provenance beside.
func writeSensitivities(ctx context.Context, f *simFlags, m, saved *network.Model) error {
	var targets []string
	if strings.TrimSpace(f.sens) == "all" {
		for _, p := range m.Parameters {
			targets = append(targets, p.Name)
		}
	} else {
		for _, t := range strings.Split(f.sens, ",") {
			targets = append(targets, strings.TrimSpace(t))
		}
	}
	ev, err := calibrate.NewEvaluator(m, calibrate.Options{Targets: targets})
	if err != nil {
		return badInput(fmt.Errorf("--sensitivities: %w", err))
	}
	res, err := ev.Solve(ctx, nil, true)
	if err != nil {
		return fmt.Errorf("%s: sensitivities: %w", f.model, err)
	}
	prov, err := run.NewProvenance("sensitivities", saved, m.Simulation, nil)
	if err != nil {
		return badInput(err)
	}
	if err := atomicfile.WriteCSV(f.sensOut, calibrate.SensitivityRows(res, targets, ev.Base())); err != nil {
		return fmt.Errorf("writing the sensitivities: %w", err)
	}
	if err := run.SaveProvenance(f.sensOut, prov); err != nil {
		return err
	}
	if f.sensMap == "" {
		return nil
	}
	k := slices.Index(res.Names, f.sensMap)
	if k < 0 {
		return badInput(fmt.Errorf("--sens-map: the model has no species or assignment %q (expected one of: %s)", f.sensMap, strings.Join(res.Names, ", ")))
	}
	p, err := plotting.SensitivityMap(res.T, targets, calibrate.ScaledGrid(res, k, ev.Base()), plotting.Options{
		Title: "Scaled sensitivity of " + f.sensMap, XLabel: "time", XUnit: m.Units.Time, YLabel: "quantity",
		LogX: m.Simulation.WithDefaults().Output.Spacing == "log"}, "∂ln "+f.sensMap+"/∂ln p")
	if err != nil {
		return fmt.Errorf("drawing the sensitivities: %w", err)
	}
	return plotting.Save(p, sensMapPath(f.sensOut, f.sensMap), 0, 0, 0, prov.Metadata(""))
}

// sensMapPath is where --sens-map draws: beside the sensitivities' CSV,
// "NAME-sensitivities.csv" → "NAME-sensitivities-OUTPUT.png".
func sensMapPath(sensOut, output string) string {
	return strings.TrimSuffix(sensOut, filepath.Ext(sensOut)) + "-" + fileSafe(output) + ".png"
}

// inFile prefixes err with path unless its message already starts with it
// (the checked network's problems carry the file, line and column).
func inFile(path string, err error) error {
	if strings.HasPrefix(err.Error(), path+":") {
		return err
	}
	return fmt.Errorf("%s: %w", path, err)
}
