//go:build sundials

// Command cmd compares Kinetarium's integrators with SUNDIALS CVODE (dense
// and KLU sparse linear solvers) on HIRES, POLLU, the 50-species example
// cascade and generated networks, prints a Markdown report and writes it to
// a file; with -profile it also profiles Kinetarium's solves of generated
// networks by stage and sets them beside CVODE–KLU's counters and stage
// times:
//
//	make cvode-compare
//	go run -tags sundials ./internal/cvodecmp/cmd [-sizes 200,1000] [-repeat 5] [-out bench/cvode-comparison.md]
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
	"kinetarium/internal/gennet"
	"kinetarium/network"
	"kinetarium/solve"
)

type options struct {
	out, testdata, examples string
	problems, methods       string
	sizes, rtols            string
	repeat                  int
	atolRatio               float64
	nonNeg                  bool
	denseMax                int
	profile                 string
	profileSizes            string
	feedbackSizes           string
	profileRTol             float64
	profileSeconds          float64
}

func main() {
	var o options
	flag.StringVar(&o.out, "out", "bench/cvode-comparison.md", "Markdown file to write; empty for none")
	flag.StringVar(&o.testdata, "testdata", "network/testdata", "folder with hires.json and pollu.json")
	flag.StringVar(&o.examples, "examples", "examples", "folder with signalling-cascade-50.json")
	flag.StringVar(&o.problems, "problems", "hires,pollu,casc50", "comma-separated fixed problems (hires, pollu, casc50); empty for none")
	flag.StringVar(&o.sizes, "sizes", "200,1000", "comma-separated species counts of generated networks (internal/gennet, multiples of 4)")
	flag.StringVar(&o.feedbackSizes, "feedback-sizes", "", "comma-separated species counts of generated networks with feedback loops (gennet.Feedback, multiples of 4); empty for none")
	flag.StringVar(&o.methods, "methods", "auto,bdf", "comma-separated Kinetarium methods (auto, bdf, radau, rosenbrock)")
	flag.StringVar(&o.rtols, "rtols", "1e-4,1e-5,1e-6,1e-7,1e-8,1e-9,1e-10", "comma-separated relative tolerances")
	flag.Float64Var(&o.atolRatio, "atol-ratio", 1e-6, "atol = rtol × this")
	flag.IntVar(&o.repeat, "repeat", 5, "timed solves per point; the minimum and median are reported")
	flag.BoolVar(&o.nonNeg, "nonneg", false, "turn on Kinetarium's non-negativity projection (CVODE runs without constraints)")
	flag.IntVar(&o.denseMax, "dense-max", 200, "largest network (species) on which dense CVODE runs")
	flag.StringVar(&o.profile, "profile", "", "Markdown file for the stage profiles (make cvode-compare: bench/solve-stages.md); empty for none")
	flag.StringVar(&o.profileSizes, "profile-sizes", "200,1000", "generated networks to profile")
	flag.Float64Var(&o.profileRTol, "profile-rtol", 1e-6, "relative tolerance of the profiled solves")
	flag.Float64Var(&o.profileSeconds, "profile-seconds", 6, "seconds of profiled solving per network")
	flag.Parse()
	if err := run(o); err != nil {
		fmt.Fprintln(os.Stderr, "cvodecmp:", err)
		os.Exit(1)
	}
}

func floats(name, list string, ok func(float64) bool) ([]float64, error) {
	var v []float64
	for _, f := range strings.Split(list, ",") {
		if f = strings.TrimSpace(f); f == "" {
			continue
		}
		x, err := strconv.ParseFloat(f, 64)
		if err != nil || !ok(x) {
			return nil, fmt.Errorf("-%s: %q is not valid here", name, f)
		}
		v = append(v, x)
	}
	return v, nil
}

// sizes parses a list of species counts of generated networks.
func sizes(name, list string) ([]int, error) {
	fs, err := floats(name, list, func(x float64) bool { return x >= 4 && x == float64(int(x)) && int(x)%4 == 0 && x <= 1e6 })
	if err != nil {
		return nil, fmt.Errorf("%w (want species counts that are multiples of 4, such as 200,1000)", err)
	}
	v := make([]int, len(fs))
	for i, f := range fs {
		v[i] = int(f)
	}
	return v, nil
}

// generated returns the generated network of n species (n/4 modules of
// internal/gennet's signalling network), run to t = 1000.
func generated(n int) (cvodecmp.Problem, error) {
	return cvodecmp.NetworkProblem(fmt.Sprintf("NET%d", n), gennet.Signalling(n/4), 1000)
}

