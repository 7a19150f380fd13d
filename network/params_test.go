package network

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"

	"kinetarium/examples"
)

// checkParamJacobianFD compares ∂f/∂q at y with central finite differences
// in each parameter and volume (common practice) and reports each
// disagreement; see paramJacobianMismatches.
func checkParamJacobianFD(t *testing.T, label string, s *System, y []float64) {
	t.Helper()
	for i, msg := range paramJacobianMismatches(s, y) {
		if i < 5 {
			t.Errorf("%s: %s", label, msg)
		}
	}
}

// paramJacobianMismatches compares ∂f/∂q at y with central finite
// differences: step h = 1e-4·max(|q|, 1e-3), agreement within 1e-6
// relative, with an absolute floor of 1e-9 times the largest entry of the
// row plus the rounding noise of the difference quotient (8·eps·|f|/h). It
// also checks that the CSC values match the dense matrix.
func paramJacobianMismatches(s paramSystem, y []float64) []string {
	var bad []string
	n, np := s.Dim(), len(s.Parameters())
	nq := s.ParamDim()
	var jac mat.Dense
	s.ParamJacobian(0.7, y, &jac)
	if r, c := jac.Dims(); r != n || c != nq {
		return []string{fmt.Sprintf("ParamJacobian is %d×%d, want %d×%d", r, c, n, nq)}
	}
	fp, fm := make([]float64, n), make([]float64, n)
	fd := mat.NewDense(n, nq, nil)
	noise := mat.NewDense(n, nq, nil)
	get := func(j int) float64 {
		if j < np {
			return s.Parameter(j)
		}
		return s.Volume(j - np)
	}
	set := func(j int, v float64) {
		if j < np {
			s.SetParameter(j, v)
		} else {
			s.SetVolume(j-np, v)
		}
	}
	for j := 0; j < nq; j++ {
		q := get(j)
		h := 1e-4 * math.Max(math.Abs(q), 1e-3)
		set(j, q+h)
		s.RHS(0.7, y, fp)
		set(j, q-h)
		s.RHS(0.7, y, fm)
		set(j, q)
		for i := 0; i < n; i++ {
			fd.Set(i, j, (fp[i]-fm[i])/(2*h))
			noise.Set(i, j, 8*0x1p-52*math.Max(math.Abs(fp[i]), math.Abs(fm[i]))/h)
		}
	}
	for i := 0; i < n; i++ {
		rowMax := 0.0
		for j := 0; j < nq; j++ {
			rowMax = math.Max(rowMax, math.Abs(jac.At(i, j)))
		}
		for j := 0; j < nq; j++ {
			a, b := jac.At(i, j), fd.At(i, j)
			if math.Abs(a-b) > 1e-6*math.Max(math.Abs(a), math.Abs(b))+1e-9*rowMax+noise.At(i, j)+1e-12 {
				bad = append(bad, fmt.Sprintf("∂f%d/∂q%d = %g, finite differences give %g", i, j, a, b))
			}
		}
	}
	cp, ri := s.ParamJacobianPattern()
	vals := make([]float64, len(ri))
	s.ParamJacobianCSC(0.7, y, vals)
	csc := mat.NewDense(n, nq, nil)
	for j := 0; j < nq; j++ {
		for p := cp[j]; p < cp[j+1]; p++ {
			csc.Set(ri[p], j, vals[p])
		}
	}
	if !mat.Equal(csc, &jac) {
		bad = append(bad, "CSC parameter Jacobian differs from the dense one")
	}
	return bad
}

func TestParamJacobianExamples(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for _, name := range examples.Names() {
		s := mustCompile(t, loadExample(t, name))
		for k := 0; k < 3; k++ {
			checkParamJacobianFD(t, name, s, randomState(rng, s))
		}
	}
}

// withAssignments adds two assignments, the second reading the first, and
// a reaction whose rate reads the second, so that derivatives must follow
// the chain rule through both.
func withAssignments(m *Model) *Model {
	m.Parameters = append(m.Parameters, Parameter{Name: "qa", Value: 0.8})
	m.Assignments = append(m.Assignments,
		Assignment{Name: "a0", Expression: "qa*S0 + p1"},
		Assignment{Name: "a1", Expression: "a0^2/(1 + S0) + t"})
	m.Reactions = append(m.Reactions, Reaction{Name: "ra", Equation: "S0 -> ", Rate: Rate{Law: Expression, Expression: "a1*S0/(qa + S0)"}})
	return m
}

