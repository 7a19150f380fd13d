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
//	batch merge PART.json... --out DIR
//	batch diagram MODEL.json --out FILE [flags]
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

  diagram MODEL.json --out FILE [flags]
      Lay out and draw the model's network to FILE.png, .svg or .pdf:
      species, reactions, modifiers, compartments. Positions saved in the
      model's layout section are kept; the rest are placed automatically.
        --style S          plain (default, or the model's) or sbgn
        --layout L         auto (default), layered or force
        --at T             simulate and colour species by concentration
                           and lines by flux at time T
        --store            save the positions into MODEL.json

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
