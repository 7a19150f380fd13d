package solve

import (
	"fmt"
	"math"
)

// autoBDFSize is the system size from which Auto skips the stiffness test
// and takes a stiff method at once: Radau IIA when the system is solved
// with sparse linear algebra (see autoRadauSize), else BDF, since there a
// dense factorization dominates and BDF reuses it over many steps.
const autoBDFSize = 500

// autoRadauSize is the system size from which Auto's stiff method is Radau
// IIA rather than BDF when the Jacobian is sparse. Radau IIA there lands
// on every output time (landsOnOutputs) and keeps the error over 200
// output times within 2–17 of the tolerance on generated networks of 200
// to 5,000 species and 13–48 at 20,000 (bench/workprecision.md). Since
// BDF's Newton tolerance was tied to its aim (bdfCalibrated) BDF keeps
// the generated cascades within 3–20 over the run at 2–3 times less wall
// time, and on the two 1,000-species networks Auto's Radau IIA costs
// 1.15–1.6 times BDF's instructions at equal accuracy. With output at the
// end time only it is the other way round (7 correct digits: Radau IIA 88
// ms against BDF's 136 on 1,000 species, 13.9 against 18.5 on 200;
// bench/cvode-comparison.md). Radau IIA stays Auto's choice for that, and
// because it is the robust one where transients run on every time scale
// at once: on 150 decays with rates from 1e-3 to 1e4
// (autoland_test.go) BDF needs 2,446 steps and leaves 14 times the
// tolerance at rtol 1e-6, Radau IIA 628 steps and 6.2.
const autoRadauSize = 100

// autoStiffRatio is the bound on (largest rate) × (time span) above which
// Auto starts with RODAS4. An explicit method needs at least about
// ratio/3.3 steps for stability alone (the stability boundary of
// Dormand–Prince 5(4) on the negative real axis is about 3.3), so above a
// few hundred steps spent on stability the stiff method wins.
const autoStiffRatio = 500

// choose returns the stepper for a solve and records the choice in Stats.
func (sv *Solver) choose(t0, tEnd float64, y0 []float64) (stepper, error) {
	st := &sv.stats
	switch sv.set.Method {
	case Rosenbrock:
		st.Methods = append(st.Methods, Rosenbrock)
		return sv.ros, nil
	case Explicit:
		st.Methods = append(st.Methods, Explicit)
		return sv.dp, nil
	case Radau:
		if sv.radau == nil {
			return nil, fmt.Errorf("solve: method %q is not available in this build", Radau)
		}
		st.Methods = append(st.Methods, Radau)
		return sv.radau, nil
	case BDF:
		if sv.bdf == nil {
			return nil, fmt.Errorf("solve: method %q is not available in this build", BDF)
		}
		st.Methods = append(st.Methods, BDF)
		return sv.bdf, nil
	case Auto:
	default:
		return nil, fmt.Errorf("solve: unknown method %q; expected one of %q, %q, %q, %q or empty for automatic choice",
			sv.set.Method, Rosenbrock, Radau, BDF, Explicit)
	}
	if sv.n >= autoBDFSize {
		s, m, why := sv.stiffStepper()
		st.Methods = append(st.Methods, m)
		st.Choice = fmt.Sprintf("%s: %d state variables, too many for the explicit method's test to pay; %s", methodTitle(m), sv.n, why)
		return s, nil
	}
	if sv.p.sens != nil {
		s, m, why := sv.stiffStepper()
		st.Methods = append(st.Methods, m)
		st.Choice = fmt.Sprintf("%s: sensitivities are asked for, and they are computed by the stiff methods; %s", methodTitle(m), why)
		return s, nil
	}
	rate := sv.fastestRate(t0, y0)
	span := tEnd - t0
	if rate*span > autoStiffRatio || math.IsNaN(rate) {
		s, m, why := sv.stiffStepper()
		st.Methods = append(st.Methods, m)
		st.Choice = fmt.Sprintf("%s: stiff, since the Jacobian's largest rate (%.3g per time unit) is far faster than the time span (%.4g); %s",
			methodTitle(m), rate, span, why)
		return s, nil
	}
	st.Methods = append(st.Methods, Explicit)
	st.Choice = fmt.Sprintf("Dormand–Prince 5(4): the Jacobian's largest rate (%.3g per time unit) times the time span (%.4g) is small; not stiff at the start", rate, span)
	return sv.dp, nil
}

// stiffStepper is Auto's stiff method, with the reason for the choice:
// Radau IIA for a sparse system of autoRadauSize variables or more, BDF
// otherwise (alloc builds exactly the one of the two this picks).
//
// Measured on HIRES and POLLU (internal/workprecision, and the CVODE
// comparison in bench/cvode-comparison.md): from rtol 1e-4 to 1e-10 the
// calibrated variable-order BDF reaches the Test Set's reference to a
// scaled error of at most 7.6, and at 1e-11 and 1e-12 to 0.4–15 where
// Radau IIA measures 13–24 (bench/bdf-tight-tolerance.md). At equal
// accuracy Radau IIA costs 0.9–1.2 times BDF's instructions at the tight
// end, and between steps its solution is of order 3 only, so below
// autoRadauSize BDF is the stiff method at every tolerance (Radau IIA took
// over below rtol 1e-9 while BDF's error there was 12–66).
func (sv *Solver) stiffStepper() (stepper, Method, string) {
	if sv.sparseRadau() {
		return sv.radau, Radau, "a network with a sparse Jacobian, where Radau IIA's few long steps keep the error near the tolerance on every time scale"
	}
	return sv.bdf, BDF, "variable-order BDF reuses one factorization over many steps"
}

// landsOnOutputs reports whether the solve steps onto every output time
// instead of interpolating between steps: when Auto chose Radau IIA for a
// large network. Radau IIA's continuous solution between steps (its
// collocation polynomial) is of order 3 only, against 5 at the step's
// end (Hairer & Wanner, Solving ODEs II, section IV.8, from memory), and
// on the generated networks of 200 and 1,000 species with 200
// log-spaced output times it left 32–38 times the tolerance at rtol 1e-6
// and 276–645 at 1e-8. Landing (a shortened step, no restart) kept the
// error over all output times within 1.9–6.1 of the tolerance, at
// 1.0–1.3 times BDF's time with 20 output times and 1.2–1.9 with 200,
// where BDF's own error is 6–27 (bench/bdf-tight-tolerance.md).
func (sv *Solver) landsOnOutputs(st stepper) bool {
	return sv.set.Method == Auto && st == stepper(sv.radau) && sv.sparseRadau()
}

// sparseRadau reports whether Auto's stiff method is Radau IIA for the
// system's size and structure (autoRadauSize).
func (sv *Solver) sparseRadau() bool {
	return sv.n >= autoRadauSize && sv.p.sparse != nil
}

// methodTitle names a method for Stats.Choice.
func methodTitle(m Method) string {
	switch m {
	case Rosenbrock:
		return "Rosenbrock (RODAS4)"
	case Radau:
		return "Radau IIA (order 5)"
	case BDF:
		return "BDF"
	case Explicit:
		return "Dormand–Prince 5(4)"
	}
	return string(m)
}

// fastestRate bounds the spectral radius of the Jacobian at (t, y) by
// Gershgorin's theorem: the largest absolute row sum. It uses the
// Rosenbrock stepper's matrix as work space.
func (sv *Solver) fastestRate(t float64, y []float64) float64 {
	j := sv.ros.jac
	sv.p.jac(t, y, j)
	return j.maxRowSum(sv.n)
}
