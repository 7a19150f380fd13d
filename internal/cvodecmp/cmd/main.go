//go:build sundials

// Command cmd compares Kinetarium's integrators with SUNDIALS CVODE on HIRES
// and POLLU, prints a Markdown table and writes it to a file:
//
//	scripts/install-sundials.sh
//	go run -tags sundials ./internal/cvodecmp/cmd [-repeat 20] [-out bench/cvode-comparison.md]
//
// Run it from the repository root, on a quiet machine.
package main

import (
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"kinetarium/internal/atomicfile"
	"kinetarium/internal/cvodecmp"
	"kinetarium/solve"
)

func main() {
	out := flag.String("out", "bench/cvode-comparison.md", "Markdown file to write; empty for none")
	dir := flag.String("testdata", "network/testdata", "folder with hires.json and pollu.json")
	repeat := flag.Int("repeat", 20, "timed solves per point; the median is reported")
	rtols := flag.String("rtols", "1e-6,1e-8,1e-10", "comma-separated relative tolerances")
	nonNeg := flag.Bool("nonneg", false, "turn on Kinetarium's non-negativity projection (CVODE runs without constraints)")
	flag.Parse()
	if err := run(*out, *dir, *rtols, *repeat, *nonNeg); err != nil {
		fmt.Fprintln(os.Stderr, "cvodecmp:", err)
		os.Exit(1)
	}
}

func run(out, dir, rtolList string, repeat int, nonNeg bool) error {
	if repeat < 1 {
		return fmt.Errorf("-repeat %d: want at least 1", repeat)
	}
	var rtols []float64
	for _, f := range strings.Split(rtolList, ",") {
		v, err := strconv.ParseFloat(strings.TrimSpace(f), 64)
		if err != nil || !(v > 0 && v < 1) {
			return fmt.Errorf("-rtols: %q is not a tolerance between 0 and 1", f)
		}
		rtols = append(rtols, v)
	}
	probs, err := cvodecmp.Problems(dir)
	if err != nil {
		return err
	}
	loadBefore := loadavg()
	var rows []cvodecmp.Row
	var costs []cvodecmp.EvalCost
	for _, p := range probs {
		costs = append(costs, cvodecmp.MeasureEvalCost(p, 200000))
		var cs []cvodecmp.Contender
		for _, rhs := range []cvodecmp.RHS{cvodecmp.CRHS, cvodecmp.GoRHS} {
			c, err := cvodecmp.CVODEContender(p, rhs)
			if err != nil {
				return err
			}
			defer c.Close()
			cs = append(cs, c)
		}
		for _, m := range []solve.Method{solve.Auto, solve.BDF, solve.Radau, solve.Rosenbrock} {
			cs = append(cs, cvodecmp.KinetariumContender(p, m, nonNeg))
		}
		for _, rt := range rtols {
			for _, r := range cvodecmp.Measure(p, rt, repeat, cs) {
				rows = append(rows, r)
				fmt.Fprintf(os.Stderr, "%-6s %.0e %-16s err %9.3g  %8.3f ms  %5d steps %5d LU %s\n",
					r.Problem, r.RTol, r.Solver, r.Err, float64(r.Wall.Microseconds())/1000, r.Work.Steps, r.Work.Factorizations, r.Failed)
			}
		}
	}
	load := fmt.Sprintf("load average (1, 5, 15 min) %s before and %s after", loadBefore, loadavg())
	report := cvodecmp.Report(rows, costs, repeat, nonNeg, load)
	fmt.Print(report)
	if out == "" {
		return nil
	}
	if err := os.MkdirAll(filepath.Dir(out), 0o755); err != nil {
		return err
	}
	return atomicfile.Write(out, []byte(report))
}

// loadavg returns the first three fields of /proc/loadavg, or "unknown".
func loadavg() string {
	b, err := os.ReadFile("/proc/loadavg")
	if err != nil {
		return "unknown"
	}
	f := strings.Fields(string(b))
	if len(f) < 3 {
		return "unknown"
	}
	return strings.Join(f[:3], ", ")
}
