package solve

import (
	"context"
	"fmt"
	"math"
	"time"
)

// Solver integrates systems of one dimension, reusing its work space from
// one solve to the next. It takes no allocations per step; each Solve
// allocates only its Result. A Solver is used by one goroutine at a time.
type Solver struct {
	set   Settings
	n     int
	stats Stats
	p     *problem
	err   error // set-up error, reported by Solve

	ros   *rosenbrock
	dp    *dopri
	radau stepper
	bdf   stepper

	y  []float64 // state handed to OnStop
	ev *events   // the events of the current solve, for an EventSystem
}

// checkJump checks the state after a stop-time action or an event at t:
// every component finite, and non-negative when that is asked for.
func (sv *Solver) checkJump(t float64) error {
	if i := nonFinite(sv.y); i >= 0 {
		return &StepError{T: t, Component: i,
			Reason: fmt.Sprintf("was made %v by the action at t = %g", sv.y[i], t)}
	}
	if sv.set.NonNegative {
		for i, v := range sv.y {
			if v < 0 && !sv.p.isSigned(i) {
				return &StepError{T: t, Component: i,
					Reason: fmt.Sprintf("was made negative (%g) by the action at t = %g", v, t)}
			}
		}
	}
	return nil
}

// NewSolver returns a Solver for sys with settings s. All work space for the
// chosen method is allocated here. Invalid settings are reported by Solve.
func NewSolver(sys System, s Settings) *Solver {
	sv := &Solver{set: s}
	sv.set.Times = append([]float64(nil), s.Times...)
	sv.set.StopTimes = append([]float64(nil), s.StopTimes...)
	if s.ATolVec != nil {
		sv.set.ATolVec = append([]float64(nil), s.ATolVec...)
	}
	if sys == nil {
		sv.err = fmt.Errorf("solve: no system given")
		return sv
	}
	sv.alloc(sys)
	return sv
}

// alloc creates the problem and the steppers for sys.
func (sv *Solver) alloc(sys System) {
	sv.n = sys.Dim()
	sv.err = nil
	if sv.n <= 0 {
		sv.err = fmt.Errorf("solve: the system has %d state variables; at least one is needed", sv.n)
		return
	}
	sv.p = newProblem(sys, sv.set, &sv.stats)
	sv.y = make([]float64, sv.n)
	if ss := sv.set.Sens; ss != nil && len(ss.Quantities) > 0 {
		if sv.set.Method == Explicit {
			sv.err = fmt.Errorf("solve: sensitivities are computed by the stiff methods (%q, %q, %q); %q was asked for", Rosenbrock, Radau, BDF, Explicit)
			return
		}
		w, err := newSensWork(sys, ss, &sv.stats)
		if err != nil {
			sv.err = err
			return
		}
		sv.p.sens = w
	}
	sv.ros, sv.dp, sv.radau, sv.bdf = nil, nil, nil, nil
	switch sv.set.Method {
	case Rosenbrock:
		sv.ros = newRosenbrock(sv.p)
	case Explicit:
		sv.dp = newDopri(sv.p)
	case Radau:
		sv.radau = newRadau(sv.p)
	case BDF:
		sv.bdf = newBDF(sv.p)
	case Auto:
		// Only the methods Auto may choose get work space (see choose).
		if sv.n < autoBDFSize {
			sv.ros = newRosenbrock(sv.p) // its Jacobian is the work space of the stiffness test
			sv.dp = newDopri(sv.p)
		}
		if sv.sparseRadau() { // stiffStepper's choice
			sv.radau = newRadau(sv.p)
		} else {
			sv.bdf = newBDF(sv.p)
		}
	}
}

// SetSystem makes the Solver integrate sys from now on. When sys has the
// dimension (and, for a SparsePatternSystem, the Jacobian pattern) of the
// previous system the work space is kept; otherwise it is allocated anew.
func (sv *Solver) SetSystem(sys System) {
	switch {
	case sys == nil:
		sv.err = fmt.Errorf("solve: no system given")
	case sv.p != nil && sys.Dim() == sv.n && samePattern(sv.p.sys, sys):
		sv.err = nil
		sv.p.setSystem(sys)
	default:
		sv.alloc(sys)
	}
}

