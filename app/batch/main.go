// Command batch runs Kinetarium models without the desktop program: one
// simulation to a CSV table and a figure, parameter sweeps, virtual
// populations, the merging of sharded runs and the network's diagram. It is pure Go and builds
// with CGO_ENABLED=0, for servers and clusters.
//
// Usage:
//
//	batch simulate MODEL.json [flags]
//	batch sweep SPEC.json [flags]
//	batch population SPEC.json [flags]
//	batch stochastic MODEL.json --runs N --seed S --out DIR [flags]
//	batch merge PART.json... --out DIR
//	batch check MODEL.json [--timings]
//	batch import FILE.xml [--out MODEL.json]
//	batch export MODEL.json [--out FILE.xml]
//	batch conformance DIR [--out report.csv]
//	batch fit SPEC.json [flags]
//	batch diagram MODEL.json --out FILE [flags]
//	batch steady MODEL.json [--json] [--control]
//	batch continue SPEC.json [--out DIR]
//	batch sensitivity SPEC.json [--out DIR] [--workers N]
//	batch help
//
// Run "batch help" for the flags. Exit status: 0 on success, 1 when a run
// fails or is stopped, 2 for bad input, 3 for an internal error.
package main

import (
	"flag"
	"fmt"
	"io"
	"os"
	"sort"
	"strings"

	"kinetarium/app/run"
)

// usageText is the help of every subcommand, printed by "batch help", by -h
// and with errors in the command line.
// The caution is run.Caution, the one wording of the window and its Help.
const usageText = "usage: batch COMMAND [arguments]\n\nCaution: " + run.Caution + "\n" + usageCommands

const usageCommands = `
Commands:

  simulate MODEL.json [flags]
      Simulate one model and write its trajectories as CSV (to standard
      output unless --out is given). Flags override the model's simulation
      settings:
        --t-end T          end time (> 0), in the model's time unit
        --points N         number of output times (≥ 2)
        --spacing S        output grid: linear or log (log adds t = 0 first)
        --rtol R           relative tolerance (0 < R < 1)
        --atol A           absolute tolerance (> 0)
        --method M         auto, rosenbrock, radau, bdf or explicit
        --out FILE.csv     write the CSV to FILE.csv instead
        --figure FILE      draw the trajectories to FILE.png, .svg or .pdf
        --log-y            logarithmic concentration axis in the figure
        --stats            print solver statistics as one JSON line, last
                           (events_fired counts the events that fired)
        --event-rows       add two rows at each event: just before, just after
        --amounts          species as amounts (concentration × compartment
                           volume) instead of concentrations
        --repeat N         solve N times and report the median solve time
        --time-unit U      show times in U (s, min, h, day), converted from
                           the model's time unit; the table's header and
                           the figure say so ("time (h)")
        --concentration-unit U
                           show concentrations in U (M, mM, uM, nM, pM, or
                           mg/L for a model in mass units), converted from
                           the model's concentration unit ("P (nM)")
        --sensitivities L  also compute forward sensitivities to the knobs in
                           L (comma-separated: kcat,init:S,volume:C,
                           event:dose.add.C; or all for every parameter)
        --sens-out FILE    where to write them (default: beside --out, as
                           NAME-sensitivities.csv): time, output, quantity,
                           value, sensitivity (dy/dq), scaled (dln y/dln q)
        --sens-map NAME    also draw the scaled sensitivities of species or
                           assignment NAME as a heat map (time across, the
                           knobs up) beside them, as ...-sensitivities-NAME.png
        --data FILE        draw the measurements in FILE (CSV or TSV: time,
                           one column per species or assignment, optional
                           sd_NAME) over the curves of --figure
        --timings          print to standard error the wall and processor
                           time, memory allocated and peak memory of each
                           stage: read, check, compile, solve, write

  sweep SPEC.json [--out DIR] [--shard i/n] [--workers N] [--quiet]
        [--time-unit U] [--concentration-unit U]
      Vary one or two parameters over a grid and write readouts, tables
      and figures to DIR (default: the spec's name with -results).

  population SPEC.json [--out DIR] [--shard i/n] [--workers N] [--quiet]
        [--time-unit U] [--concentration-unit U]
      Simulate a virtual population with sampled parameters and write
      samples, percentile bands and figures to DIR (default: the spec's
      name with -results). The unit flags show the tables and figures in
      those units, as for simulate.

  stochastic MODEL.json --runs N --seed S --out DIR [flags]
      Run N stochastic simulations of the model in molecule counts and
      write mean.csv, sd.csv (time, then species, in molecules),
      bands.csv, runs.csv (the first 10 runs), figures and notes.txt to
      DIR. Flags:
        --method M         direct (exact; default), next (exact) or tau
                           (tau-leaping, approximate, faster for many
                           molecules)
        --workers N        parallel workers; results do not depend on it
        --shard i/n        run part i of n; combine the parts with merge
        --t-end T, --points N   override the model's output grid
        --hist-at T        tally every species' counts at time T
                           (repeatable; histograms.csv and figures)
        --passage S=L      first-passage times of species S to L
                           molecules (repeatable; passages.csv)
        --no-ode           leave the ODE solution out of the figures
        --time-unit U      show times in U; counts stay molecules
        --quiet            do not report progress

  merge PART.json... --out DIR
      Join the partial results of a sharded sweep, population or
      stochastic ensemble.

  check MODEL.json [--timings]
      Print every error and warning of a model, units included, one a line
      with its place (file:line:column, item and field). Exit status 0 when
      there is no error (warnings allowed), 2 otherwise. --timings also
      finds the conservation laws and prints to standard error how many,
      and the time and memory of each stage (read, check, conservation
      laws, compile).

  import FILE.xml [--out MODEL.json]
      Read an SBML model (Level 3 Version 1 or 2, Level 2 Version 4) and
      write it as a model file (to standard output unless --out is
      given). Warnings go to standard error; a model that cannot be
      represented exits with status 2 and lists every unsupported element.

  export MODEL.json [--out FILE.xml]
      Write a model as SBML Level 3 Version 2 core.

  conformance DIR [--out report.csv] [--summary FILE.md] [--workers N]
              [--level l3v2|l3v1|l2v4] [--quiet]
      Run the SBML Test Suite's semantic cases in DIR (its cases folder),
      reading each case's file of that level and version (default l3v2),
      and write one row per case: case,status,max_error_ratio,message,
      status pass, fail or refused. Exit status 1 when a case fails.

  fit SPEC.json [--out DIR] [--workers N] [--profiles] [--quiet]
      Estimate model quantities from measured time courses (a
      kinetarium.fit/1 specification) and write estimates.csv, fit.json,
      fitted.csv, correlation.csv, starts.csv and figures to DIR (default:
      the spec's name with -results). --profiles adds profile-likelihood
      intervals. Exit status 1 when no start converged.

  diagram MODEL.json --out FILE [flags]
      Lay out and draw the model's network to FILE.png, .svg or .pdf:
      species, reactions, modifiers, compartments. Positions saved in the
      model's layout section are kept; the rest are placed automatically.
        --style S          plain (default, or the model's) or sbgn
        --layout L         auto (default), layered or force
        --at T             simulate and colour species by concentration
                           and lines by flux at time T
        --store            save the positions into MODEL.json

  steady MODEL.json [--json] [--control] [--time-unit U] [--concentration-unit U]
      Find the steady state reached from the model's initial state: every
      species, every reaction's flux, the conserved totals, the eigenvalues
      of the Jacobian reduced by the conservation laws and the verdict
      (stable node or focus, unstable, saddle, marginal). --json prints
      one JSON object (keys species, fluxes, totals, eigenvalues as
      [re, im] pairs, stable, classification); --control adds the scaled
      flux and concentration control coefficients (with --json also
      elasticities, parameter_sensitivity_species and
      parameter_sensitivity_fluxes). With display
      units (the model's, or the two unit flags) concentrations, fluxes,
      eigenvalues and times are converted and named (JSON key units).
      Exit status 1 when there is no steady state (the message says why).

  continue SPEC.json [--out DIR] [--quiet] [--time-unit U] [--concentration-unit U]
      Follow the steady state as one knob moves from "from" to "to"
      (spec format kinetarium.continuation/1), locating folds and Hopf
      points; writes branch.csv, points.csv and diagram.png to DIR (and,
      with "response", a Hill fit in hill.csv and dose-response.png).
      Display units convert the quantities, eigenvalues and periods; the
      knob keeps the model's unit.

  sensitivity SPEC.json [--out DIR] [--workers N] [--quiet] [--time-unit U] [--concentration-unit U]
      Global sensitivity of readouts to uncertain knobs (spec format
      kinetarium.sensitivity/1): variance-based first-order and total
      indices with bootstrap intervals (indices.csv, indices-READOUT.png), or
      Morris elementary effects (morris.csv; in the readout's shown unit
      with display units).

  help
      Print this text.

Exit status: 0 on success; 1 when a run fails (the message names the time
and the cause; what was computed is still written); 2 for bad input (the
message names the file, the field and what is expected); 3 for an internal
error (a bug: the message quotes the input that caused it). Ctrl-C or
SIGTERM stops simulate, sweep and population: what is complete is
written, marked partial, and the status is 1 (merge refuses a partial
shard).
`

