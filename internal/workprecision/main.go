// Command workprecision measures the integrators of package solve on
// published stiff test problems and a generated network, and writes a
// work-precision report: a Markdown table and log–log figures of error
// against wall time and against LU factorizations.
//
// It is run by `make bench`, which writes bench/workprecision.md and the
// figures beside it:
//
//	go run ./internal/workprecision -out bench
//
// With -quick it measures BDF and Auto at rtol 1e-6 and 1e-8 only and
// prints the rows (a minute instead of many; nothing is written unless
// -out is given). -problems, -methods and -rtols narrow the run, for
// example to count instructions of a few solves under callgrind.
//
// Reference solutions: HIRES and POLLU from the Test Set for IVP Solvers
// (F. Mazzia and C. Magherini, University of Bari, release 2.4); the
// 50-species cascade of examples/ and the generated 200-species network
// against Radau IIA at rtol 1e-12 (the same code's tightest setting, so
// those rows check consistency, not truth; TestReferences checks that
// Rosenbrock at rtol 1e-11 agrees with them).
package main

import (
	"cmp"
	"context"
	"flag"
	"fmt"
	"image/color"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"strconv"
	"strings"
	"time"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"

	"kinetarium/internal/gennet"
	"kinetarium/network"
	"kinetarium/plotting"
	"kinetarium/solve"
)

// problem is one test problem with its reference states at the output
// times: the end time alone for the Test Set problems (their references
// give no more), a log-spaced grid over the whole run for the networks.
type problem struct {
	name  string
	sys   *network.System
	tEnd  float64
	atol  float64
	times []float64
	ref   [][]float64
}

// row is one measured point of the report.
type row struct {
	problem      string
	method       solve.Method
	rtol         float64
	err          float64 // scaled error max |y−ref|/(atol+rtol|ref|) over the output times
	errEnd       float64 // the same at the end time alone
	relErr       float64 // max |y−ref|/|ref| over components with |ref| > 1000·atol
	wall         time.Duration
	stats        solve.Stats
	allocsPerStp float64
	failed       string
}

func main() {
	out := flag.String("out", "", "folder for the report and figures (make bench: bench)")
	repeat := flag.Int("repeat", 5, "solves per point; the median wall time is reported")
	quick := flag.Bool("quick", false, "BDF and Auto at rtol 1e-6 and 1e-8 only")
	only := flag.String("methods", "", "comma-separated methods to measure instead (auto, rosenbrock, radau, bdf, explicit)")
	rtolList := flag.String("rtols", "", "comma-separated relative tolerances to measure instead")
	probList := flag.String("problems", "", "comma-separated problems to measure instead of all (HIRES, POLLU, CASC50, NET200, CASCn, FBn)")
	flag.StringVar(&largeSizes, "large", "5000,20000", "comma-separated species counts of the large generated cascades (CASCn; auto and BDF only); empty for none")
	flag.StringVar(&feedbackSizes, "feedback", "5000", "comma-separated species counts of the large generated networks with feedback (FBn); empty for none")
	flag.Parse()
	if *probList != "" {
		want := map[string]bool{}
		for _, n := range strings.Split(*probList, ",") {
			want[strings.ToUpper(strings.TrimSpace(n))] = true
		}
		include = func(name string) bool { return want[name] }
	}
	if err := run(*out, *repeat, *quick, *only, *rtolList); err != nil {
		fmt.Fprintln(os.Stderr, "workprecision:", err)
		os.Exit(1)
	}
}

// largeSizes and feedbackSizes are the -large and -feedback lists.
var largeSizes, feedbackSizes string

