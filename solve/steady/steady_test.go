package steady

import (
	"context"
	"errors"
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// brusselator: X' = a − (b+1)X + X²Y, Y' = bX − X²Y (Prigogine & Lefever
// 1968), with b the family's parameter.
type brusselator struct{ a, b float64 }

func (s *brusselator) Dim() int { return 2 }
func (s *brusselator) RHS(_ float64, y, dy []float64) {
	x, yy := y[0], y[1]
	dy[0] = s.a - (s.b+1)*x + x*x*yy
	dy[1] = s.b*x - x*x*yy
}
func (s *brusselator) Jacobian(_ float64, y []float64, j *mat.Dense) {
	x, yy := y[0], y[1]
	j.Set(0, 0, -(s.b+1)+2*x*yy)
	j.Set(0, 1, x*x)
	j.Set(1, 0, s.b-2*x*yy)
	j.Set(1, 1, -x*x)
}
func (s *brusselator) SetParameter(p float64) { s.b = p }
func (s *brusselator) ParamDeriv(y, d []float64) {
	d[0] = -y[0]
	d[1] = y[0]
}

// cubic: x' = μ + x − x³, the normal form of a pair of folds, μ the
// parameter.
type cubic struct{ mu float64 }

func (s *cubic) Dim() int                                      { return 1 }
func (s *cubic) RHS(_ float64, y, dy []float64)                { dy[0] = s.mu + y[0] - y[0]*y[0]*y[0] }
func (s *cubic) Jacobian(_ float64, y []float64, j *mat.Dense) { j.Set(0, 0, 1-3*y[0]*y[0]) }
func (s *cubic) SetParameter(p float64)                        { s.mu = p }
func (s *cubic) ParamDeriv(_, d []float64)                     { d[0] = 1 }

// The Brusselator's steady state is (a, b/a) with Jacobian
// [[b−1, a²], [−b, −a²]] (analytic-checks.md): for a = 1, b = 1.5 the
// trace is −0.5 and the determinant 1, eigenvalues −0.25 ± i·√0.9375: a
// stable focus.
func TestFindBrusselator(t *testing.T) {
	s := &brusselator{a: 1, b: 1.5}
	r, err := Find(context.Background(), s, []float64{0.3, 0.2}, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(r.Y[0]-1) > 1e-10 || math.Abs(r.Y[1]-1.5) > 1e-10 {
		t.Errorf("steady state %v, want (1, 1.5)", r.Y)
	}
	want := complex(-0.25, math.Sqrt(0.9375))
	if len(r.Eigenvalues) != 2 || math.Abs(real(r.Eigenvalues[0]-want)) > 1e-12 || math.Abs(imag(r.Eigenvalues[0]-want)) > 1e-12 {
		t.Errorf("eigenvalues %v, want %v and its conjugate", r.Eigenvalues, want)
	}
	if r.Class != StableFocus || !r.Stable || math.Abs(r.SlowestTimeScale-4) > 1e-9 {
		t.Errorf("class %q stable %v slowest %g; want stable focus, true, 4", r.Class, r.Stable, r.SlowestTimeScale)
	}
	// Beyond the Hopf point b = 1 + a² = 2 the state is an unstable focus.
	s.b = 3
	r, err = Find(context.Background(), s, []float64{0.3, 0.2}, Settings{})
	if err != nil {
		t.Fatal(err)
	}
	if r.Class != UnstableFocus || r.Stable {
		t.Errorf("b = 3: class %q, want unstable focus", r.Class)
	}
}

// The fallback integration on the Brusselator at a = 1, b = 2.5 (beyond
// its Hopf point): the orbit settles on a limit cycle, so the integration
// must report oscillations, with a period above 2π/a (the period at onset,
// analytic-checks.md) and below twice it (the limit cycle slows as it
// grows).
func TestIntegrationSeesOscillation(t *testing.T) {
	s := &brusselator{a: 1, b: 2.5}
	set := Settings{}
	set.defaults()
	red, _ := newReduction(2, nil)
	var st Stats
	nw := newNewton(s, red, &set, &st)
	nw.totals = nil
	_, err := integrate(context.Background(), s, nw, []float64{0.5, 0.5}, &set, &st)
	var nf *NotFoundError
	if !errors.As(err, &nf) || nf.Reason != "oscillating" {
		t.Fatalf("got %v, want an oscillation", err)
	}
	if nf.Period < 2*math.Pi || nf.Period > 4*math.Pi {
		t.Errorf("period %g, want between 2π and 4π", nf.Period)
	}
	t.Log(nf.Describe(func(i int) string { return []string{"X", "Y"}[i] }))
}

// Pure synthesis x' = 1 has no steady state: the message must say x keeps
// growing.
type synth struct{}

func (synth) Dim() int                                      { return 1 }
func (synth) RHS(_ float64, y, dy []float64)                { dy[0] = 1 }
func (synth) Jacobian(_ float64, y []float64, j *mat.Dense) { j.Set(0, 0, 0) }

func TestNoSteadyStateDiverging(t *testing.T) {
	_, err := Find(context.Background(), synth{}, []float64{0}, Settings{MaxTime: 1e6})
	var nf *NotFoundError
	if !errors.As(err, &nf) || nf.Reason != "diverging" || nf.Component != 0 {
		t.Fatalf("got %v, want diverging component 0", err)
	}
	t.Log(err)
}

// The cubic switch x' = μ + x − x³ has folds at x = ±1/√3,
// μ = ∓2/(3√3) (analytic-checks.md); continuation from μ = −1 to 1 must
// find both, to 1e-6, with the middle branch unstable.
func TestContinueCubicFolds(t *testing.T) {
	s := &cubic{mu: -1}
	br, err := Continue(context.Background(), s, -1, []float64{-1.3}, ContinueSettings{Min: -1, Max: 1, Settings: Settings{Signed: true}})
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("%d points, stop: %s, specials %+v", len(br.Points), br.Stop, br.Specials)
	if len(br.Specials) != 2 {
		t.Fatalf("found %d special points, want 2 folds", len(br.Specials))
	}
	mu := 2 / (3 * math.Sqrt(3))
	x := 1 / math.Sqrt(3)
	for k, want := range [][2]float64{{mu, -x}, {-mu, x}} {
		sp := br.Specials[k]
		if sp.Kind != "fold" || math.Abs(sp.P-want[0]) > 1e-6 || math.Abs(sp.Y[0]-want[1]) > 1e-6 {
			t.Errorf("special %d: %s at μ = %.10f, x = %.10f; want fold at %.10f, %.10f", k, sp.Kind, sp.P, sp.Y[0], want[0], want[1])
		}
	}
	for _, p := range br.Points {
		middle := math.Abs(p.Y[0]) < x-1e-3
		if middle == p.Stable {
			t.Errorf("x = %g: stable %v", p.Y[0], p.Stable)
		}
	}
	last := br.Points[len(br.Points)-1]
	if math.Abs(last.P-1) > 1e-9 {
		t.Errorf("last point at μ = %g, want the bound 1", last.P)
	}
}

// Hopf points of the Brusselator at b = 1 + a² with frequency a
// (analytic-checks.md), for two values of a, to 1e-6.
func TestContinueBrusselatorHopf(t *testing.T) {
	for _, a := range []float64{1, 1.5} {
		s := &brusselator{a: a, b: 0.5}
		br, err := Continue(context.Background(), s, 0.5, []float64{a, 0.5 / a}, ContinueSettings{Min: 0.5, Max: 5})
		if err != nil {
			t.Fatal(err)
		}
		if len(br.Specials) != 1 || br.Specials[0].Kind != "hopf" {
			t.Fatalf("a = %g: specials %+v, want one Hopf point", a, br.Specials)
		}
		sp := br.Specials[0]
		if math.Abs(sp.P-(1+a*a)) > 1e-6 || math.Abs(sp.Omega-a) > 1e-6 {
			t.Errorf("a = %g: Hopf at b = %.9f, ω = %.9f; want %g, %g", a, sp.P, sp.Omega, 1+a*a, a)
		}
	}
}

// A Hill curve fitted to points of an exact Hill curve recovers its
// numbers (common practice: exact data, zero residual), rising and
// falling.
func TestFitHillExact(t *testing.T) {
	for _, want := range []Hill{{Bottom: 0.1, Top: 2, EC50: 3.5, N: 2.2}, {Bottom: 5, Top: 1, EC50: 0.02, N: 0.8}} {
		var x, r []float64
		for k := 0; k <= 30; k++ {
			v := want.EC50 * math.Pow(10, -2+4*float64(k)/30)
			x, r = append(x, v), append(r, want.At(v))
		}
		h, err := FitHill(x, r)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(h.EC50/want.EC50-1) > 1e-6 || math.Abs(h.N-want.N) > 1e-6 || math.Abs(h.Top-want.Top) > 1e-6 || math.Abs(h.Bottom-want.Bottom) > 1e-6 {
			t.Errorf("fitted %+v, want %+v", h, want)
		}
		if h.Falling() != (want.Top < want.Bottom) {
			t.Errorf("falling %v", h.Falling())
		}
	}
	if _, err := FitHill([]float64{1, 2, 3, 4}, []float64{1, 1, 1, 1}); err == nil {
		t.Error("a flat response was fitted")
	}
}

// A fit whose half-effect dose lies outside the doses it was given is
// extrapolated, and says so; one over doses around it is not.
func TestFitHillExtrapolated(t *testing.T) {
	want := Hill{Bottom: 100, Top: 0, EC50: 50, N: 2}
	for _, c := range []struct {
		lo, hi float64
		extra  bool
	}{{0.1, 20, true}, {1, 2000, false}} {
		var x, r []float64
		for k := 0; k <= 30; k++ {
			v := c.lo * math.Pow(c.hi/c.lo, float64(k)/30)
			x, r = append(x, v), append(r, want.At(v))
		}
		h, err := FitHill(x, r)
		if err != nil {
			t.Fatal(err)
		}
		if h.DoseMin != c.lo || math.Abs(h.DoseMax/c.hi-1) > 1e-12 || h.Extrapolated() != c.extra {
			t.Errorf("doses %v to %v: range [%v, %v], EC50 %v, extrapolated %v; want %v", c.lo, c.hi, h.DoseMin, h.DoseMax, h.EC50, h.Extrapolated(), c.extra)
		}
	}
}
