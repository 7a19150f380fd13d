package solve

import "math"

// An EventSystem is a System whose state can jump: at times it schedules
// (doses, the ends of an infusion, switches) and when conditions it watches
// become true (a signal crossing a level). The driver lands exactly on
// every scheduled time, locates every condition that becomes true, lets the
// system change the state there, and restarts the method from the new
// state with a fresh step size and Jacobian (and, for BDF, no history).
//
// A condition k is watched through a function g_k(t, y): it becomes true
// when g_k rises from below zero to zero or above. A condition already true
// at the start does not fire; it must first become false.
type EventSystem interface {
	System
	// ResetEvents is called at the start of every solve, before anything
	// else: nothing has fired yet.
	ResetEvents(t0 float64)
	// NextEvent returns the earliest scheduled time ≥ t that has not fired
	// yet, or +Inf when there is none.
	NextEvent(t float64) float64
	// Conditions returns the number of watched conditions.
	Conditions() int
	// Watch writes g_k(t, y) for every condition into g.
	Watch(t float64, y, g []float64)
	// Fire applies, in the system's own order, every scheduled event due
	// at t and every condition k with rose[k] (rose is nil when only
	// scheduled events are due). It may change y in place, and returns
	// the names of the events that fired; the slice is valid until the
	// next call.
	Fire(t float64, y []float64, rose []bool) []string
}

// Firing is an event that fired during a solve.
type Firing struct {
	T    float64
	Name string
}

// Jump is the state just before and just after the events that fired at
// time T, so that a figure can draw the jump sharply between output
// times.
type Jump struct {
	T             float64
	Before, After []float64
}

// rootSamples is the number of points inside each accepted step where the
// driver evaluates the watched conditions on the method's dense output, in
// addition to the step's end. A condition that becomes true and false
// again within a fifth of a step can be missed; the step size already
// follows the solution's own time scale, so a shorter excursion is a
// feature the solution itself barely resolves.
const rootSamples = 4

// events is the driver's state for an EventSystem.
type events struct {
	es               EventSystem
	nc               int
	gPrev, gLo, gMid []float64
	rose             []bool
	ymid             []float64
	fired            []Firing
	jumps            []Jump
	names            []string // what fire returns
}

func newEvents(es EventSystem, n int) *events {
	nc := es.Conditions()
	return &events{es: es, nc: nc,
		gPrev: make([]float64, nc), gLo: make([]float64, nc), gMid: make([]float64, nc),
		rose: make([]bool, nc), ymid: make([]float64, n)}
}

// risen reports whether some condition has risen from below zero (gPrev)
// to zero or above in g, marking which in rose.
func (e *events) risen(g []float64) bool {
	any := false
	for k := range g {
		e.rose[k] = e.gPrev[k] < 0 && g[k] >= 0
		any = any || e.rose[k]
	}
	return any
}

// locate looks for the first time in (tPrev, tn] where a condition becomes
// true, on the dense output of st, comparing each sample with the one
// before (gPrev holds the conditions at tPrev and, after a step without a
// rise, at tn). It samples rootSamples interior points
// and the end, then bisects the first interval with a rise down to a time
// tolerance of rtol·h (at least 4 ulps of t): the returned time is the
// right end of the final interval, where the condition holds. ok is false
// when nothing rises. y receives the state at the returned time.
func (e *events) locate(st stepper, tPrev, tn float64, yn []float64, rtol float64, y []float64) (float64, bool) {
	h := tn - tPrev
	lo := tPrev
	for j := 1; j <= rootSamples+1; j++ {
		hi := tPrev + h*float64(j)/float64(rootSamples+1)
		ys := e.ymid
		if j == rootSamples+1 {
			hi, ys = tn, yn
		} else {
			st.dense(hi, ys)
		}
		e.es.Watch(hi, ys, e.gMid)
		if !e.risen(e.gMid) {
			// Compare the next sample with this one, so that a condition
			// that turns false and true again within the step is seen.
			lo = hi
			copy(e.gPrev, e.gMid)
			continue
		}
		tol := math.Max(rtol*h, 4*math.Abs(hi)*0x1p-52)
		for hi-lo > tol {
			mid := lo + (hi-lo)/2
			if mid <= lo || mid >= hi {
				break
			}
			st.dense(mid, e.ymid)
			e.es.Watch(mid, e.ymid, e.gMid)
			if e.risen(e.gMid) {
				hi = mid
			} else {
				lo = mid
			}
		}
		if hi == tn {
			copy(y, yn)
		} else {
			st.dense(hi, y)
		}
		e.es.Watch(hi, y, e.gMid)
		e.risen(e.gMid)
		return hi, true
	}
	return 0, false
}

// maxCascade bounds the rounds of conditions that the events at one time
// make true (see fire).
const maxCascade = 100

// fire applies the events due at t to y (rose nil: scheduled ones only),
// then, in rounds, the conditions that those changes turned from false to
// true (a cascade at the same time), records the firings and the jump,
// and watches the conditions anew from the state after the jump.
//
// It returns the names of the events that fired, valid until the next
// call.
func (e *events) fire(t float64, y []float64, rose []bool) []string {
	before := append([]float64(nil), y...)
	e.names = e.names[:0]
	if e.nc > 0 {
		e.es.Watch(t, y, e.gLo) // the conditions just before
	}
	for round := 0; ; round++ {
		for _, name := range e.es.Fire(t, y, rose) {
			e.fired = append(e.fired, Firing{T: t, Name: name})
			e.names = append(e.names, name)
		}
		if e.nc == 0 || round == maxCascade {
			break
		}
		e.es.Watch(t, y, e.gMid)
		any := false
		for k := range e.gMid {
			e.rose[k] = e.gLo[k] < 0 && e.gMid[k] >= 0
			any = any || e.rose[k]
		}
		if !any {
			break
		}
		copy(e.gLo, e.gMid)
		rose = e.rose
	}
	e.jumps = append(e.jumps, Jump{T: t, Before: before, After: append([]float64(nil), y...)})
	if e.nc > 0 {
		e.es.Watch(t, y, e.gPrev)
	}
	return e.names
}
