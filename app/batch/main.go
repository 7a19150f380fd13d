// Command batch runs Kinetarium models without the desktop program: one
// simulation to a CSV table and a figure, parameter sweeps, virtual
// populations and the merging of sharded runs. It is pure Go and builds
// with CGO_ENABLED=0, for servers and clusters.
//
// Usage:
//
//	batch simulate MODEL.json [flags]
//	batch sweep SPEC.json [flags]
//	batch population SPEC.json [flags]
//	batch merge PART.json... --out DIR
//	batch steady MODEL.json [--json] [--control]
//	batch continue SPEC.json [--out DIR]
//	batch sensitivity SPEC.json [--out DIR] [--workers N]
//	batch help
//
// Run "batch help" for the flags. Exit status: 0 on success, 1 when a run
// fails, 2 for bad input.
package main

import (
	"fmt"
	"io"
	"os"
	"sort"
	"strings"
)

// usageText is the help of every subcommand, printed by "batch help", by -h
// and with errors in the command line.
const usageText = `usage: batch COMMAND [arguments]

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
        --repeat N         solve N times and report the median solve time

  sweep SPEC.json [--out DIR] [--shard i/n] [--workers N] [--quiet]
      Vary one or two parameters over a grid and write readouts, tables
      and figures to DIR.

  population SPEC.json [--out DIR] [--shard i/n] [--workers N] [--quiet]
      Simulate a virtual population with sampled parameters and write
      samples, percentile bands and figures to DIR.

  merge PART.json... --out DIR
      Join the partial results of a sharded sweep or population.

  steady MODEL.json [--json] [--control]
      Find the steady state reached from the model's initial state: every
      species, every reaction's flux, the conserved totals, the eigenvalues
      of the Jacobian reduced by the conservation laws and the verdict
      (stable node or focus, unstable, saddle, marginal). --json prints
      one JSON object (keys species, fluxes, totals, eigenvalues as
      [re, im] pairs, stable, classification); --control adds the scaled
      elasticities, flux_control and concentration_control. Exit status 1
      when there is no steady state (the message says why).

  continue SPEC.json [--out DIR] [--quiet]
      Follow the steady state as one knob moves from "from" to "to"
      (spec format kinetarium.continuation/1), locating folds and Hopf
      points; writes branch.csv, points.csv and diagram.png to DIR (and,
      with "response", a Hill fit in hill.csv and dose-response.png).

  sensitivity SPEC.json [--out DIR] [--workers N] [--quiet]
      Global sensitivity of readouts to uncertain knobs (spec format
      kinetarium.sensitivity/1): variance-based first-order and total
      indices with bootstrap intervals (indices.csv, indices.png), or
      Morris elementary effects (morris.csv).

  help
      Print this text.

Exit status: 0 on success; 1 when a run fails (the message names the time
and the cause; what was computed is still written); 2 for bad input (the
message names the file, the field and what is expected).
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
	return run(args[1:], stdout, stderr)
}
