package steady

import (
	"context"
	"fmt"
	"math"
	"time"

	"gonum.org/v1/gonum/mat"

	"kinetarium/solve"
)

// Family is a system whose right-hand side depends on one parameter p,
// with the exact derivative by it.
type Family interface {
	solve.System
	// SetParameter sets p.
	SetParameter(p float64)
	// ParamDeriv writes ∂f/∂p at y, for the p last set, into dfdp.
	ParamDeriv(y, dfdp []float64)
}

// ContinueSettings control Continue. The zero value of every field but
// Min and Max means a sensible default.
type ContinueSettings struct {
	// Settings give the conservation laws, the corrector's tolerances
	// (RTol, ATol) and Signed (used only to polish the start).
	Settings
	// Min and Max bound p: the branch stops where it leaves [Min, Max],
	// with a last point on the bound.
	Min, Max float64
	// Down follows the branch towards smaller p first; by default it goes
	// towards larger p.
	Down bool
	// Log continues in ln p (Min > 0), for ranges of several decades.
	Log bool
	// MaxPoints stops the branch after that many points; default 1000.
	MaxPoints int
	// TotalsSlope is d(Γ·y)/dp, one value per law, when p moves the
	// conserved totals (an initial amount); nil when it does not.
	TotalsSlope []float64
	// Step and MaxStep are the first and the largest step along the
	// branch, in units where the parameter's range has length 1 and each
	// variable is measured against its size on the branch; defaults 0.002
	// and 0.01 (at least a hundred points across the range). MinStep (default 1e-7) stops a branch that cannot go on.
	Step, MaxStep, MinStep float64
	// Progress, when set, is called with the fraction of the range covered
	// so far (by the farthest point), after every point.
	Progress func(fraction float64)
}

// Point is a point of a branch.
type Point struct {
	P float64   // the parameter
	Y []float64 // the steady state
	Stability
}

// Special is a located bifurcation point.
type Special struct {
	Kind string // "fold" (a limit point: the branch turns back) or "hopf"
	P    float64
	Y    []float64
	// After is the index of the branch point just before it.
	After int
	// Omega is the angular frequency of a Hopf point's oscillations at
	// onset; Period is 2π/Omega.
	Omega, Period float64
}

// Branch is a continued branch of steady states.
type Branch struct {
	Points   []Point
	Specials []Special
	// Stop says why the branch ended.
	Stop string
	ContinueStats
}

// ContinueStats report the work of Continue.
type ContinueStats struct {
	Corrections int // corrector Newton iterations
	Rejected    int // steps halved
	Located     int // iterations spent locating special points
	Wall        time.Duration
}

// cont is the work space of a continuation.
type cont struct {
	fam   Family
	set   *ContinueSettings
	red   *reduction
	n     int
	tot0  []float64 // totals at q0
	q0    float64
	w     []float64 // squared inverse scales of (y, q)
	jac   *mat.Dense
	f     []float64
	dfdp  []float64
	a     []float64 // (n+1)² bordered matrix
	lu    *solve.LU
	rhs   []float64
	stats *ContinueStats
	ymax  []float64
}

func (c *cont) p(q float64) float64 {
	if c.set.Log {
		return math.Exp(q)
	}
	return q
}

// setP sets the family's parameter for q.
func (c *cont) setP(q float64) { c.fam.SetParameter(c.p(q)) }

// h writes H(u) into out (length n) and reports its scaled size.
func (c *cont) h(u []float64, out []float64) {
	n := c.n
	y, q := u[:n], u[n]
	c.setP(q)
	c.fam.RHS(0, y, c.f)
	dp := c.p(q) - c.p(c.q0)
	for i := 0; i < n; i++ {
		if r := c.red.lawRow[i]; r >= 0 {
			v := -c.tot0[r]
			if c.set.TotalsSlope != nil {
				v -= c.set.TotalsSlope[r] * dp
			}
			for j, x := range y {
				v += c.red.gamma.At(r, j) * x
			}
			out[i] = v
		} else {
			out[i] = c.f[i]
		}
	}
}

