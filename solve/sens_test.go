package solve

import (
	"context"
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// paramSystem is a test ParamSystem from closures.
type paramSystem struct {
	closureSystem
	np int
	fp func(t float64, y []float64, dfdq *mat.Dense)
}

func (s *paramSystem) ParamDim() int { return s.np }
func (s *paramSystem) ParamJacobian(t float64, y []float64, dfdq *mat.Dense) {
	s.fp(t, y, dfdq)
}

// decayParamSystem is x' = −k·x with q = (k).
func decayParamSystem(k float64) *paramSystem {
	return &paramSystem{
		closureSystem: closureSystem{n: 1, auto: true,
			f: func(_ float64, y, dy []float64) { dy[0] = -k * y[0] },
			j: func(_ float64, _ []float64, j *mat.Dense) { j.Set(0, 0, -k) }},
		np: 1,
		fp: func(_ float64, y []float64, d *mat.Dense) { d.Set(0, 0, -y[0]) },
	}
}

// batemanSystem is A → B → C with rates k1, k2; q = (k1, k2).
func batemanSystem(k1, k2 float64) *paramSystem {
	return &paramSystem{
		closureSystem: closureSystem{n: 3, auto: true,
			f: func(_ float64, y, dy []float64) {
				dy[0] = -k1 * y[0]
				dy[1] = k1*y[0] - k2*y[1]
				dy[2] = k2 * y[1]
			},
			j: func(_ float64, _ []float64, j *mat.Dense) {
				j.Zero()
				j.Set(0, 0, -k1)
				j.Set(1, 0, k1)
				j.Set(1, 1, -k2)
				j.Set(2, 1, k2)
			}},
		np: 2,
		fp: func(_ float64, y []float64, d *mat.Dense) {
			d.Zero()
			d.Set(0, 0, -y[0])
			d.Set(1, 0, y[0])
			d.Set(1, 1, -y[1])
			d.Set(2, 1, y[1])
		},
	}
}

var stiffMethods = []Method{Rosenbrock, Radau, BDF, Auto}

// TestSensDecay checks dx/dk and dx/dx0 of x' = −kx against the closed
// forms dx/dk = −t·x0·e^(−kt) and dx/dx0 = e^(−kt)
// (../shared/reference/analytic-checks.md; worked value at k = 0.3,
// x0 = 2, t = 4: −2.409553695).
func TestSensDecay(t *testing.T) {
	const k, x0 = 0.3, 2.0
	times := []float64{0, 0.5, 1, 2, 4, 8, 10}
	for _, m := range stiffMethods {
		for _, ec := range []bool{false, true} {
			sens := &SensSettings{ErrorControl: ec, Quantities: []Sensitivity{{Param: 0, Scale: k}, {Param: -1, Initial: []float64{1}}}}
			res, err := Solve(context.Background(), decayParamSystem(k), 0, 10, []float64{x0},
				Settings{Method: m, RTol: 1e-8, ATol: 1e-12, Times: times, Sens: sens})
			if err != nil {
				t.Fatalf("%s: %v", m, err)
			}
			for i, tt := range res.T {
				wantK := -tt * x0 * math.Exp(-k*tt)
				wantX0 := math.Exp(-k * tt)
				if d := math.Abs(res.Sens(i, 0)[0] - wantK); d > 1e-6*(1+math.Abs(wantK)) {
					t.Errorf("%s (error control %v): dx/dk at t=%g = %.10g, want %.10g", m, ec, tt, res.Sens(i, 0)[0], wantK)
				}
				if d := math.Abs(res.Sens(i, 1)[0] - wantX0); d > 1e-6 {
					t.Errorf("%s (error control %v): dx/dx0 at t=%g = %.10g, want %.10g", m, ec, tt, res.Sens(i, 1)[0], wantX0)
				}
			}
			// The worked value of analytic-checks.md.
			if got := res.Sens(4, 0)[0]; math.Abs(got-(-2.409553695)) > 1e-6 {
				t.Errorf("%s: dx/dk(4) = %.10g, want −2.409553695 (analytic-checks.md)", m, got)
			}
		}
	}
}

// TestSensBateman checks dB/dk1 of A → B → C against the derivative of
// Bateman's solution (Bateman 1910; ../shared/reference/analytic-checks.md,
// worked value 0.076252817 at k1 = 1, k2 = 0.5, A0 = 1, t = 2) and dB/dk2
// likewise (the closed form differentiated by k2 by hand).
func TestSensBateman(t *testing.T) {
	const k1, k2, a0 = 1.0, 0.5, 1.0
	dBdk1 := func(t float64) float64 {
		return a0 * (k2/((k2-k1)*(k2-k1))*(math.Exp(-k1*t)-math.Exp(-k2*t)) - k1/(k2-k1)*t*math.Exp(-k1*t))
	}
	dBdk2 := func(t float64) float64 {
		// B = k1·A0/(k2 − k1)·(e^(−k1 t) − e^(−k2 t))
		return a0 * k1 * (-(math.Exp(-k1*t)-math.Exp(-k2*t))/((k2-k1)*(k2-k1)) + t*math.Exp(-k2*t)/(k2-k1))
	}
	times := []float64{0, 0.1, 0.5, 1, 2, 3, 5, 10, 20}
	for _, m := range stiffMethods {
		sens := &SensSettings{Quantities: []Sensitivity{{Param: 0}, {Param: 1}}}
		res, err := Solve(context.Background(), batemanSystem(k1, k2), 0, 20, []float64{a0, 0, 0},
			Settings{Method: m, RTol: 1e-9, ATol: 1e-13, Times: times, Sens: sens})
		if err != nil {
			t.Fatalf("%s: %v", m, err)
		}
		for i, tt := range res.T {
			if got, want := res.Sens(i, 0)[1], dBdk1(tt); math.Abs(got-want) > 2e-7 {
				t.Errorf("%s: dB/dk1 at t=%g = %.10g, want %.10g", m, tt, got, want)
			}
			if got, want := res.Sens(i, 1)[1], dBdk2(tt); math.Abs(got-want) > 2e-7 {
				t.Errorf("%s: dB/dk2 at t=%g = %.10g, want %.10g", m, tt, got, want)
			}
			// A + B + C is conserved, so the sensitivities sum to zero.
			s := res.Sens(i, 0)
			if sum := s[0] + s[1] + s[2]; math.Abs(sum) > 1e-8 {
				t.Errorf("%s: sensitivities to k1 sum to %g at t=%g, want 0", m, sum, tt)
			}
		}
		if got := res.Sens(4, 0)[1]; math.Abs(got-0.076252817) > 1e-8 {
			t.Errorf("%s: dB/dk1(2) = %.10g, want 0.076252817 (analytic-checks.md)", m, got)
		}
	}
}

// doseDecay is x' = −k·x with doses of D/V every tau (count of them, the
// first at 0); q = (k) for ∂f/∂q, and the dose D enters through Jump.
type doseDecay struct {
	decayEvents
}

func (d *doseDecay) ParamDim() int { return 1 }
func (d *doseDecay) ParamJacobian(t float64, y []float64, dfdq *mat.Dense) {
	dfdq.Set(0, 0, -y[0])
}

// TestSensRepeatedDoses checks sensitivities across doses against the
// repeated IV bolus closed form C(t) = (D/V)·e^(−kt')·(1 − e^(−nkτ))/(1 −
// e^(−kτ)), t' the time since the n-th dose (Gibaldi & Perrier 1982,
// analytic-checks.md; worked: D = 100, V = 10, k = 0.1, τ = 12, 5 h after
// the 3rd dose C = 8.4423740382): ∂C/∂D = C/D (carried by the Jump hook,
// a jump of 1/V at each dose) and ∂C/∂k, the closed form differentiated
// by hand (continuous across the doses).
func TestSensRepeatedDoses(t *testing.T) {
	const D, V, k, tau = 100.0, 10.0, 0.1, 12.0
	const count = 3
	closed := func(tt float64) (c, dcdk float64) {
		n := math.Min(math.Floor(tt/tau)+1, count)
		tp := tt - (n-1)*tau
		q := math.Exp(-k * tau)
		s := (1 - math.Exp(-n*k*tau)) / (1 - q)
		ds := (n*tau*math.Exp(-n*k*tau)*(1-q) - (1-math.Exp(-n*k*tau))*tau*q) / ((1 - q) * (1 - q))
		e := math.Exp(-k * tp)
		c = D / V * e * s
		return c, -tp*c + D/V*e*ds
	}
	times := []float64{0, 1, 6, 11.9, 12, 13, 24, 29, 30, 40}
	for _, m := range stiffMethods {
		sys := &doseDecay{decayEvents{k: k, dose: D / V, first: 0, tau: tau, count: count}}
		sens := &SensSettings{Quantities: []Sensitivity{{Param: 0, Scale: k}, {Param: -1, Scale: D}},
			Jump: func(t float64, fired []string, before, after []float64, s [][]float64) {
				for _, f := range fired {
					if f == "dose" {
						s[1][0] += 1 / V
					}
				}
			}}
		res, err := Solve(context.Background(), sys, 0, 40, []float64{0},
			Settings{Method: m, RTol: 1e-9, ATol: 1e-12, Times: times, Sens: sens})
		if err != nil {
			t.Fatalf("%s: %v", m, err)
		}
		for i, tt := range res.T {
			c, dcdk := closed(tt)
			if got := res.Y[i][0]; math.Abs(got-c) > 1e-6*c {
				t.Errorf("%s: C(%g) = %.10g, want %.10g", m, tt, got, c)
			}
			if got := res.Sens(i, 0)[0]; math.Abs(got-dcdk) > 1e-6*(1+math.Abs(dcdk)) {
				t.Errorf("%s: dC/dk(%g) = %.10g, want %.10g", m, tt, got, dcdk)
			}
			if got := res.Sens(i, 1)[0]; math.Abs(got-c/D) > 1e-8*(1+c/D) {
				t.Errorf("%s: dC/dD(%g) = %.10g, want %.10g", m, tt, got, c/D)
			}
		}
		if got := res.Y[7][0]; math.Abs(got-8.4423740382) > 1e-6 {
			t.Errorf("%s: C 5 h after the 3rd dose = %.10g, want 8.4423740382 (analytic-checks.md)", m, got)
		}
	}
}

// TestSensBadSettings checks the messages for sensitivities that cannot
// be computed.
func TestSensBadSettings(t *testing.T) {
	ctx := context.Background()
	sys := decayParamSystem(1)
	_, err := Solve(ctx, sys, 0, 1, []float64{1}, Settings{Method: Explicit, Sens: &SensSettings{Quantities: []Sensitivity{{Param: 0}}}})
	if err == nil {
		t.Error("explicit method with sensitivities: no error")
	}
	_, err = Solve(ctx, &sys.closureSystem, 0, 1, []float64{1}, Settings{Sens: &SensSettings{Quantities: []Sensitivity{{Param: 0}}}})
	if err == nil {
		t.Error("parameter sensitivity of a system without ∂f/∂q: no error")
	}
	_, err = Solve(ctx, sys, 0, 1, []float64{1}, Settings{Sens: &SensSettings{Quantities: []Sensitivity{{Param: 3}}}})
	if err == nil {
		t.Error("parameter column out of range: no error")
	}
}

// TestSensStepsAllocateNothing checks that the sensitivity work of every
// step allocates nothing: a solve over a span ten times as long (about ten
// times the steps) allocates as much as a short one, for each method.
func TestSensStepsAllocateNothing(t *testing.T) {
	for _, m := range []Method{Rosenbrock, Radau, BDF} {
		sys := batemanSystem(1, 0.5)
		sens := &SensSettings{ErrorControl: true, Quantities: []Sensitivity{{Param: 0}, {Param: 1}, {Param: -1, Initial: []float64{1, 0, 0}}}}
		sv := NewSolver(sys, Settings{Method: m, RTol: 1e-8, Times: []float64{1}, Sens: sens})
		count := func(tEnd float64) (float64, int) {
			var steps int
			a := testing.AllocsPerRun(5, func() {
				res, err := sv.Solve(context.Background(), 0, tEnd, []float64{1, 0, 0})
				if err != nil {
					t.Fatal(err)
				}
				steps = res.Steps
			})
			return a, steps
		}
		short, s1 := count(2)
		long, s2 := count(40)
		if long > short || s2 < 2*s1 {
			t.Errorf("%s: %v allocations for %d steps, %v for %d", m, short, s1, long, s2)
		}
	}
}
