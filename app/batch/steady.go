package main

// The steady and continue subcommands.

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
	"strconv"
	"strings"

	"kinetarium/app/analyse"
	"kinetarium/app/run"
	"kinetarium/network"
	"kinetarium/plotting"
)

func init() {
	register("steady", runSteady)
	register("continue", runContinue)
}

// jnum is a number in JSON output: NaN and infinities (an undefined
// scaled coefficient, say) are written as null.
type jnum float64

// MarshalJSON implements json.Marshaler.
func (f jnum) MarshalJSON() ([]byte, error) {
	v := float64(f)
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return []byte("null"), nil
	}
	return []byte(strconv.FormatFloat(v, 'g', -1, 64)), nil
}

// orderedMap is a JSON object whose keys keep their order (species and
// reactions in model order).
type orderedMap struct {
	keys []string
	vals []any
}

func (m *orderedMap) set(k string, v any) { m.keys, m.vals = append(m.keys, k), append(m.vals, v) }

// MarshalJSON implements json.Marshaler.
func (m *orderedMap) MarshalJSON() ([]byte, error) {
	var b strings.Builder
	b.WriteByte('{')
	for i, k := range m.keys {
		if i > 0 {
			b.WriteByte(',')
		}
		kb, _ := json.Marshal(k)
		b.Write(kb)
		b.WriteByte(':')
		vb, err := json.Marshal(m.vals[i])
		if err != nil {
			return nil, err
		}
		b.Write(vb)
	}
	b.WriteByte('}')
	return []byte(b.String()), nil
}

