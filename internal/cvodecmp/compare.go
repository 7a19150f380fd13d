//go:build sundials

package cvodecmp

import (
	"context"
	"fmt"
	"math"
	"path/filepath"
	"runtime"
	"slices"
	"strings"
	"time"

	"gonum.org/v1/gonum/mat"

	"kinetarium/network"
	"kinetarium/solve"
)

// Problem is a published stiff test problem with its reference state at
// the end time.
type Problem struct {
	Name string
	Sys  *network.System // the compiled network from network/testdata
	TEnd float64
	ATol float64 // absolute tolerance of the comparison
	Ref  []float64
	id   int // the C problem in cvode.go
}

// Problems loads HIRES and POLLU from dir (network/testdata of the
// repository) and compiles them.
//
// Reference states: Test Set for IVP Solvers, F. Mazzia and C. Magherini,
// University of Bari, release 2.4 (copied in /work/shared/reference).
func Problems(dir string) ([]Problem, error) {
	ps := []Problem{
		{Name: "HIRES", TEnd: 321.8122, ATol: 1e-12, id: 0, Ref: []float64{
			0.7371312573325668e-3, 0.1442485726316185e-3, 0.5888729740967575e-4, 0.1175651343283149e-2,
			0.2386356198831331e-2, 0.6238968252742796e-2, 0.2849998395185769e-2, 0.2850001604814231e-2}},
		{Name: "POLLU", TEnd: 60, ATol: 1e-14, id: 1, Ref: []float64{
			0.5646255480022769e-1, 0.1342484130422339, 0.4139734331099427e-8, 0.5523140207484359e-2,
			0.2018977262302196e-6, 0.1464541863493966e-6, 0.7784249118997964e-1, 0.3245075353396018,
			0.7494013383880406e-2, 0.1622293157301561e-7, 0.1135863833257075e-7, 0.2230505975721359e-2,
			0.2087162882798630e-3, 0.1396921016840158e-4, 0.8964884856898295e-2, 0.4352846369330103e-17,
			0.6899219696263405e-2, 0.1007803037365946e-3, 0.1772146513969984e-5, 0.5682943292316392e-4}},
	}
	for i := range ps {
		p := &ps[i]
		file := filepath.Join(dir, strings.ToLower(p.Name)+".json")
		m, err := network.Load(file)
		if err != nil {
			return nil, fmt.Errorf("cvodecmp: %w", err)
		}
		if p.Sys, err = network.Compile(m); err != nil {
			return nil, fmt.Errorf("cvodecmp: compiling %s: %w", file, err)
		}
		if p.Sys.Dim() != len(p.Ref) {
			return nil, fmt.Errorf("cvodecmp: %s has %d species, want %d", file, p.Sys.Dim(), len(p.Ref))
		}
	}
	return ps, nil
}

// ScaledError returns max_i |y_i − ref_i| / (atol + rtol·|ref_i|).
func ScaledError(y, ref []float64, atol, rtol float64) float64 {
	e := 0.0
	for i, r := range ref {
		e = math.Max(e, math.Abs(y[i]-r)/(atol+rtol*math.Abs(r)))
	}
	if slices.ContainsFunc(y, math.IsNaN) {
		return math.NaN()
	}
	return e
}

// Row is one measured point: one solver on one problem at one tolerance.
type Row struct {
	Problem string
	Solver  string // "cvode", "cvode (Go f, J)" or a Kinetarium method
	RTol    float64
	Err     float64       // scaled error at the end time
	Wall    time.Duration // median over the repeated solves
	MinWall time.Duration // fastest of the repeated solves
	Work    Work
	Failed  string // why the solve failed; empty on success
}

// Contender is one solver under comparison, set up for one problem.
type Contender struct {
	Name string
	// Solve integrates the problem from 0 to its end time at rtol and
	// returns the end state, the work done and the wall time.
	Solve func(rtol float64) (y []float64, w Work, wall time.Duration, err error)
	// Close frees what the contender holds; it may be nil.
	Close func()
}

// CVODEContender returns CVODE on p with f and J from rhs.
func CVODEContender(p Problem, rhs RHS) (Contender, error) {
	c, err := NewCVODE(p, rhs)
	if err != nil {
		return Contender{}, err
	}
	name := "cvode"
	if rhs == GoRHS {
		name = "cvode (Go f, J)"
	}
	return Contender{Name: name, Solve: c.Solve, Close: c.Close}, nil
}