// command is a subcommand: it gets the arguments after its name and
// returns the exit status.
type command func(args []string, stdout, stderr io.Writer) int

// commands are the subcommands by name.
var commands = map[string]command{}

// register adds a subcommand. Each subcommand registers itself once.
func register(name string, run command) {
	if _, dup := commands[name]; dup {
		panic("batch: subcommand " + name + " registered twice")
	}
	commands[name] = run
}

func init() {
	register("simulate", runSimulate)
	register("sweep", runSweep)
	register("population", runPopulation)
	register("merge", runMerge)
	register("fit", runFit)
}

func main() {
	os.Exit(dispatch(os.Args[1:], os.Stdout, os.Stderr))
}

// Exit statuses.
const (
	exitOK       = 0
	exitFailed   = 1 // a run failed
	exitBadInput = 2 // bad command line or input file
)

// dispatch runs the subcommand named by args[0].
func dispatch(args []string, stdout, stderr io.Writer) int {
	if len(args) == 0 {
		fmt.Fprint(stderr, usageText)
		return exitBadInput
	}
	switch args[0] {
	case "help", "-h", "-help", "--help":
		fmt.Fprint(stdout, usageText)
		return exitOK
	}
	run, ok := commands[args[0]]
	if !ok {
		names := make([]string, 0, len(commands))
		for n := range commands {
			names = append(names, n)
		}
		sort.Strings(names)
		fmt.Fprintf(stderr, "batch: unknown command %q; expected one of %s or help\n", args[0], strings.Join(names, ", "))
		return exitBadInput
	}
	return guard(args[0], args[1:], stderr, func() int { return run(args[1:], stdout, stderr) })
}

// parseAnywhere parses fs's flags wherever they stand among args (the flag
// package stops at the first argument that is not a flag) and returns the
// other arguments in order, or the error of fs.Parse.
func parseAnywhere(fs *flag.FlagSet, args []string) ([]string, error) {
	var pos []string
	for {
		if err := fs.Parse(args); err != nil {
			return pos, err
		}
		if args = fs.Args(); len(args) == 0 {
			return pos, nil
		}
		pos, args = append(pos, args[0]), args[1:]
	}
}