// fillJacobian writes [H_y H_q] into the first n rows of the bordered
// matrix at u.
func (c *cont) fillJacobian(u []float64) {
	n := c.n
	y, q := u[:n], u[n]
	c.setP(q)
	c.fam.Jacobian(0, y, c.jac)
	c.fam.ParamDeriv(y, c.dfdp)
	dpdq := 1.0
	if c.set.Log {
		dpdq = c.p(q)
	}
	m := n + 1
	for i := 0; i < n; i++ {
		row := c.a[i*m : (i+1)*m]
		if r := c.red.lawRow[i]; r >= 0 {
			for j := 0; j < n; j++ {
				row[j] = c.red.gamma.At(r, j)
			}
			row[n] = 0
			if c.set.TotalsSlope != nil {
				row[n] = -c.set.TotalsSlope[r] * dpdq
			}
		} else {
			for j := 0; j < n; j++ {
				row[j] = c.jac.At(i, j)
			}
			row[n] = c.dfdp[i] * dpdq
		}
	}
}

// setBorder writes the last row: w∘t.
func (c *cont) setBorder(t []float64) {
	m := c.n + 1
	for j := 0; j < m; j++ {
		c.a[c.n*m+j] = c.w[j] * t[j]
	}
}

// tangent computes the tangent at u, oriented along tPrev, normalised in
// the weighted norm, into t.
func (c *cont) tangent(u, tPrev, t []float64) error {
	c.fillJacobian(u)
	c.setBorder(tPrev)
	if err := c.lu.Factor(c.a); err != nil {
		return fmt.Errorf("singular bordered Jacobian")
	}
	for i := range c.rhs {
		c.rhs[i] = 0
	}
	c.rhs[c.n] = 1
	c.lu.Solve(c.rhs)
	copy(t, c.rhs)
	nrm := c.norm(t)
	if !(nrm > 0) || math.IsInf(nrm, 0) {
		return fmt.Errorf("no tangent")
	}
	for i := range t {
		t[i] /= nrm
	}
	return nil
}

func (c *cont) norm(v []float64) float64 {
	s := 0.0
	for i, x := range v {
		s += c.w[i] * x * x
	}
	return math.Sqrt(s)
}

// correct runs Newton on [H(u); (w∘t)·(u − up)] = 0 from u = up (changed
// in place).
func (c *cont) correct(u, up, t []float64) (iters int, err error) {
	n := c.n
	copy(u, up)
	for it := 1; it <= 12; it++ {
		c.stats.Corrections++
		c.h(u, c.rhs[:n])
		s := 0.0
		for j := range u {
			s += c.w[j] * t[j] * (u[j] - up[j])
		}
		c.rhs[n] = s
		if nonFinite(c.rhs) >= 0 {
			return it, fmt.Errorf("not finite")
		}
		c.fillJacobian(u)
		c.setBorder(t)
		if err := c.lu.Factor(c.a); err != nil {
			return it, err
		}
		for i := range c.rhs {
			c.rhs[i] = -c.rhs[i]
		}
		c.lu.Solve(c.rhs)
		small := true
		for j, d := range c.rhs {
			u[j] += d
			if math.Abs(d)*math.Sqrt(c.w[j]) > 1e-10 {
				small = false
			}
		}
		if nonFinite(u) >= 0 {
			return it, fmt.Errorf("not finite")
		}
		if small {
			return it, nil
		}
	}
	return 12, fmt.Errorf("no convergence")
}

// rescale sets the weights from the branch's sizes so far.
func (c *cont) rescale(u []float64, qRange float64) {
	top := 0.0
	for i := 0; i < c.n; i++ {
		c.ymax[i] = math.Max(c.ymax[i], math.Abs(u[i]))
		top = math.Max(top, c.ymax[i])
	}
	for i := 0; i < c.n; i++ {
		s := math.Max(math.Abs(u[i]), math.Max(0.1*c.ymax[i], 1e-3*top))
		if s == 0 {
			s = 1
		}
		// The variables together weigh as much as the parameter.
		c.w[i] = 1 / (s * s * float64(c.n))
	}
	c.w[c.n] = 1 / (qRange * qRange)
}