// validate checks the arguments of a solve and the settings.
func (sv *Solver) validate(t0, tEnd float64, y0 []float64) error {
	s := &sv.set
	switch {
	case math.IsNaN(t0) || math.IsInf(t0, 0):
		return fmt.Errorf("solve: start time %v is not a finite number", t0)
	case math.IsNaN(tEnd) || math.IsInf(tEnd, 0):
		return fmt.Errorf("solve: end time %v is not a finite number", tEnd)
	case !(tEnd > t0):
		return fmt.Errorf("solve: end time %g must be after start time %g", tEnd, t0)
	case len(y0) != sv.n:
		return fmt.Errorf("solve: initial state has %d values; the system has %d state variables", len(y0), sv.n)
	}
	for i, v := range y0 {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("solve: initial value of component %d is %v; a finite number is expected", i, v)
		}
		if s.NonNegative && v < 0 && !sv.p.isSigned(i) {
			return fmt.Errorf("solve: initial value of component %d is %g, but non-negative values are required", i, v)
		}
	}
	switch {
	case math.IsNaN(s.RTol) || s.RTol < 0:
		return fmt.Errorf("solve: relative tolerance %g must be positive (or 0 for the default 1e-6)", s.RTol)
	case s.RTol > 0 && s.RTol < 100*eps:
		return fmt.Errorf("solve: relative tolerance %g is below what float64 arithmetic can deliver; use at least %.1g", s.RTol, 100*eps)
	case s.RTol >= 1:
		return fmt.Errorf("solve: relative tolerance %g must be below 1", s.RTol)
	case math.IsNaN(s.ATol) || s.ATol < 0:
		return fmt.Errorf("solve: absolute tolerance %g must be positive (or 0 for the default 1e-10)", s.ATol)
	case s.ATolVec != nil && len(s.ATolVec) != sv.n:
		return fmt.Errorf("solve: %d absolute tolerances given for %d state variables", len(s.ATolVec), sv.n)
	case s.MaxSteps < 0:
		return fmt.Errorf("solve: maximum number of steps %d must not be negative", s.MaxSteps)
	case math.IsNaN(s.MaxStep) || s.MaxStep < 0:
		return fmt.Errorf("solve: maximum step %g must not be negative", s.MaxStep)
	case math.IsNaN(s.InitialStep) || s.InitialStep < 0:
		return fmt.Errorf("solve: initial step %g must not be negative", s.InitialStep)
	}
	for i, v := range s.ATolVec {
		if math.IsNaN(v) || v < 0 {
			return fmt.Errorf("solve: absolute tolerance of component %d is %g; a non-negative number is expected", i, v)
		}
	}
	for i, v := range s.Times {
		if math.IsNaN(v) || v < t0 || v > tEnd {
			return fmt.Errorf("solve: output time %d (%g) is outside the interval [%g, %g]", i, v, t0, tEnd)
		}
		if i > 0 && !(v > s.Times[i-1]) {
			return fmt.Errorf("solve: output times must increase, but time %d (%g) follows %g", i, v, s.Times[i-1])
		}
	}
	for i, v := range s.StopTimes {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("solve: stop time %d is %v; a finite number is expected", i, v)
		}
		if i > 0 && !(v > s.StopTimes[i-1]) {
			return fmt.Errorf("solve: stop times must increase, but stop time %d (%g) follows %g", i, v, s.StopTimes[i-1])
		}
	}
	return nil
}