func run(o options) error {
	if o.repeat < 1 {
		return fmt.Errorf("-repeat %d: want at least 1", o.repeat)
	}
	rtols, err := floats("rtols", o.rtols, func(x float64) bool { return x > 0 && x < 1 })
	if err != nil {
		return err
	}
	if !(o.atolRatio > 0) {
		return fmt.Errorf("-atol-ratio %g: want a positive number", o.atolRatio)
	}
	genSizes, err := sizes("sizes", o.sizes)
	if err != nil {
		return err
	}
	fbSizes, err := sizes("feedback-sizes", o.feedbackSizes)
	if err != nil {
		return err
	}
	var methods []solve.Method
	for _, m := range strings.Split(o.methods, ",") {
		switch m = strings.TrimSpace(m); m {
		case "auto":
			methods = append(methods, solve.Auto)
		case "bdf", "radau", "rosenbrock":
			methods = append(methods, solve.Method(m))
		case "":
		default:
			return fmt.Errorf("-methods: %q is not one of auto, bdf, radau, rosenbrock", m)
		}
	}

	var probs []cvodecmp.Problem
	var notes []string
	fixed, err := cvodecmp.Problems(o.testdata)
	if err != nil {
		return err
	}
	for _, name := range strings.Split(o.problems, ",") {
		switch name = strings.ToLower(strings.TrimSpace(name)); name {
		case "hires", "pollu":
			for _, p := range fixed {
				if strings.EqualFold(p.Name, name) {
					probs = append(probs, p)
				}
			}
		case "casc50":
			file := filepath.Join(o.examples, "signalling-cascade-50.json")
			m, err := network.Load(file)
			if err != nil {
				return err
			}
			// The example's own end time (its simulation block).
			p, err := cvodecmp.NetworkProblem("CASC50", m, 7200)
			if err != nil {
				return err
			}
			probs = append(probs, p)
		case "":
		default:
			return fmt.Errorf("-problems: %q is not one of hires, pollu, casc50", name)
		}
	}
	for _, n := range genSizes {
		p, err := generated(n)
		if err != nil {
			return err
		}
		probs = append(probs, p)
	}
	for _, n := range fbSizes {
		p, err := cvodecmp.NetworkProblem(fmt.Sprintf("FB%d", n), gennet.Feedback(n), 1000)
		if err != nil {
			return err
		}
		probs = append(probs, p)
	}
	for i := range probs {
		p := &probs[i]
		if p.Ref != nil {
			notes = append(notes, fmt.Sprintf("%s: %d species, t from 0 to %g; reference: %s.", p.Name, p.Sys.Dim(), p.TEnd, p.RefNote))
			continue
		}
		agree, err := cvodecmp.Reference(p)
		if err != nil {
			return err
		}
		rp, _ := p.Sys.JacobianPattern()
		notes = append(notes, fmt.Sprintf("%s: %d species, %d Jacobian nonzeros, t from 0 to %g; reference: %s, agreeing with CVODE–KLU at rtol 1e-12 to %.1f digits.",
			p.Name, p.Sys.Dim(), rp[len(rp)-1], p.TEnd, p.RefNote, agree))
		fmt.Fprintf(os.Stderr, "%s: reference agrees with CVODE–KLU to %.1f digits\n", p.Name, agree)
	}

	loadBefore := loadavg()
	var rows []cvodecmp.Row
	var costs []cvodecmp.EvalCost
	var kin []string
	for _, m := range methods {
		kin = append(kin, cvodecmp.MethodName(m))
	}
	for _, p := range probs {
		var cs []cvodecmp.Contender
		if p.HasC() {
			costs = append(costs, cvodecmp.MeasureEvalCost(p, 200000))
			c, err := cvodecmp.CVODEContender(p, cvodecmp.CRHS)
			if err != nil {
				return err
			}
			cs = append(cs, c)
		}
		if p.Sys.Dim() <= o.denseMax {
			c, err := cvodecmp.CVODEContender(p, cvodecmp.GoRHS)
			if err != nil {
				return err
			}
			cs = append(cs, c)
		}
		k, _, err := cvodecmp.KLUContender(p)
		if err != nil {
			return err
		}
		cs = append(cs, k)
		for _, m := range methods {
			cs = append(cs, cvodecmp.KinetariumContender(p, m, o.nonNeg))
		}
		for _, rt := range rtols {
			for _, r := range cvodecmp.Measure(p, rt, rt*o.atolRatio, o.repeat, cs) {
				rows = append(rows, r)
				fmt.Fprintf(os.Stderr, "%-7s %.0e %-20s digits %5.2f err %9.3g  %9.3f ms  %6d steps %5d LU %s\n",
					r.Problem, r.RTol, r.Solver, r.Digits, r.Err, float64(r.MinWall.Microseconds())/1000, r.Work.Steps, r.Work.Factorizations, r.Failed)
			}
		}
		for _, c := range cs {
			if c.Close != nil {
				c.Close()
			}
		}
	}
	cmd := "make cvode-compare"
	rs := cvodecmp.ReportSettings{
		Repeat: o.repeat, NonNegative: o.nonNeg, ATolRatio: o.atolRatio, Targets: []float64{5, 7},
		Load:    fmt.Sprintf("load average (1, 5, 15 min) %s before and %s after", loadBefore, loadavg()),
		Command: cmd, Notes: notes, Kinetarium: kin,
	}
	if o.denseMax < 1<<30 {
		rs.Notes = append(rs.Notes, fmt.Sprintf("Dense CVODE runs on networks of at most %d species (-dense-max).", o.denseMax))
	}
	report := cvodecmp.Report(rows, costs, rs)
	fmt.Print(report)
	if o.out != "" {
		if err := write(o.out, report); err != nil {
			return err
		}
	}
	if o.profile != "" {
		ps, err := sizes("profile-sizes", o.profileSizes)
		if err != nil {
			return err
		}
		md, err := profileStages(ps, o.profileRTol, o.atolRatio, o.profileSeconds, filepath.Dir(o.profile))
		if err != nil {
			return err
		}
		if err := write(o.profile, md); err != nil {
			return err
		}
	}
	return nil
}

func write(path, text string) error {
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		return err
	}
	return atomicfile.Write(path, []byte(text))
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