// stability classifies the point u.
func (c *cont) stability(u []float64) (Stability, error) {
	c.setP(u[c.n])
	c.fam.Jacobian(0, u[:c.n], c.jac)
	return Classify(c.red.reduced(c.jac))
}

// Continue follows the branch of steady states of fam through (p0, y0) as
// p changes, from p0 towards Max (or Min, with Down), around folds, until
// the branch leaves [Min, Max] or MaxPoints is reached or it cannot go on
// (Branch.Stop says which). y0 need only be near a steady state at p0: it
// is polished first. Folds and Hopf points are located to the corrector's
// accuracy.
func Continue(ctx context.Context, fam Family, p0 float64, y0 []float64, set ContinueSettings) (*Branch, error) {
	start := time.Now()
	set.Settings.defaults()
	if set.MaxPoints <= 0 {
		set.MaxPoints = 1000
	}
	if set.Step <= 0 {
		set.Step = 0.002
	}
	if set.MaxStep <= 0 {
		set.MaxStep = 0.01
	}
	if set.MinStep <= 0 {
		set.MinStep = 1e-7
	}
	switch {
	case math.IsNaN(set.Min) || math.IsNaN(set.Max) || math.IsInf(set.Min, 0) || math.IsInf(set.Max, 0):
		return nil, fmt.Errorf("steady: the range [%v, %v] must be finite", set.Min, set.Max)
	case !(set.Max > set.Min):
		return nil, fmt.Errorf("steady: the range [%g, %g] is empty: the upper end must be above the lower", set.Min, set.Max)
	case !(p0 >= set.Min && p0 <= set.Max):
		return nil, fmt.Errorf("steady: the start %g is outside the range [%g, %g]", p0, set.Min, set.Max)
	case set.Log && !(set.Min > 0):
		return nil, fmt.Errorf("steady: a logarithmic continuation needs a positive range, got [%g, %g]", set.Min, set.Max)
	}
	n := fam.Dim()
	if len(y0) != n {
		return nil, fmt.Errorf("steady: the starting state has %d values; the system has %d variables", len(y0), n)
	}
	red, err := newReduction(n, set.Laws)
	if err != nil {
		return nil, err
	}
	if set.TotalsSlope != nil && len(set.TotalsSlope) != red.laws() {
		return nil, fmt.Errorf("steady: %d totals slopes for %d laws", len(set.TotalsSlope), red.laws())
	}
	br := &Branch{}
	c := &cont{fam: fam, set: &set, red: red, n: n, jac: mat.NewDense(n, n, nil),
		f: make([]float64, n), dfdp: make([]float64, n), a: make([]float64, (n+1)*(n+1)),
		lu: solve.NewLU(n + 1), rhs: make([]float64, n+1), stats: &br.ContinueStats,
		w: make([]float64, n+1), ymax: make([]float64, n)}
	qmin, qmax, q0 := set.Min, set.Max, p0
	if set.Log {
		qmin, qmax, q0 = math.Log(set.Min), math.Log(set.Max), math.Log(p0)
	}
	c.q0 = q0
	c.tot0 = red.totals(y0)
	// Polish the start at fixed p.
	fam.SetParameter(p0)
	var st Stats
	nw := newNewton(fam, red, &set.Settings, &st)
	nw.totals = c.tot0
	y := append([]float64(nil), y0...)
	if err := nw.solve(ctx, y); err != nil {
		if ctx.Err() != nil {
			return nil, ctx.Err()
		}
		return nil, fmt.Errorf("steady: no steady state at the start p = %g: %v", p0, err)
	}
	qRange := qmax - qmin
	u := append(y, q0)
	c.rescale(u, qRange)
	t := make([]float64, n+1)
	tPrev := make([]float64, n+1)
	dir := 1.0
	if set.Down {
		dir = -1
	}
	tPrev[n] = dir
	if err := c.tangent(u, tPrev, t); err != nil {
		return nil, fmt.Errorf("steady: cannot start the branch at p = %g: the Jacobian is singular there (a fold or a missing conservation law)", p0)
	}
	addPoint := func(u []float64) error {
		s, err := c.stability(u)
		if err != nil {
			return err
		}
		br.Points = append(br.Points, Point{P: c.p(u[n]), Y: append([]float64(nil), u[:n]...), Stability: s})
		return nil
	}
	if err := addPoint(u); err != nil {
		return nil, err
	}
	hstep := set.Step
	un := make([]float64, n+1)
	up := make([]float64, n+1)
	tn := make([]float64, n+1)
	far := 0.0
	for {
		if ctx.Err() != nil {
			br.Stop = "cancelled"
			br.Wall = time.Since(start)
			return br, ctx.Err()
		}
		if len(br.Points) >= set.MaxPoints {
			br.Stop = fmt.Sprintf("reached the maximum of %d points at p = %.6g", set.MaxPoints, c.p(u[n]))
			break
		}
		for j := range up {
			up[j] = u[j] + hstep*t[j]
		}
		iters, err := c.correct(un, up, t)
		if err == nil {
			err = c.tangent(un, t, tn)
		}
		if err == nil {
			// Refuse sharp turns: they may jump to another branch.
			dot := 0.0
			for j := range t {
				dot += c.w[j] * t[j] * tn[j]
			}
			if dot < 0.9 {
				err = fmt.Errorf("sharp turn")
			}
		}
		if err != nil {
			br.Rejected++
			hstep /= 2
			if hstep < set.MinStep {
				br.Stop = fmt.Sprintf("the branch could not be followed beyond p = %.6g (step too small)", c.p(u[n]))
				break
			}
			continue
		}
		qn := un[n]
		if qn > qmax || qn < qmin {
			bound := qmax
			if qn < qmin {
				bound = qmin
			}
			// Land on the bound by secant steps in the step length.
			if last, ok := c.toBound(u, t, bound, hstep); ok {
				copy(un, last)
				un[n] = bound // within rounding of it already
				if err := c.tangent(un, t, tn); err != nil {
					copy(tn, t)
				}
			} else {
				br.Stop = fmt.Sprintf("reached the end of the range near p = %.6g", c.p(u[n]))
				break
			}
		}
		prev := br.Points[len(br.Points)-1]
		if err := addPoint(un); err != nil {
			return nil, err
		}
		switch un[n] { // a point landed on a bound has the bound's value exactly
		case qmax:
			br.Points[len(br.Points)-1].P = set.Max
		case qmin:
			br.Points[len(br.Points)-1].P = set.Min
		}
		cur := br.Points[len(br.Points)-1]
		k := len(br.Points) - 2
		// Fold: the parameter's direction along the branch changes sign.
		if t[n]*tn[n] < 0 {
			if sp, ok := c.locate(u, t, hstep, func(v, tv []float64) (float64, bool) { return tv[n], true }); ok {
				br.Specials = append(br.Specials, Special{Kind: "fold", P: c.p(sp[n]), Y: sp[:n], After: k})
			}
		} else if d := positives(prev.Stability) - positives(cur.Stability); d == 2 || d == -2 {
			re := func(v, tv []float64) (float64, bool) {
				s, err := c.stability(v)
				if err != nil {
					return 0, false
				}
				x, _, ok := nearestPair(s)
				return x, ok
			}
			if sp, ok := c.locate(u, t, hstep, re); ok {
				s, _ := c.stability(sp)
				_, om, ok := nearestPair(s)
				if ok && om > 1e-8*math.Max(1, math.Abs(om)) {
					br.Specials = append(br.Specials, Special{Kind: "hopf", P: c.p(sp[n]), Y: sp[:n], After: k,
						Omega: om, Period: 2 * math.Pi / om})
				}
			}
		}
		copy(u, un)
		copy(t, tn)
		c.rescale(u, qRange)
		if set.Progress != nil {
			f := math.Abs(u[n]-q0) / math.Max(math.Abs(qmax-q0), math.Abs(qmin-q0))
			far = math.Max(far, math.Min(1, f))
			set.Progress(far)
		}
		if un[n] >= qmax || un[n] <= qmin {
			br.Stop = fmt.Sprintf("reached the end of the range at p = %.6g", br.Points[len(br.Points)-1].P)
			break
		}
		if iters <= 3 {
			hstep = math.Min(hstep*1.5, set.MaxStep)
		} else if iters > 6 {
			hstep /= 1.5
		}
	}
	br.Wall = time.Since(start)
	return br, nil
}