func run(out string, repeat int, quick bool, only, rtolList string) error {
	probs, err := problems()
	if err != nil && !strings.HasPrefix(err.Error(), "-problems") {
		return err
	}
	methods := []solve.Method{solve.Auto, solve.Rosenbrock, solve.Radau, solve.BDF, solve.Explicit}
	rtols := []float64{1e-4, 1e-5, 1e-6, 1e-7, 1e-8, 1e-9, 1e-10}
	if quick {
		methods = []solve.Method{solve.BDF, solve.Auto}
		rtols = []float64{1e-6, 1e-8}
	}
	if rtolList != "" {
		rtols = nil
		for _, f := range strings.Split(rtolList, ",") {
			x, err := strconv.ParseFloat(f, 64)
			if err != nil {
				return fmt.Errorf("-rtols: %w", err)
			}
			rtols = append(rtols, x)
		}
	}
	if only != "" {
		methods = nil
		for _, m := range strings.Split(only, ",") {
			if m == "auto" {
				m = ""
			}
			methods = append(methods, solve.Method(m))
		}
	}
	var rows []row
	for _, p := range probs {
		for _, m := range methods {
			for _, rt := range rtols {
				r := measure(p, m, rt, repeat)
				rows = append(rows, r)
				fmt.Fprintf(os.Stderr, "%-8s %-10s rtol %.0e: scaled error end %8.3g run %8.3g  %9.3f ms  %5d steps %5d LU %6d RHS %4d Jac %4d rej %s\n",
					p.name, name(m), rt, r.errEnd, r.err, float64(r.wall.Microseconds())/1000, r.stats.Steps, r.stats.Factorizations, r.stats.RHSEvals, r.stats.JacobianEvals, r.stats.Rejected, r.failed)
			}
		}
	}
	var large []problem
	var stageRows []stageRow
	var lrows []row
	if !quick {
		cs, err1 := intList("large", largeSizes)
		fs, err2 := intList("feedback", feedbackSizes)
		if err1 != nil || err2 != nil {
			return cmp.Or(err1, err2)
		}
		lrtols := largeRTols
		if rtolList != "" {
			lrtols = rtols
		}
		large, stageRows, err = largeProblems(cs, fs, func(p problem, st *[]stageRow) {
			lrows = append(lrows, measureLarge(p, lrtols, min(repeat, 3), st)...)
		})
		if err != nil {
			return err
		}
	}
	if len(probs)+len(large) == 0 {
		return fmt.Errorf("-problems: none of HIRES, POLLU, CASC50, NET200, CASCn or FBn named")
	}
	rows = append(rows, lrows...)
	probs = append(probs, large...)
	if out == "" {
		return nil
	}
	if err := os.MkdirAll(out, 0o755); err != nil {
		return err
	}
	if err := os.WriteFile(filepath.Join(out, "workprecision.md"), []byte(report(rows, repeat)+stageReport(stageRows, min(repeat, 3))), 0o644); err != nil {
		return err
	}
	for _, p := range probs {
		for _, x := range []string{"time", "lu"} {
			if err := figure(rows, p.name, x, filepath.Join(out, fmt.Sprintf("wp-%s-%s.png", strings.ToLower(p.name), x))); err != nil {
				return err
			}
		}
	}
	return nil
}

// intList parses a comma-separated list of species counts.
func intList(flagName, list string) ([]int, error) {
	var v []int
	for _, f := range strings.Split(list, ",") {
		if f = strings.TrimSpace(f); f == "" {
			continue
		}
		n, err := strconv.Atoi(f)
		if err != nil || n < 4 || n > 1000000 {
			return nil, fmt.Errorf("-%s: %q is not a species count from 4 to 10⁶", flagName, f)
		}
		v = append(v, n)
	}
	return v, nil
}

func name(m solve.Method) string {
	if m == solve.Auto {
		return "auto"
	}
	return string(m)
}

// root is the module's root folder, relative to the working directory:
// "." for `go run ./internal/workprecision`, "../.." for its test.
var root = "."

// include says whether a problem is measured (-problems).
var include = func(name string) bool { return true }

// problems loads HIRES and POLLU from network/testdata and the 50-species
// cascade from examples/, and generates the 200-species network (those of
// them that include accepts).
func problems() ([]problem, error) {
	var ps []problem
	for _, f := range []struct {
		name, file string
		tEnd, atol float64
		ref        []float64
	}{
		// Reference values: Test Set for IVP Solvers (Mazzia & Magherini,
		// University of Bari, release 2.4).
		{"HIRES", "network/testdata/hires.json", 321.8122, 1e-12, []float64{
			0.7371312573325668e-3, 0.1442485726316185e-3, 0.5888729740967575e-4, 0.1175651343283149e-2,
			0.2386356198831331e-2, 0.6238968252742796e-2, 0.2849998395185769e-2, 0.2850001604814231e-2}},
		{"POLLU", "network/testdata/pollu.json", 60, 1e-14, []float64{
			0.5646255480022769e-1, 0.1342484130422339, 0.4139734331099427e-8, 0.5523140207484359e-2,
			0.2018977262302196e-6, 0.1464541863493966e-6, 0.7784249118997964e-1, 0.3245075353396018,
			0.7494013383880406e-2, 0.1622293157301561e-7, 0.1135863833257075e-7, 0.2230505975721359e-2,
			0.2087162882798630e-3, 0.1396921016840158e-4, 0.8964884856898295e-2, 0.4352846369330103e-17,
			0.6899219696263405e-2, 0.1007803037365946e-3, 0.1772146513969984e-5, 0.5682943292316392e-4}},
	} {
		if !include(f.name) {
			continue
		}
		m, err := network.Load(filepath.Join(root, f.file))
		if err != nil {
			return nil, err
		}
		sys, err := network.Compile(m)
		if err != nil {
			return nil, err
		}
		ps = append(ps, problem{f.name, sys, f.tEnd, f.atol, []float64{f.tEnd}, [][]float64{f.ref}})
	}
	if include("CASC50") {
		m, err := network.Load(filepath.Join(root, "examples/signalling-cascade-50.json"))
		if err != nil {
			return nil, err
		}
		sys, err := network.Compile(m)
		if err != nil {
			return nil, err
		}
		// The example's own end time and atol (its simulation block).
		c := problem{name: "CASC50", sys: sys, tEnd: 7200, atol: 1e-10, times: solve.LogTimes(1e-3, 7200, 200)}
		if c.ref, err = reference(c, solve.Radau, 1e-12); err != nil {
			return nil, fmt.Errorf("reference for the 50-species cascade: %w", err)
		}
		ps = append(ps, c)
	}
	if include("NET200") {
		sys, err := network.Compile(gennet.Signalling(50))
		if err != nil {
			return nil, fmt.Errorf("generated network: %w", err)
		}
		g := problem{name: "NET200", sys: sys, tEnd: 1000, atol: 1e-12, times: solve.LogTimes(1e-3, 1000, 200)}
		if g.ref, err = reference(g, solve.Radau, 1e-12); err != nil {
			return nil, fmt.Errorf("reference for the generated network: %w", err)
		}
		ps = append(ps, g)
	}
	if len(ps) == 0 {
		return nil, fmt.Errorf("-problems: none of HIRES, POLLU, CASC50, NET200 named")
	}
	return ps, nil
}