// Solve integrates from (t0, y0) to tEnd, tEnd > t0. It returns the
// solution at Settings.Times, or at every accepted step when Times is
// empty. On failure it returns the outputs reached so far together with the
// error: a *StepError for numerical trouble, or an error wrapping ctx.Err()
// when ctx is cancelled.
//
// At a stop time the solution is reported as it is after OnStop has run; in
// every-step mode a stop time where OnStop changes the state appears twice,
// before and after the change. Stop times outside (t0, tEnd) are ignored.
func (sv *Solver) Solve(ctx context.Context, t0, tEnd float64, y0 []float64) (*Result, error) {
	start := time.Now()
	if sv.err != nil {
		return nil, sv.err
	}
	if err := sv.validate(t0, tEnd, y0); err != nil {
		return nil, err
	}
	set := &sv.set
	n := sv.n
	p := sv.p
	sv.stats = Stats{Methods: make([]Method, 0, 2)}
	p.tEnd = tEnd
	p.maxStep = set.MaxStep
	if p.maxStep == 0 || p.maxStep > tEnd-t0 {
		p.maxStep = tEnd - t0
	}
	maxSteps := set.MaxSteps
	if maxSteps == 0 {
		maxSteps = 500000
	}
	every := set.ProgressEvery
	if every <= 0 {
		every = 50 * time.Millisecond
	}

	out := newOutput(set.Times, n)
	sens := p.sens
	if sens != nil {
		sens.init()
		out.withSens(sens.ns * n)
	}
	copy(sv.y, y0)
	sv.ev = nil
	if es, ok := sv.p.sys.(EventSystem); ok {
		sv.ev = newEvents(es, n)
		es.ResetEvents(t0)
		if sv.ev.nc == 0 && math.IsInf(es.NextEvent(t0), 1) {
			sv.ev = nil // nothing to watch or schedule
		} else if es.NextEvent(t0) <= t0 {
			// Events at the start (a dose at time 0) act before anything
			// is recorded: the first output shows the state after them.
			fired := sv.ev.fire(t0, sv.y, nil)
			if err := sv.checkJump(t0); err != nil {
				return out.result(sv, start), err
			}
			sv.sensJump(t0, fired)
		} else if sv.ev.nc > 0 {
			es.Watch(t0, sv.y, sv.ev.gPrev)
		}
	}
	out.fillAt(t0, sv.y, sv.sensNow())

	st, err := sv.choose(t0, tEnd, sv.y)
	if err != nil {
		return out.result(sv, start), err
	}
	if err := st.start(t0, sv.y, set.InitialStep); err != nil {
		return out.result(sv, start), err
	}

	stops := set.StopTimes
	for len(stops) > 0 && stops[0] <= t0 {
		stops = stops[1:]
	}
	lastProgress := start
	done := ctx.Done()
	t := t0
	ev := sv.ev
	for t < tEnd {
		select {
		case <-done:
			return out.result(sv, start), fmt.Errorf("solve: cancelled at t = %g: %w", t, ctx.Err())
		default:
		}
		if sv.stats.Steps >= maxSteps {
			return out.result(sv, start), sv.tooManySteps(st, maxSteps)
		}
		if ev != nil && ev.es.NextEvent(t) <= t {
			// A scheduled event at a time where a condition fired.
			before := append([]float64(nil), sv.y...)
			sv.sensFrom(st, t, false)
			fired := ev.fire(t, sv.y, nil)
			if err := sv.checkJump(t); err != nil {
				return out.result(sv, start), err
			}
			sv.sensJump(t, fired)
			out.fillStop(t, before, sv.y, sv.sensNow())
			if err := st.start(t, sv.y, st.stepSize()); err != nil {
				return out.result(sv, start), err
			}
			continue
		}
		tLimit := tEnd
		atStop := len(stops) > 0 && stops[0] < tEnd
		if atStop {
			tLimit = stops[0]
		}
		if out.fixed && out.k < len(out.times) && sv.landsOnOutputs(st) {
			// Step onto the next output time rather than interpolate
			// (landsOnOutputs); the stepper goes on without a restart.
			if to := out.times[out.k]; to > t && to < tLimit {
				tLimit, atStop = to, false
			}
		}
		atEvent := false
		if ev != nil {
			if te := ev.es.NextEvent(t); te < tEnd && te <= tLimit {
				atEvent = true
				atStop = atStop && stops[0] == te
				tLimit = te
			}
		}
		tPrev := t
		if err := st.step(tLimit); err != nil {
			return out.result(sv, start), err
		}
		sv.stats.Steps++
		tn, yn := st.current()
		if ev != nil && ev.nc > 0 {
			if tr, ok := ev.locate(st, tPrev, tn, yn, sv.p.rtol, sv.y); ok {
				out.fillStep(st, tr, sv.y, false)
				t = tr
				sv.sensFrom(st, tr, true)
				fired := ev.fire(tr, sv.y, ev.rose)
				if err := sv.checkJump(tr); err != nil {
					return out.result(sv, start), err
				}
				sv.sensJump(tr, fired)
				out.fillStop(tr, ev.jumps[len(ev.jumps)-1].Before, sv.y, sv.sensNow())
				if err := st.start(tr, sv.y, st.stepSize()); err != nil {
					return out.result(sv, start), err
				}
				continue
			}
		}
		landed := (atStop || atEvent) && tn == tLimit
		out.fillStep(st, tn, yn, !landed)
		t = tn
		switch {
		case landed:
			copy(sv.y, yn)
			sv.sensFrom(st, t, false)
			if atStop {
				stops = stops[1:]
				if set.OnStop != nil {
					set.OnStop(t, sv.y)
					if err := sv.checkJump(t); err != nil {
						return out.result(sv, start), err
					}
				}
			}
			if atEvent {
				fired := ev.fire(t, sv.y, nil)
				if err := sv.checkJump(t); err != nil {
					return out.result(sv, start), err
				}
				sv.sensJump(t, fired)
			}
			out.fillStop(t, yn, sv.y, sv.sensNow())
			if err := st.start(t, sv.y, st.stepSize()); err != nil {
				return out.result(sv, start), err
			}
		case set.Method == Auto && st == stepper(sv.dp) && sv.dp.stiff():
			h := st.stepSize()
			copy(sv.y, yn)
			var m Method
			st, m, _ = sv.stiffStepper()
			sv.stats.Methods = append(sv.stats.Methods, m)
			sv.stats.Choice += fmt.Sprintf("; switched to %s at t = %.4g, where the explicit method's steps became limited by stability (stiffness)", methodTitle(m), t)
			if err := st.start(t, sv.y, h); err != nil {
				return out.result(sv, start), err
			}
		}
		if set.Progress != nil {
			if now := time.Now(); now.Sub(lastProgress) >= every {
				lastProgress = now
				set.Progress((t - t0) / (tEnd - t0))
			}
		}
	}
	if set.Progress != nil {
		set.Progress(1)
	}
	return out.result(sv, start), nil
}