// positives counts eigenvalues with a positive real part.
func positives(s Stability) int {
	tol := 0.0
	for _, v := range s.Eigenvalues {
		tol = math.Max(tol, marginalTol*math.Hypot(real(v), imag(v)))
	}
	k := 0
	for _, v := range s.Eigenvalues {
		if real(v) > tol {
			k++
		}
	}
	return k
}

// nearestPair returns the real part and |imaginary part| of the complex
// eigenvalue nearest the imaginary axis.
func nearestPair(s Stability) (re, om float64, ok bool) {
	best := math.Inf(1)
	for _, v := range s.Eigenvalues {
		if imag(v) > 0 && math.Abs(real(v)) < best {
			best, re, om, ok = math.Abs(real(v)), real(v), imag(v), true
		}
	}
	return re, om, ok
}

// pointAt corrects the predictor u + s·t; it returns the point and its
// tangent.
func (c *cont) pointAt(u, t []float64, s float64) (v, tv []float64, ok bool) {
	m := c.n + 1
	up := make([]float64, m)
	v = make([]float64, m)
	tv = make([]float64, m)
	for j := range up {
		up[j] = u[j] + s*t[j]
	}
	if _, err := c.correct(v, up, t); err != nil {
		return nil, nil, false
	}
	if err := c.tangent(v, t, tv); err != nil {
		return nil, nil, false
	}
	return v, tv, true
}