// reference solves p with method m at rtol and atol 1e-16 and returns the
// states at p.times. The integrator lands on every output time (StopTimes),
// so that the reference is a step's end point, not an interpolated value.
func reference(p problem, m solve.Method, rtol float64) ([][]float64, error) {
	stops := slices.DeleteFunc(slices.Clone(p.times), func(t float64) bool { return t <= 0 || t >= p.tEnd })
	res, err := solve.Solve(context.Background(), p.sys, 0, p.tEnd, p.sys.Initial(),
		solve.Settings{Method: m, RTol: rtol, ATol: 1e-16, Times: p.times, StopTimes: stops, NonNegative: true})
	if err != nil {
		return nil, err
	}
	ref := make([][]float64, len(res.Y))
	for i, y := range res.Y {
		ref[i] = slices.Clone(y)
	}
	return ref, nil
}

// measure solves p with method m at rtol, repeat times, and reports the
// median wall time, the stats of the last solve and the scaled error.
func measure(p problem, m solve.Method, rtol float64, repeat int) row {
	r := row{problem: p.name, method: m, rtol: rtol}
	s := solve.Settings{Method: m, RTol: rtol, ATol: p.atol, Times: p.times, NonNegative: true}
	if m == solve.Explicit {
		// On stiff problems the explicit method is held by stability; a
		// cap keeps the report quick and the row says it failed.
		s.MaxSteps = 100000
	}
	sv := solve.NewSolver(p.sys, s)
	y0 := p.sys.Initial()
	var walls []time.Duration
	var ms0, ms1 runtime.MemStats
	for i := 0; i < repeat; i++ {
		runtime.ReadMemStats(&ms0)
		t0 := time.Now()
		res, err := oneSolve(sv, p.tEnd, y0)
		walls = append(walls, time.Since(t0))
		runtime.ReadMemStats(&ms1)
		if err != nil {
			r.failed = err.Error()
			if res != nil {
				r.stats = res.Stats
			}
			r.err = math.Inf(1)
			break
		}
		r.stats = res.Stats
		r.err, r.relErr = errors(p, rtol, res.Y)
		last := len(p.times) - 1
		r.errEnd, _ = errors(problem{atol: p.atol, times: p.times[last:], ref: p.ref[last:]}, rtol, res.Y[last:])
		if r.stats.Steps > 0 {
			r.allocsPerStp = float64(ms1.Mallocs-ms0.Mallocs) / float64(r.stats.Steps)
		}
	}
	slices.Sort(walls)
	r.wall = walls[len(walls)/2]
	return r
}

// oneSolve is one timed solve, kept out of line so that an instruction
// count can be limited to the solves (valgrind --tool=callgrind
// --toggle-collect=main.oneSolve; bench/bdf-tight-tolerance.md).
//
//go:noinline
func oneSolve(sv *solve.Solver, tEnd float64, y0 []float64) (*solve.Result, error) {
	return sv.Solve(context.Background(), 0, tEnd, y0)
}

// errors returns the scaled error max |y − ref|/(atol + rtol·|ref|) and
// the relative error max |y − ref|/|ref| (over |ref| > 1000·atol) of the
// states ys at p.times.
func errors(p problem, rtol float64, ys [][]float64) (scaled, rel float64) {
	for i, y := range ys {
		for j, ref := range p.ref[i] {
			d := math.Abs(y[j] - ref)
			scaled = math.Max(scaled, d/(p.atol+rtol*math.Abs(ref)))
			if math.Abs(ref) > 1000*p.atol {
				rel = math.Max(rel, d/math.Abs(ref))
			}
		}
	}
	return scaled, rel
}