// output collects the Result: either at fixed times or at every step.
type output struct {
	n     int
	fixed bool
	times []float64
	flat  []float64
	k     int // next fixed output

	m     int       // sensitivities per row (ns·n), 0 without
	flatS []float64 // sensitivity rows
}

// withSens makes the output keep m sensitivities per row.
func (o *output) withSens(m int) {
	o.m = m
	if o.fixed {
		o.flatS = make([]float64, len(o.times)*m)
	} else {
		o.flatS = make([]float64, 0, 256*m)
	}
}

func (o *output) rowS(k int) []float64 { return o.flatS[k*o.m : (k+1)*o.m] }

func newOutput(times []float64, n int) *output {
	o := &output{n: n, fixed: len(times) > 0}
	if o.fixed {
		o.times = append([]float64(nil), times...)
		o.flat = make([]float64, len(times)*n)
	} else {
		o.times = make([]float64, 0, 256)
		o.flat = make([]float64, 0, 256*n)
	}
	return o
}

// fillAt records the initial state.
func (o *output) fillAt(t float64, y, s []float64) {
	if !o.fixed {
		o.record(t, y, s)
		return
	}
	for o.k < len(o.times) && o.times[o.k] == t {
		copy(o.row(o.k), y)
		if o.m > 0 {
			copy(o.rowS(o.k), s)
		}
		o.k++
	}
}

func (o *output) row(k int) []float64 { return o.flat[k*o.n : (k+1)*o.n] }

func (o *output) record(t float64, y, s []float64) {
	o.times = append(o.times, t)
	o.flat = append(o.flat, y...)
	if o.m > 0 {
		o.flatS = append(o.flatS, s...)
	}
}

// fillStep records the outputs in (tPrev, tn) and, when inclusive, at tn.
func (o *output) fillStep(st stepper, tn float64, yn []float64, inclusive bool) {
	var ss sensStepper
	if o.m > 0 {
		ss = st.(sensStepper)
	}
	if !o.fixed {
		var s []float64
		if ss != nil {
			s = ss.currentSens()
			if t, _ := st.current(); t != tn {
				s = make([]float64, o.m)
				ss.denseSens(tn, s)
			}
		}
		o.record(tn, yn, s)
		return
	}
	for o.k < len(o.times) {
		tk := o.times[o.k]
		if tk > tn || (tk == tn && !inclusive) {
			break
		}
		if tk == tn {
			copy(o.row(o.k), yn)
		} else {
			st.dense(tk, o.row(o.k))
		}
		if ss != nil {
			tc, _ := st.current()
			if tk == tc {
				copy(o.rowS(o.k), ss.currentSens())
			} else {
				ss.denseSens(tk, o.rowS(o.k))
			}
		}
		o.k++
	}
}