// locate finds the zero of g along the step of length h from (u, t) by
// the Illinois variant of regula falsi, keeping the bracket.
func (c *cont) locate(u, t []float64, h float64, g func(v, tv []float64) (float64, bool)) ([]float64, bool) {
	a, b := 0.0, h
	ga, ok1 := g(u, t)
	vb, tb, ok := c.pointAt(u, t, h)
	if !ok || !ok1 {
		return nil, false
	}
	gb, ok2 := g(vb, tb)
	if !ok2 || ga*gb > 0 {
		return nil, false
	}
	best := vb
	side := 0
	for it := 0; it < 60; it++ {
		c.stats.Located++
		s := b - gb*(b-a)/(gb-ga)
		if !(s > math.Min(a, b) && s < math.Max(a, b)) {
			s = (a + b) / 2
		}
		v, tv, ok := c.pointAt(u, t, s)
		if !ok {
			return nil, false
		}
		gs, ok := g(v, tv)
		if !ok {
			return nil, false
		}
		best = v
		if gs == 0 || math.Abs(b-a) < 1e-13*h {
			break
		}
		if gs*gb < 0 {
			a, ga = b, gb
			b, gb = s, gs
			side = 0
		} else {
			b, gb = s, gs
			if side == -1 {
				ga /= 2
			}
			side = -1
		}
		if math.Abs(gs) < 1e-13 {
			break
		}
	}
	return best, true
}

// toBound returns the branch point with q = bound in the step from (u, t)
// of length h, by secant iterations on the step length.
func (c *cont) toBound(u, t []float64, bound, h float64) ([]float64, bool) {
	g := func(v, _ []float64) (float64, bool) { return v[c.n] - bound, true }
	return c.locate(u, t, h, g)
}
