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

// Problem is a stiff test problem with its reference state at the end
// time: a published one (HIRES, POLLU) with right-hand side and Jacobian
// also written in C, or a reaction network with the Go system only.
type Problem struct {
	Name string
	Sys  *network.System // the compiled network
	TEnd float64
	ATol float64 // the problem's own absolute tolerance (HIRES, POLLU)
	Ref  []float64
	// RefNote says where Ref comes from.
	RefNote string
	id      int // the C problem in cvode.go; noC for networks without one
}

const noC = -1

// HasC reports whether f and J of p are also written in C.
func (p Problem) HasC() bool { return p.id != noC }

// Problems loads HIRES and POLLU from dir (network/testdata of the
// repository) and compiles them.
//
// Reference states: Test Set for IVP Solvers, F. Mazzia and C. Magherini,
// University of Bari, release 2.4 (copied in /work/shared/reference).
func Problems(dir string) ([]Problem, error) {
	const note = "Test Set for IVP Solvers (Mazzia & Magherini, University of Bari, release 2.4)"
	ps := []Problem{
		{Name: "HIRES", TEnd: 321.8122, ATol: 1e-12, id: 0, RefNote: note, Ref: []float64{
			0.7371312573325668e-3, 0.1442485726316185e-3, 0.5888729740967575e-4, 0.1175651343283149e-2,
			0.2386356198831331e-2, 0.6238968252742796e-2, 0.2849998395185769e-2, 0.2850001604814231e-2}},
		{Name: "POLLU", TEnd: 60, ATol: 1e-14, id: 1, RefNote: note, Ref: []float64{
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

// NetworkProblem makes a problem of the reaction network m from 0 to tEnd,
// without C functions; its reference is computed by Reference.
func NetworkProblem(name string, m *network.Model, tEnd float64) (Problem, error) {
	sys, err := network.Compile(m)
	if err != nil {
		return Problem{}, fmt.Errorf("cvodecmp: compiling %s: %w", name, err)
	}
	return Problem{Name: name, Sys: sys, TEnd: tEnd, id: noC}, nil
}

// Reference computes p.Ref with Kinetarium's Radau IIA at rtol 1e-13 and
// atol 1e-16 (its complex system sparse on large networks), and checks it
// against CVODE–KLU at rtol 1e-12: the returned agreement is the number of
// digits on which the two agree, in the measure of Digits. Neither is a
// contender's own setting (the contenders are BDF codes, run up to rtol
// 1e-11), and the report states the agreement. On the 5,000-species
// cascade Radau IIA at rtol 1e-13 agreed with RODAS4 at rtol 1e-11 and
// 1e-12 to 9.5 digits (3.5e-10 and 3.3e-10 in the measure of Digits), in
// 1.9 s against RODAS4's 40 s and 103 s (measured).
func Reference(p *Problem) (agree float64, err error) {
	rtol, atol := 1e-13, 1e-16
	m, name := solve.Radau, "Radau IIA"
	res, err := solve.Solve(context.Background(), p.Sys.Clone(), 0, p.TEnd, p.Sys.Initial(),
		solve.Settings{Method: m, RTol: rtol, ATol: atol, Times: []float64{p.TEnd}})
	if err != nil {
		return 0, fmt.Errorf("cvodecmp: reference for %s: %w", p.Name, err)
	}
	p.Ref = slices.Clone(res.Y[len(res.Y)-1])
	k, err := NewKLU(*p)
	if err != nil {
		return 0, err
	}
	defer k.Close()
	y, _, _, err := k.Solve(1e-12, atol)
	if err != nil {
		return 0, fmt.Errorf("cvodecmp: checking the reference for %s: %w", p.Name, err)
	}
	p.RefNote = fmt.Sprintf("Kinetarium %s at rtol %g, atol %g", name, rtol, atol)
	return Digits(y, p.Ref, DigitsFloor), nil
}

// DigitsFloor is the floor of Digits: with atol = rtol·10⁻⁶, as in the
// report, |y − ref|/(|ref| + 10⁻⁶) is the scaled error times rtol.
const DigitsFloor = 1e-6

// Digits returns the number of correct digits of y against ref,
// −log10 max_i |y_i − ref_i| / (|ref_i| + floor): relative for components
// well above floor, absolute (in units of floor) below it.
func Digits(y, ref []float64, floor float64) float64 {
	e := 0.0
	for i, r := range ref {
		e = math.Max(e, math.Abs(y[i]-r)/(math.Abs(r)+floor))
	}
	if slices.ContainsFunc(y, math.IsNaN) {
		return math.NaN()
	}
	if e == 0 {
		return math.Inf(1)
	}
	return -math.Log10(e)
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
	Solver  string // "cvode", "cvode (Go f, J)", "cvode-klu (Go f, J)" or a Kinetarium method
	RTol    float64
	ATol    float64
	Err     float64       // scaled error at the end time
	Digits  float64       // correct digits at the end time (see Digits)
	Wall    time.Duration // median over the repeated solves
	MinWall time.Duration // fastest of the repeated solves
	Work    Work
	Failed  string // why the solve failed; empty on success
}

// Contender is one solver under comparison, set up for one problem.
type Contender struct {
	Name string
	// Solve integrates the problem from 0 to its end time at rtol and
	// atol and returns the end state, the work done and the wall time.
	Solve func(rtol, atol float64) (y []float64, w Work, wall time.Duration, err error)
	// Close frees what the contender holds; it may be nil.
	Close func()
}

// CVODEContender returns CVODE with the dense linear solver on p with f
// and J from rhs.
func CVODEContender(p Problem, rhs RHS) (Contender, error) {
	if rhs == CRHS && !p.HasC() {
		return Contender{}, fmt.Errorf("cvodecmp: %s has no right-hand side in C", p.Name)
	}
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

// KLUName is the name of the CVODE–KLU contender in rows and reports.
const KLUName = "cvode-klu (Go f, J)"

// KLUContender returns CVODE with SUNLinSol_KLU on p, with f and the
// sparse Jacobian from the Go network.System.
func KLUContender(p Problem) (Contender, *KLU, error) {
	k, err := NewKLU(p)
	if err != nil {
		return Contender{}, nil, err
	}
	return Contender{Name: KLUName, Solve: k.Solve, Close: k.Close}, k, nil
}

// KinetariumContender returns method m of package solve on p: one
// solve.Solver per tolerance, reused across solves, with the output at the
// end time only.
func KinetariumContender(p Problem, m solve.Method, nonNegative bool) Contender {
	name := MethodName(m)
	sys := p.Sys.Clone()
	y0 := sys.Initial()
	var sv *solve.Solver
	svTol, svATol := math.NaN(), math.NaN()
	run := func(rtol, atol float64) ([]float64, Work, time.Duration, error) {
		if rtol != svTol || atol != svATol {
			sv = solve.NewSolver(sys, solve.Settings{Method: m, RTol: rtol, ATol: atol, Times: []float64{p.TEnd}, NonNegative: nonNegative})
			svTol, svATol = rtol, atol
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

// MethodName is the name of Kinetarium's method m in rows and reports.
func MethodName(m solve.Method) string {
	if m == solve.Auto {
		return "auto"
	}
	return string(m)
}

// Measure solves p at rtol and atol with every contender: one untimed warm-up solve
// each, then repeat rounds in which each contender solves once, so that
// changes in the machine's load fall on all of them alike. Each row has the
// median and minimum wall time, the work of the last solve and its scaled
// error.
func Measure(p Problem, rtol, atol float64, repeat int, cs []Contender) []Row {
	rows := make([]Row, len(cs))
	walls := make([][]time.Duration, len(cs))
	for i, c := range cs {
		rows[i] = Row{Problem: p.Name, Solver: c.Name, RTol: rtol, ATol: atol}
	}
	for round := -1; round < repeat; round++ {
		for i, c := range cs {
			if rows[i].Failed != "" {
				continue
			}
			y, w, wall, err := c.Solve(rtol, atol)
			rows[i].Work = w
			if err != nil {
				rows[i].Failed = err.Error()
				rows[i].Err = math.Inf(1)
				continue
			}
			rows[i].Err = ScaledError(y, p.Ref, atol, rtol)
			rows[i].Digits = Digits(y, p.Ref, atol/rtol)
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

// AtDigits reads the wall time (minimum over the repeats) that solver
// needs on problem for target correct digits, interpolating log wall time
// linearly in digits between the two neighbouring tolerances: the first
// tolerance, from the loosest, that reaches the target and the one before
// it. ok is false when no tolerance reaches the target; upper is true when
// the loosest tolerance already does (the time is then an upper bound).
func AtDigits(rows []Row, problem, solver string, target float64) (wall time.Duration, upper, ok bool) {
	var pts []Row
	for _, r := range rows {
		if r.Problem == problem && r.Solver == solver && r.Failed == "" && r.MinWall > 0 {
			pts = append(pts, r)
		}
	}
	slices.SortFunc(pts, func(a, b Row) int { return -cmpFloat(a.RTol, b.RTol) })
	for k, r := range pts {
		if !(r.Digits >= target) {
			continue
		}
		if k == 0 {
			return r.MinWall, true, true
		}
		a := pts[k-1]
		f := (target - a.Digits) / (r.Digits - a.Digits)
		la, lb := math.Log(float64(a.MinWall)), math.Log(float64(r.MinWall))
		return time.Duration(math.Exp(la + f*(lb-la))), false, true
	}
	return 0, false, false
}

func cmpFloat(a, b float64) int {
	switch {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}

// ReportSettings describes a run of the comparison for its report.
type ReportSettings struct {
	Repeat      int
	NonNegative bool
	ATolRatio   float64   // atol = rtol·ATolRatio
	Targets     []float64 // correct digits at which walls are compared
	Load        string    // the machine's load before and after
	Command     string    // the command that regenerates the report
	Notes       []string  // one line each about the problems (sizes, references)
	Kinetarium  []string  // the Kinetarium contenders, in order
}

// Report formats the rows and evaluation costs as Markdown.
func Report(rows []Row, costs []EvalCost, rs ReportSettings) string {
	var b strings.Builder
	b.WriteString("# Kinetarium's integrators against SUNDIALS CVODE, dense and sparse (KLU)\n\n")
	fmt.Fprintf(&b, "Measured %s on %s/%s, %d CPUs (GOMAXPROCS %d), %s; %s.\n",
		time.Now().UTC().Format("2006-01-02 15:04 UTC"), runtime.GOOS, runtime.GOARCH, runtime.NumCPU(), runtime.GOMAXPROCS(0), runtime.Version(), rs.Load)
	fmt.Fprintf(&b, "Regenerate with `%s` (it sets up CVODE with `scripts/install-sundials.sh` when missing).\n\n", rs.Command)
	b.WriteString("- **cvode**: SUNDIALS CVODE 6.4.1 from Debian 12 (`libsundials-cvode6`): BDF orders 1–5, Newton iteration, dense SUNMatrix with SUNLinSol_Dense, exact user Jacobian, all other settings CVODE's defaults (max steps raised to 10⁶), stop time at the end time; f and J of HIRES and POLLU written in C as in the Test Set's problem files, compiled with `-O2`.\n")
	b.WriteString("- **cvode (Go f, J)**: the same CVODE calling back through cgo into Kinetarium's compiled network.System, so that both libraries use the same f and J (the only dense CVODE on the networks, which have no C form).\n")
	b.WriteString("- **cvode-klu (Go f, J)**: the same CVODE with a compressed-sparse-column SUNMatrix and SUNLinSol_KLU (SuiteSparse KLU 1.3.8 from Debian's `libklu1`, SUNDIALS' default ordering and refactorization policy), f and the exact sparse Jacobian from the compiled network.System through cgo (its CSR pattern, every diagonal entry included, transposed once; values scattered into CSC order on each evaluation).\n")
	fmt.Fprintf(&b, "- **%s**: `solve.Solver` of Kinetarium (one Solver reused for the repeats), output at the end time only, NonNegative %v.\n", strings.Join(rs.Kinetarium, ", "), rs.NonNegative)
	fmt.Fprintf(&b, "- Same rtol and atol for all: atol = rtol·%g. Correct digits = −log10 max_i |y_i − ref_i| / (|ref_i| + %g) at the end time (relative above %g, absolute below; with this atol it is −log10 of scaled error × rtol). Scaled error = max_i |y_i − ref_i| / (atol + rtol·|ref_i|). Wall time: minimum (and median) of %d solves after one warm-up, the contenders taking turns in each round so that the machine's load falls on all alike. LU = factorizations (for CVODE, `CVodeGetNumLinSolvSetups`: each setup factorizes I − γJ, KLU refactoring numerically when it can; for radau, and auto when it picks Radau, each Newton matrix counts 2). Jac = Jacobian evaluations; CVODE reuses J across setups.\n", rs.ATolRatio, rs.ATolRatio, rs.ATolRatio, rs.Repeat)
	for _, n := range rs.Notes {
		fmt.Fprintf(&b, "- %s\n", n)
	}
	problems := []string{}
	for _, r := range rows {
		if !slices.Contains(problems, r.Problem) {
			problems = append(problems, r.Problem)
		}
	}
	solvers := []string{}
	for _, r := range rows {
		if !slices.Contains(solvers, r.Solver) {
			solvers = append(solvers, r.Solver)
		}
	}
	b.WriteString("\n## At equal accuracy\n\nWall time (ms, minimum of the repeats) for the number of correct digits, read off each solver's work-precision line by interpolating log wall time linearly in digits between neighbouring tolerances (≤: the loosest tolerance already gives more digits, so its time bounds the time for these; –: no tolerance reached them). The last column divides Kinetarium's automatic choice by the faster CVODE variant (≤ when auto's time is such a bound).\n\n")
	b.WriteString("| problem | digits |")
	for _, s := range solvers {
		fmt.Fprintf(&b, " %s |", s)
	}
	b.WriteString(" auto ÷ faster CVODE |\n|---|---|")
	for range solvers {
		b.WriteString("---|")
	}
	b.WriteString("---|\n")
	for _, p := range problems {
		for _, d := range rs.Targets {
			fmt.Fprintf(&b, "| %s | %g |", p, d)
			var auto, best time.Duration
			autoOK, autoUpper := false, false
			for _, s := range solvers {
				w, upper, ok := AtDigits(rows, p, s, d)
				if !ok {
					has := false
					for _, r := range rows {
						has = has || (r.Problem == p && r.Solver == s)
					}
					if has {
						b.WriteString(" – |")
					} else {
						b.WriteString(" not run |")
					}
					continue
				}
				mark := ""
				if upper {
					mark = "≤"
				}
				fmt.Fprintf(&b, " %s%.3g |", mark, ms(w))
				if s == "auto" {
					auto, autoOK, autoUpper = w, true, upper
				}
				if strings.HasPrefix(s, "cvode") && !upper && (best == 0 || w < best) {
					best = w
				}
			}
			if autoOK && best > 0 {
				mark := ""
				if autoUpper {
					mark = "≤"
				}
				fmt.Fprintf(&b, " %s%.2f |\n", mark, float64(auto)/float64(best))
			} else {
				b.WriteString(" – |\n")
			}
		}
	}
	b.WriteString("\n## Every point\n\nThe ratio columns divide by the CVODE–KLU row at the same problem and rtol.\n\n")
	b.WriteString("| problem | rtol | solver | correct digits | scaled error | wall min (ms) | wall median (ms) | min wall ÷ cvode-klu | steps | rejected | RHS | Jac | LU | LU ÷ cvode-klu |\n")
	b.WriteString("|---|---|---|---|---|---|---|---|---|---|---|---|---|---|\n")
	for _, r := range rows {
		e, dg := fmt.Sprintf("%.3g", r.Err), fmt.Sprintf("%.2f", r.Digits)
		if r.Failed != "" {
			e, dg = "failed: "+r.Failed, "–"
		}
		wallRatio, luRatio := "–", "–"
		for _, c := range rows {
			if c.Solver == KLUName && c.Problem == r.Problem && c.RTol == r.RTol && c.Failed == "" && r.Failed == "" {
				wallRatio = fmt.Sprintf("%.2f", float64(r.MinWall)/float64(c.MinWall))
				luRatio = fmt.Sprintf("%.2f", float64(r.Work.Factorizations)/float64(c.Work.Factorizations))
			}
		}
		fmt.Fprintf(&b, "| %s | %.0e | %s | %s | %s | %.3f | %.3f | %s | %d | %d | %d | %d | %d | %s |\n", r.Problem, r.RTol, r.Solver, dg, e,
			ms(r.MinWall), ms(r.Wall), wallRatio, r.Work.Steps, r.Work.Rejected, r.Work.RHSEvals, r.Work.JacobianEvals, r.Work.Factorizations, luRatio)
	}
	if len(costs) > 0 {
		b.WriteString("\nCost of one evaluation at a state with every species present (f: right-hand side, J: dense Jacobian):\n\n")
		b.WriteString("| problem | C f (ns) | C J (ns) | Go network f (ns) | Go network J (ns) |\n|---|---|---|---|---|\n")
		for _, c := range costs {
			fmt.Fprintf(&b, "| %s | %d | %d | %d | %d |\n", c.Problem, c.CRHS.Nanoseconds(), c.CJac.Nanoseconds(), c.GoRHS.Nanoseconds(), c.GoJac.Nanoseconds())
		}
	}
	return b.String()
}

func ms(d time.Duration) float64 { return float64(d.Nanoseconds()) / 1e6 }