// fillStop records the state after a stop-time action.
func (o *output) fillStop(t float64, before, after, s []float64) {
	if !o.fixed {
		for i := range after {
			if after[i] != before[i] {
				o.record(t, after, s)
				return
			}
		}
		return
	}
	// fillStep has already recorded t when the stop landed exactly.
	for o.k < len(o.times) && o.times[o.k] == t {
		copy(o.row(o.k), after)
		if o.m > 0 {
			copy(o.rowS(o.k), s)
		}
		o.k++
	}
}

// result assembles the Result from what has been recorded.
func (o *output) result(sv *Solver, start time.Time) *Result {
	m := len(o.times)
	if o.fixed {
		m = o.k
	}
	r := &Result{T: o.times[:m], Y: make([][]float64, m)}
	for i := range r.Y {
		r.Y[i] = o.row(i)
	}
	if o.m > 0 {
		r.S = make([][]float64, m)
		for i := range r.S {
			r.S[i] = o.rowS(i)
		}
	}
	sv.stats.Wall = time.Since(start)
	for _, f := range sv.p.sparseLUs {
		sv.stats.FactorNonzeros = max(sv.stats.FactorNonzeros, f.FactorNonzeros())
	}
	r.Stats = sv.stats
	if sv.ev != nil {
		r.Events, r.Jumps = sv.ev.fired, sv.ev.jumps
	}
	return r
}

// tooManySteps explains why a solve ran out of steps. When the
// non-negativity projection acted on most steps, the likely cause is a rate
// that keeps pushing a component at zero below zero; it names that
// component.
//
// When the explicit method's step size sits at its stability bound (its
// stiffness test, dopri5.f, finds h·λ above 3.25 over many steps), the
// problem is stiff: that is said first, with the stiff methods to use,
// and non-negativity is not blamed.
func (sv *Solver) tooManySteps(st stepper, maxSteps int) *StepError {
	t, y := st.current()
	e := &StepError{T: t, H: st.stepSize(), Component: -1,
		Reason: fmt.Sprintf("took more than %d steps; the problem may need a looser tolerance or a stiff method", maxSteps)}
	if d, ok := st.(*dopri); ok && d.atStabilityBound() {
		e.Reason = fmt.Sprintf("took more than %d steps: the problem is stiff (fast and slow reactions together), so the explicit "+
			"method's step size is held at its stability bound (h·λ ≈ %.2g) however loose the tolerance; "+
			"choose a method for stiff systems (bdf, radau or rosenbrock) or auto", maxSteps, d.hLambda)
		return e
	}
	if !sv.p.nonneg || 2*sv.stats.NonNegFixes < sv.stats.Steps {
		return e
	}
	f := make([]float64, sv.n)
	sv.p.rhs(t, y, f)
	worst, rate := -1, 0.0
	for i, v := range y {
		if v <= sv.p.atol[i] && f[i] < 0 && (worst < 0 || f[i] < rate) {
			worst, rate = i, f[i]
		}
	}
	if worst >= 0 {
		e.Component = worst
		e.Reason = fmt.Sprintf("is at zero but its rate of change is still negative (%.3g), so keeping it non-negative "+
			"stalls the solver (more than %d steps); a rate law may go negative there (check custom expressions), "+
			"or switch off non-negativity to see the negative values", rate, maxSteps)
	}
	return e
}

// sensNow returns the sensitivities the driver holds (after a jump, or at
// the start), or nil without sensitivities.
func (sv *Solver) sensNow() []float64 {
	if sv.p.sens == nil {
		return nil
	}
	return sv.p.sens.s
}

// sensFrom copies the sensitivities at t from st into the driver's: those
// of the last accepted point, or, when dense, of its continuous solution.
func (sv *Solver) sensFrom(st stepper, t float64, dense bool) {
	w := sv.p.sens
	if w == nil {
		return
	}
	ss := st.(sensStepper)
	if dense {
		ss.denseSens(t, w.s)
		return
	}
	copy(w.s, ss.currentSens())
}

// sensJump carries the sensitivities across the events just fired at t.
func (sv *Solver) sensJump(t float64, fired []string) {
	w := sv.p.sens
	if w == nil || sv.ev == nil || len(sv.ev.jumps) == 0 {
		return
	}
	j := sv.ev.jumps[len(sv.ev.jumps)-1]
	w.jump(t, fired, j.Before, j.After)
}