// KinetariumContender returns method m of package solve on p: one
// solve.Solver per tolerance, reused across solves, with the output at the
// end time only.
func KinetariumContender(p Problem, m solve.Method, nonNegative bool) Contender {
	name := string(m)
	if m == solve.Auto {
		name = "auto"
	}
	sys := p.Sys.Clone()
	y0 := sys.Initial()
	var sv *solve.Solver
	svTol := math.NaN()
	run := func(rtol float64) ([]float64, Work, time.Duration, error) {
		if rtol != svTol {
			sv = solve.NewSolver(sys, solve.Settings{Method: m, RTol: rtol, ATol: p.ATol, Times: []float64{p.TEnd}, NonNegative: nonNegative})
			svTol = rtol
		}
		start := time.Now()
		res, err := sv.Solve(context.Background(), 0, p.TEnd, y0)
		wall := time.Since(start)
		var w Work
		if res != nil {
			s := res.Stats
			w = Work{Steps: s.Steps, Rejected: s.Rejected, RHSEvals: s.RHSEvals, JacobianEvals: s.JacobianEvals, Factorizations: s.Factorizations}
		}
		if err != nil {
			return nil, w, wall, fmt.Errorf("%s on %s: %w", name, p.Name, err)
		}
		return res.Y[len(res.Y)-1], w, wall, nil
	}
	return Contender{Name: name, Solve: run}
}

// Measure solves p at rtol with every contender: one untimed warm-up solve
// each, then repeat rounds in which each contender solves once, so that
// changes in the machine's load fall on all of them alike. Each row has the
// median and minimum wall time, the work of the last solve and its scaled
// error.
func Measure(p Problem, rtol float64, repeat int, cs []Contender) []Row {
	rows := make([]Row, len(cs))
	walls := make([][]time.Duration, len(cs))
	for i, c := range cs {
		rows[i] = Row{Problem: p.Name, Solver: c.Name, RTol: rtol}
	}
	for round := -1; round < repeat; round++ {
		for i, c := range cs {
			if rows[i].Failed != "" {
				continue
			}
			y, w, wall, err := c.Solve(rtol)
			rows[i].Work = w
			if err != nil {
				rows[i].Failed = err.Error()
				rows[i].Err = math.Inf(1)
				continue
			}
			rows[i].Err = ScaledError(y, p.Ref, p.ATol, rtol)
			if round >= 0 {
				walls[i] = append(walls[i], wall)
			}
		}
	}
	for i := range rows {
		rows[i].Wall, rows[i].MinWall = median(walls[i])
	}
	return rows
}

func median(d []time.Duration) (med, low time.Duration) {
	if len(d) == 0 {
		return 0, 0
	}
	slices.Sort(d)
	return d[len(d)/2], d[0]
}

// EvalCost is the time of one evaluation of f and of J, in C and through
// the compiled Go network.System, at the problem's initial state.
type EvalCost struct {
	Problem      string
	CRHS, CJac   time.Duration
	GoRHS, GoJac time.Duration
}

// MeasureEvalCost times reps evaluations of each of f and J of p.
func MeasureEvalCost(p Problem, reps int) EvalCost {
	y := p.Sys.Initial()
	for i := range y { // a state with every species present
		y[i] += 1e-3 * float64(i+1)
	}
	ec := EvalCost{Problem: p.Name, CRHS: cEvalCost(p, false, y, reps), CJac: cEvalCost(p, true, y, reps)}
	sys := p.Sys.Clone()
	f := make([]float64, len(y))
	start := time.Now()
	for range reps {
		sys.RHS(0, y, f)
	}
	ec.GoRHS = time.Since(start) / time.Duration(reps)
	jac := mat.NewDense(len(y), len(y), nil)
	start = time.Now()
	for range reps {
		sys.Jacobian(0, y, jac)
	}
	ec.GoJac = time.Since(start) / time.Duration(reps)
	return ec
}