func TestParamJacobianRandomNetworks(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	for k := 0; k < 300; k++ {
		m := randomModel(rng)
		if k%2 == 1 {
			m = withAssignments(m)
		}
		s, err := Compile(m)
		if err != nil {
			t.Fatalf("network %d: %v", k, err)
		}
		y := randomState(rng, s)
		checkParamJacobianFD(t, "random network", s, y)
		checkJacobianFD(t, "random network", s, y)
		if t.Failed() {
			t.Logf("model: %+v", m)
			return
		}
	}
}

// Closed forms for one step A -> B with rate k·A (common practice:
// ∂(−k·A)/∂k = −A), and the check must catch a wrong derivative: here the
// mass-action constant's derivative is taken from a Michaelis–Menten law
// behind the same data.
func TestParamJacobianClosedFormAndWrongInput(t *testing.T) {
	m := &Model{Species: []Species{{Name: "A", Initial: 1}, {Name: "B"}},
		Parameters: []Parameter{{Name: "k", Value: 2}},
		Reactions:  []Reaction{{Name: "r", Equation: "A -> B", Rate: NewRate(MassAction, "k", "k")}}}
	s := mustCompile(t, m)
	y := []float64{3, 0}
	var jac mat.Dense
	s.ParamJacobian(0, y, &jac)
	if got := jac.At(0, 0); got != -3 {
		t.Errorf("∂f_A/∂k = %g, want -3", got)
	}
	if got := jac.At(1, 0); got != 3 {
		t.Errorf("∂f_B/∂k = %g, want 3", got)
	}
	if got := jac.At(0, 1); got != 0 { // one compartment: its volume does not enter f
		t.Errorf("∂f_A/∂V = %g, want 0", got)
	}
	if bad := paramJacobianMismatches(s, y); len(bad) != 0 {
		t.Errorf("correct system reported: %v", bad)
	}
	if bad := paramJacobianMismatches(wrongParams{s}, y); len(bad) == 0 {
		t.Error("the finite-difference check accepted a wrong parameter Jacobian")
	}
}

// paramSystem is what paramJacobianMismatches needs of a System.
type paramSystem interface {
	Dim() int
	ParamDim() int
	Parameters() []string
	Parameter(i int) float64
	SetParameter(i int, v float64)
	Volume(i int) float64
	SetVolume(i int, v float64)
	RHS(t float64, y, dydt []float64)
	ParamJacobian(t float64, y []float64, dfdp *mat.Dense)
	ParamJacobianPattern() (colPtr, rowIdx []int)
	ParamJacobianCSC(t float64, y []float64, vals []float64)
}

// wrongParams is a System whose parameter Jacobian is off by 0.1 %.
type wrongParams struct{ *System }

func (w wrongParams) ParamJacobian(t float64, y []float64, dfdp *mat.Dense) {
	w.System.ParamJacobian(t, y, dfdp)
	dfdp.Scale(1.001, dfdp)
}

func (w wrongParams) ParamJacobianCSC(t float64, y []float64, vals []float64) {
	w.System.ParamJacobianCSC(t, y, vals)
	for i := range vals {
		vals[i] *= 1.001
	}
}

func TestParamJacobianNoAllocations(t *testing.T) {
	s := mustCompile(t, withAssignments(randomModel(rand.New(rand.NewPCG(2, 2)))))
	y := randomState(rand.New(rand.NewPCG(1, 1)), s)
	_, ri := s.ParamJacobianPattern()
	vals := make([]float64, len(ri))
	var jac mat.Dense
	s.ParamJacobian(0, y, &jac)
	if a := testing.AllocsPerRun(20, func() { s.ParamJacobianCSC(0.5, y, vals) }); a != 0 {
		t.Errorf("ParamJacobianCSC allocates %v times per call", a)
	}
	if a := testing.AllocsPerRun(20, func() { s.ParamJacobian(0.5, y, &jac) }); a != 0 {
		t.Errorf("ParamJacobian allocates %v times per call", a)
	}
	out := make([]float64, len(s.Assignments()))
	if a := testing.AllocsPerRun(20, func() { s.Assigned(0.5, y, out) }); a != 0 {
		t.Errorf("Assigned allocates %v times per call", a)
	}
}