func report(rows []row, repeat int) string {
	var b strings.Builder
	fmt.Fprintf(&b, "# Work-precision report\n\nMeasured %s on %s/%s with %d CPUs (GOMAXPROCS %d); wall time is the median of %d solves.\n",
		time.Now().UTC().Format("2006-01-02"), runtime.GOOS, runtime.GOARCH, runtime.NumCPU(), runtime.GOMAXPROCS(0), repeat)
	b.WriteString("Scaled error = max_i |y_i − ref_i| / (atol + rtol·|ref_i|), at the end time (\"end\") and over all output times (\"run\": the end time alone for HIRES and POLLU, whose published references give no more; 200 log-spaced times from 10⁻³ for the networks); relative error = max_i |y_i − ref_i| / |ref_i| over the output times and the components with |ref_i| > 1000·atol (the figures plot this one, so that tolerances compare). References: HIRES and POLLU from the Test Set for IVP Solvers (Mazzia & Magherini, release 2.4); CASC50 (examples/signalling-cascade-50.json, its own t_end 7200 and atol 1e-10) and NET200 (generated, 200 species) from Radau IIA at rtol 1e-12 landing on every output time. Allocations per step count the whole solve (set-up included) divided by its steps. Radau counts two factorizations (one real, one complex) per iteration matrix.\n\n")
	b.WriteString("| problem | method | rtol | scaled error (end) | scaled error (run) | relative error | wall (ms) | steps | rejected | RHS | Jacobians | LU | allocs/step |\n|---|---|---|---|---|---|---|---|---|---|---|---|---|\n")
	for _, r := range rows {
		e, er := fmt.Sprintf("%.3g", r.errEnd), fmt.Sprintf("%.3g", r.err)
		if r.failed != "" {
			e, er = "failed: "+r.failed, "–"
		}
		fmt.Fprintf(&b, "| %s | %s | %.0e | %s | %s | %.2e | %.3f | %d | %d | %d | %d | %d | %.2f |\n", r.problem, name(r.method), r.rtol, e, er, r.relErr,
			float64(r.wall.Microseconds())/1000, r.stats.Steps, r.stats.Rejected, r.stats.RHSEvals, r.stats.JacobianEvals, r.stats.Factorizations, r.allocsPerStp)
	}
	return b.String()
}

// figure draws scaled error against wall time (x == "time") or against LU
// factorizations (x == "lu") for one problem, one line per method.
func figure(rows []row, prob, x, path string) error {
	p := plot.New()
	p.Title.Text = prob + ": work against precision"
	p.X.Scale, p.Y.Scale = plot.LogScale{}, plot.LogScale{}
	p.X.Tick.Marker, p.Y.Tick.Marker = plot.LogTicks{Prec: 1}, plot.LogTicks{Prec: 1}
	p.Y.Label.Text = "relative error over the output times"
	p.X.Label.Text = "wall time (ms)"
	if x == "lu" {
		p.X.Label.Text = "LU factorizations"
	}
	slot := 0
	for _, m := range []solve.Method{solve.Auto, solve.Rosenbrock, solve.Radau, solve.BDF, solve.Explicit} {
		var xy plotter.XYs
		for _, r := range rows {
			if r.problem != prob || r.method != m || r.failed != "" || r.relErr <= 0 {
				continue
			}
			v := float64(r.wall.Nanoseconds()) / 1e6
			if x == "lu" {
				v = float64(r.stats.Factorizations)
			}
			if v > 0 {
				xy = append(xy, plotter.XY{X: v, Y: r.relErr})
			}
		}
		if len(xy) == 0 {
			continue
		}
		l, pts, err := plotter.NewLinePoints(xy)
		if err != nil {
			return err
		}
		l.Color = plotting.Colour(slot)
		l.Width = vg.Points(1.5)
		pts.Color = l.Color
		pts.Shape = nil
		p.Add(l, pts)
		p.Legend.Add(name(m), l)
		slot++
	}
	p.Legend.Top = true
	p.BackgroundColor = color.White
	// Whole decades on both axes, so that every axis has labelled ticks.
	p.X.Min, p.X.Max = decade(p.X.Min, math.Floor), decade(p.X.Max, math.Ceil)
	p.Y.Min, p.Y.Max = decade(p.Y.Min, math.Floor), decade(p.Y.Max, math.Ceil)
	return plotting.Save(p, path, 16*vg.Centimeter, 11*vg.Centimeter, 150, nil)
}

// decade rounds v > 0 to a power of ten with round (math.Floor or math.Ceil).
func decade(v float64, round func(float64) float64) float64 {
	if v <= 0 {
		return v
	}
	return math.Pow(10, round(math.Log10(v)))
}