// Report formats the rows and evaluation costs as Markdown.
func Report(rows []Row, costs []EvalCost, repeat int, nonNegative bool, load string) string {
	var b strings.Builder
	b.WriteString("# Kinetarium's integrators against SUNDIALS CVODE\n\n")
	fmt.Fprintf(&b, "Measured %s on %s/%s, %d CPUs (GOMAXPROCS %d), %s; %s.\n",
		time.Now().UTC().Format("2006-01-02 15:04 UTC"), runtime.GOOS, runtime.GOARCH, runtime.NumCPU(), runtime.GOMAXPROCS(0), runtime.Version(), load)
	b.WriteString("Generated by `go run -tags sundials ./internal/cvodecmp/cmd` (set up CVODE first with `scripts/install-sundials.sh`).\n\n")
	b.WriteString("- **cvode**: SUNDIALS CVODE 6.4.1 from Debian 12 (`libsundials-cvode6`): BDF orders 1–5, Newton iteration, dense SUNMatrix with SUNLinSol_Dense, exact user Jacobian, all other settings CVODE's defaults (max steps raised to 10⁶), stop time at the end time; f and J of HIRES and POLLU written in C as in the Test Set's problem files, compiled with `-O2`.\n")
	b.WriteString("- **cvode (Go f, J)**: the same CVODE calling back through cgo into Kinetarium's compiled network.System, so that both libraries use the same f and J.\n")
	fmt.Fprintf(&b, "- **auto, bdf, radau, rosenbrock**: `solve.Solver` of Kinetarium (one Solver reused for the repeats), output at the end time only, NonNegative %v.\n", nonNegative)
	fmt.Fprintf(&b, "- Same rtol and atol for all (HIRES atol 1e-12, POLLU atol 1e-14). Scaled error = max_i |y_i − ref_i| / (atol + rtol·|ref_i|) at the end time, against the reference solutions of the Test Set for IVP Solvers (Mazzia & Magherini, University of Bari, release 2.4). Wall time: median (and minimum) of %d solves. LU = LU factorizations (for CVODE, `CVodeGetNumLinSolvSetups`: each setup factorizes I − γJ; for radau, and auto when it picks Radau, each Newton matrix counts 2: one real and one complex n×n factorization). Jac = Jacobian evaluations; CVODE reuses J across setups.\n\n", repeat)
	b.WriteString("Error × rtol is roughly the relative error reached, for comparing rows at different tolerances (work against precision). The two ratio columns divide by the row of CVODE with f and J in C at the same problem and rtol (below 1: less than CVODE); the wall-time ratio uses the minimum, which varies least from run to run on a shared machine (the median moves with other jobs' load).\n\n")
	b.WriteString("| problem | rtol | solver | scaled error | error × rtol | wall median (ms) | wall min (ms) | min wall ÷ cvode | steps | rejected | RHS | Jac | LU | LU ÷ cvode |\n")
	b.WriteString("|---|---|---|---|---|---|---|---|---|---|---|---|---|---|\n")
	for _, r := range rows {
		e, eRel := fmt.Sprintf("%.3g", r.Err), fmt.Sprintf("%.1e", r.Err*r.RTol)
		if r.Failed != "" {
			e, eRel = "failed: "+r.Failed, "–"
		}
		wallRatio, luRatio := "–", "–"
		for _, c := range rows {
			if c.Solver == "cvode" && c.Problem == r.Problem && c.RTol == r.RTol && c.Failed == "" && r.Failed == "" {
				wallRatio = fmt.Sprintf("%.2f", float64(r.MinWall)/float64(c.MinWall))
				luRatio = fmt.Sprintf("%.2f", float64(r.Work.Factorizations)/float64(c.Work.Factorizations))
			}
		}
		fmt.Fprintf(&b, "| %s | %.0e | %s | %s | %s | %.3f | %.3f | %s | %d | %d | %d | %d | %d | %s |\n", r.Problem, r.RTol, r.Solver, e, eRel,
			ms(r.Wall), ms(r.MinWall), wallRatio, r.Work.Steps, r.Work.Rejected, r.Work.RHSEvals, r.Work.JacobianEvals, r.Work.Factorizations, luRatio)
	}
	b.WriteString("\nCost of one evaluation at a state with every species present (f: right-hand side, J: dense Jacobian):\n\n")
	b.WriteString("| problem | C f (ns) | C J (ns) | Go network f (ns) | Go network J (ns) |\n|---|---|---|---|---|\n")
	for _, c := range costs {
		fmt.Fprintf(&b, "| %s | %d | %d | %d | %d |\n", c.Problem, c.CRHS.Nanoseconds(), c.CJac.Nanoseconds(), c.GoRHS.Nanoseconds(), c.GoJac.Nanoseconds())
	}
	return b.String()
}

func ms(d time.Duration) float64 { return float64(d.Nanoseconds()) / 1e6 }