// runSteady is the steady subcommand.
func runSteady(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("steady", flag.ContinueOnError)
	fs.SetOutput(stderr)
	asJSON := fs.Bool("json", false, "print one JSON object instead of tables")
	control := fs.Bool("control", false, "add the scaled elasticities and control coefficients")
	var show network.Display
	fs.StringVar(&show.Time, "time-unit", "", "show times in this unit (s, min, h, day) instead of the model's display unit")
	fs.StringVar(&show.Concentration, "concentration-unit", "", "show concentrations in this unit (such as nM or mg/L) instead of the model's display unit")
	fs.Usage = func() {
		fmt.Fprintln(stderr, "usage: batch steady MODEL.json [--json] [--control] [--time-unit U] [--concentration-unit U]")
		fs.PrintDefaults()
	}
	pos, err := parseAnywhere(fs, args)
	if err != nil {
		return exitStatus("steady", badInput(err), stderr)
	}
	if len(pos) != 1 {
		fs.Usage()
		return exitStatus("steady", badInput(fmt.Errorf("expected one model file, got %d arguments", len(pos))), stderr)
	}
	m, err := network.Load(pos[0])
	if err != nil {
		return exitStatus("steady", badInput(err), stderr)
	}
	if err := setDisplay(&m.Simulation, m.Units, show); err != nil {
		return exitStatus("steady", badInput(err), stderr)
	}
	a, err := analyse.Prepare(m)
	if err != nil {
		return exitStatus("steady", badInput(fmt.Errorf("%s: %w", pos[0], err)), stderr)
	}
	sh, err := a.Show()
	if err != nil {
		return exitStatus("steady", badInput(fmt.Errorf("%s: %w", pos[0], err)), stderr)
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	s, err := a.FindSteady(ctx)
	if err != nil {
		return exitStatus("steady", fmt.Errorf("%s: %w", pos[0], err), stderr)
	}
	var c *analyse.ControlTables
	if *control {
		if c, err = a.Control(s); err != nil {
			return exitStatus("steady", fmt.Errorf("%s: control coefficients: %w", pos[0], err), stderr)
		}
	}
	s = s.In(sh) // the control coefficients are scaled: pure numbers
	if *asJSON {
		return exitStatus("steady", writeSteadyJSON(stdout, s, c), stderr)
	}
	writeSteadyText(stdout, s, c)
	return exitOK
}

// steadyJSON lays out a steady state as the --json object.
func steadyJSON(s *analyse.Steady, c *analyse.ControlTables) *orderedMap {
	out := &orderedMap{}
	sp := &orderedMap{}
	for i, n := range s.Species {
		sp.set(n, jnum(s.Y[i]))
	}
	fl := &orderedMap{}
	for j, n := range s.Reactions {
		fl.set(n, jnum(s.Fluxes[j]))
	}
	tot := &orderedMap{}
	for _, t := range s.Totals {
		tot.set(t.Law, jnum(t.Value))
	}
	ev := make([][2]jnum, len(s.Eigenvalues))
	for k, v := range s.Eigenvalues {
		ev[k] = [2]jnum{jnum(real(v)), jnum(imag(v))}
	}
	out.set("species", sp)
	out.set("fluxes", fl)
	out.set("totals", tot)
	out.set("eigenvalues", ev)
	out.set("stable", s.Stable)
	out.set("classification", string(s.Class))
	out.set("description", s.Verdict)
	out.set("slowest_time_scale", jnum(s.SlowestTimeScale))
	out.set("residual", jnum(s.Residual))
	if c != nil {
		el := &orderedMap{}
		for j, r := range c.Reactions {
			row := &orderedMap{}
			for i, n := range c.Species {
				row.set(n, jnum(c.Elasticities.At(j, i)))
			}
			el.set(r, row)
		}
		fc := &orderedMap{}
		for i, r := range c.Reactions {
			row := &orderedMap{}
			for j, q := range c.Reactions {
				row.set(q, jnum(c.FluxControl.At(i, j)))
			}
			fc.set(r, row)
		}
		cc := &orderedMap{}
		for _, i := range c.Free {
			row := &orderedMap{}
			for j, q := range c.Reactions {
				row.set(q, jnum(c.ConcControl.At(i, j)))
			}
			cc.set(c.Species[i], row)
		}
		out.set("elasticities", el)
		out.set("flux_control", fc)
		out.set("concentration_control", cc)
		if c.ParamVariables != nil {
			ps := &orderedMap{}
			for _, i := range c.Free {
				row := &orderedMap{}
				for k, p := range c.Parameters {
					row.set(p, jnum(c.ParamVariables.At(i, k)))
				}
				ps.set(c.Species[i], row)
			}
			pf := &orderedMap{}
			for j, r := range c.Reactions {
				row := &orderedMap{}
				for k, p := range c.Parameters {
					row.set(p, jnum(c.ParamFluxes.At(j, k)))
				}
				pf.set(r, row)
			}
			out.set("parameter_sensitivity_species", ps)
			out.set("parameter_sensitivity_fluxes", pf)
		}
	}
	if len(s.Notes) > 0 {
		out.set("notes", s.Notes)
	}
	if sh := s.Shown; sh != nil {
		u := &orderedMap{}
		u.set("concentration", sh.Columns.AmountUnit)
		u.set("time", sh.TimeUnit())
		u.set("flux", sh.RateUnit)
		u.set("eigenvalue", sh.PerTimeUnit)
		u.set("total", sh.TotalUnit)
		out.set("units", u)
	}
	return out
}

func writeSteadyJSON(w io.Writer, s *analyse.Steady, c *analyse.ControlTables) error {
	b, err := json.MarshalIndent(steadyJSON(s, c), "", "  ")
	if err != nil {
		return err
	}
	_, err = fmt.Fprintf(w, "%s\n", b)
	return err
}

// fmtNum writes a number for tables; NaN (undefined) as "—".
func fmtNum(v float64) string {
	if math.IsNaN(v) {
		return "—"
	}
	return strconv.FormatFloat(v, 'g', 6, 64)
}

// writeSteadyText prints the steady state as plain tables.
func writeSteadyText(w io.Writer, s *analyse.Steady, c *analyse.ControlTables) {
	sh := s.Shown
	var conc, flux, total, eig string
	if sh != nil {
		conc, flux, total, eig = sh.Columns.AmountUnit, sh.RateUnit, sh.TotalUnit, sh.PerTimeUnit
	}
	fmt.Fprintf(w, "%s\n\nspecies\t%s\n", s.Summary(), sh.Header("concentration", conc))
	for i, n := range s.Species {
		held := ""
		if s.Fixed[i] {
			held = "\t(held)"
		}
		fmt.Fprintf(w, "%s\t%s%s\n", n, fmtNum(s.Y[i]), held)
	}
	fmt.Fprintf(w, "\nreaction\t%s\n", sh.Header("flux", flux))
	for j, n := range s.Reactions {
		fmt.Fprintf(w, "%s\t%s\n", n, fmtNum(s.Fluxes[j]))
	}
	if len(s.Totals) > 0 {
		fmt.Fprintf(w, "\nconserved total\t%s\n", sh.Header("value", total))
		for _, t := range s.Totals {
			fmt.Fprintf(w, "%s\t%s\n", t.Law, fmtNum(t.Value))
		}
	}
	fmt.Fprintf(w, "\n%s\n", sh.Header("eigenvalues of the reduced Jacobian", eig))
	for _, v := range s.Eigenvalues {
		fmt.Fprintf(w, "%s\n", analyse.FormatEigenvalue(v))
	}
	for _, n := range s.Notes {
		fmt.Fprintf(w, "\nnote: %s\n", n)
	}
	if c == nil {
		return
	}
	fmt.Fprintf(w, "\nflux control (row: flux of; column: rate of)\n\t%s\n", strings.Join(c.Reactions, "\t"))
	for i, r := range c.Reactions {
		row := make([]string, len(c.Reactions))
		for j := range row {
			row[j] = fmtNum(c.FluxControl.At(i, j))
		}
		fmt.Fprintf(w, "%s\t%s\n", r, strings.Join(row, "\t"))
	}
	fmt.Fprintf(w, "\nconcentration control (row: species; column: rate of)\n\t%s\n", strings.Join(c.Reactions, "\t"))
	for _, i := range c.Free {
		row := make([]string, len(c.Reactions))
		for j := range row {
			row[j] = fmtNum(c.ConcControl.At(i, j))
		}
		fmt.Fprintf(w, "%s\t%s\n", c.Species[i], strings.Join(row, "\t"))
	}
}

// ContinuationFormat is the format tag of a continuation spec.
const ContinuationFormat = "kinetarium.continuation/1"

// continuationSpec is a continuation spec file:
//
//	{"format": "kinetarium.continuation/1", "model": "M.json",
//	 "knob": "NAME", "from": A, "to": B, "max_points": N,
//	 "species": ["X", ...],           (optional; default every species)
//	 "response": "X"}                 (optional: fit a Hill curve to X)
type continuationSpec struct {
	Format    string   `json:"format"`
	Model     string   `json:"model"`
	Knob      string   `json:"knob"`
	From      *float64 `json:"from"`
	To        *float64 `json:"to"`
	MaxPoints int      `json:"max_points"`
	Species   []string `json:"species"`
	Response  string   `json:"response"`
}

// readContinuationSpec reads and checks a continuation spec file.
func readContinuationSpec(path string) (*continuationSpec, error) {
	var spec continuationSpec
	if err := readSpec(path, ContinuationFormat, &spec); err != nil {
		return nil, err
	}
	switch {
	case spec.Knob == "":
		return nil, fmt.Errorf("%s: knob: missing (a parameter name or init:SPECIES)", path)
	case spec.From == nil:
		return nil, fmt.Errorf("%s: from: missing (the knob's value where the branch starts)", path)
	case spec.To == nil:
		return nil, fmt.Errorf("%s: to: missing (the knob's value where the branch ends)", path)
	case spec.MaxPoints < 0:
		return nil, fmt.Errorf("%s: max_points: expected a positive number, got %d", path, spec.MaxPoints)
	}
	return &spec, nil
}

// runContinue is the continue subcommand.
func runContinue(args []string, stdout, stderr io.Writer) int {
	return exitStatus("continue", continueCmd(args, stdout, stderr), stderr)
}

func continueCmd(args []string, stdout, stderr io.Writer) error {
	c, err := parseCmd("continue", args, stderr)
	if err != nil {
		return badInput(err)
	}
	spec, err := readContinuationSpec(c.spec)
	if err != nil {
		return badInput(err)
	}
	l, prov, err := loadModel("continuation", c.spec, spec.Model, nil, c.show)
	if err != nil {
		return badInput(err)
	}
	a, err := analyse.Prepare(l.Model)
	if err != nil {
		return badInput(fmt.Errorf("%s: %w", c.spec, err))
	}
	sh, err := a.Show()
	if err != nil {
		return badInput(fmt.Errorf("%s: %w", c.spec, err))
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	prog, _ := progressPrinter("continue", stderr, c.quiet)
	prog = everySecond(prog) // the branch reports each point
	d, err := a.Continue(ctx, analyse.ContinueOptions{Knob: spec.Knob, From: *spec.From, To: *spec.To,
		MaxPoints: spec.MaxPoints, Quantities: spec.Species, Progress: prog})
	if err != nil {
		if strings.HasPrefix(err.Error(), "at ") || errors.Is(err, context.Canceled) {
			return fmt.Errorf("%s: %w", c.spec, err)
		}
		if rest, ok := strings.CutPrefix(err.Error(), "quantities: "); ok {
			return badInput(fmt.Errorf("%s: species: %s", c.spec, rest)) // the spec's key
		}
		return badInput(fmt.Errorf("%s: %w", c.spec, err))
	}
	d = d.In(sh)
	xu, yu := d.AxisUnits()
	respIdx := -1
	if spec.Response != "" {
		for q, n := range d.Quantities {
			if n == spec.Response {
				respIdx = q
			}
		}
		if respIdx < 0 {
			return badInput(fmt.Errorf("%s: response: %q is not among the species reported (%s)", c.spec, spec.Response, strings.Join(d.Quantities, ", ")))
		}
	}
	if err := os.MkdirAll(c.out, 0o755); err != nil {
		return err
	}
	pv := *prov
	pv.Exported = run.ExportTime()
	out := &outputs{dir: c.out, prov: &pv, title: l.Model.Title}
	if err := out.csv("branch.csv", analyse.BranchRows(d)); err != nil {
		return err
	}
	if err := out.csv("points.csv", analyse.PointRows(d)); err != nil {
		return err
	}
	p, perr := plotting.BifurcationPlot(analyse.PlotBranch(d), plotting.Options{
		Title: "Steady states against " + spec.Knob, XLabel: spec.Knob, XUnit: xu, YLabel: "steady-state concentration", YUnit: yu, LogX: d.Log})
	if err := out.figure(p, perr, "diagram.png"); err != nil {
		return err
	}
	fmt.Fprintf(stdout, "continue: %d points, %d special points; %s\n", len(d.Points), len(d.Specials), d.Stop)
	for k := range d.Specials {
		fmt.Fprintf(stdout, "  %s\n", analyse.DescribeSpecial(d, k))
	}
	if respIdx >= 0 {
		h, err := d.Hill(respIdx)
		if err != nil {
			fmt.Fprintf(stdout, "  no Hill curve: %s\n", strings.TrimPrefix(err.Error(), "steady: "))
		} else {
			if err := out.csv("hill.csv", analyse.HillRows(d, respIdx, h)); err != nil {
				return err
			}
			x, r := analyse.Response(d, respIdx)
			p, perr := plotting.DoseResponsePlot(x, r, h.At, "Hill fit", plotting.Options{
				Title: spec.Response + " at steady state against " + spec.Knob, XLabel: spec.Knob, XUnit: xu, YLabel: spec.Response, YUnit: d.QuantityUnit(respIdx), LogX: d.Log})
			if err := out.figure(p, perr, "dose-response.png"); err != nil {
				return err
			}
			fmt.Fprintf(stdout, "  %s\n", analyse.DescribeHill(d, respIdx, h))
		}
	}
	fmt.Fprintf(stdout, "wrote %d files in %s\n", len(out.written), filepath.Clean(c.out))
	return nil
}
