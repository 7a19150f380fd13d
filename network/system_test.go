package network

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"

	"kinetarium/examples"
)

func loadExample(t testing.TB, name string) *Model {
	t.Helper()
	b, err := examples.Open(name)
	if err != nil {
		t.Fatal(err)
	}
	m, err := Read(strings.NewReader(string(b)), name)
	if err != nil {
		t.Fatal(err)
	}
	return m
}

func mustCompile(t testing.TB, m *Model) *System {
	t.Helper()
	s, err := Compile(m)
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// checkJacobianFD compares the exact Jacobian at y with central finite
// differences (common practice): step h_j = 1e-6·max(|y_j|, 1e-3),
// agreement within 1e-6 relative, with an absolute floor of 1e-9 times the
// largest entry of the row.
func checkJacobianFD(t *testing.T, label string, s *System, y []float64) {
	t.Helper()
	n := s.Dim()
	jac := mat.NewDense(n, n, nil)
	s.Jacobian(0.7, y, jac)
	fp, fm := make([]float64, n), make([]float64, n)
	fd := mat.NewDense(n, n, nil)
	yy := append([]float64(nil), y...)
	for j := 0; j < n; j++ {
		h := 1e-6 * math.Max(math.Abs(y[j]), 1e-3)
		yy[j] = y[j] + h
		s.RHS(0.7, yy, fp)
		yy[j] = y[j] - h
		s.RHS(0.7, yy, fm)
		yy[j] = y[j]
		for i := 0; i < n; i++ {
			fd.Set(i, j, (fp[i]-fm[i])/(2*h))
		}
	}
	bad := 0
	for i := 0; i < n; i++ {
		rowMax := 0.0
		for j := 0; j < n; j++ {
			rowMax = math.Max(rowMax, math.Abs(jac.At(i, j)))
		}
		for j := 0; j < n; j++ {
			a, b := jac.At(i, j), fd.At(i, j)
			if math.Abs(a-b) > 1e-6*math.Max(math.Abs(a), math.Abs(b))+1e-9*rowMax+1e-12 {
				if bad < 5 {
					t.Errorf("%s: J[%d,%d] = %g, finite differences give %g", label, i, j, a, b)
				}
				bad++
			}
		}
	}
	// The CSR values must agree with the dense matrix.
	rp, ci := s.JacobianPattern()
	vals := make([]float64, len(ci))
	s.JacobianCSR(0.7, y, vals)
	csr := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		for p := rp[i]; p < rp[i+1]; p++ {
			csr.Set(i, ci[p], vals[p])
		}
	}
	if !mat.Equal(csr, jac) {
		t.Errorf("%s: CSR Jacobian differs from dense one", label)
	}
}

func randomState(rng *rand.Rand, s *System) []float64 {
	y := s.Initial()
	for i := range y {
		y[i] += 0.05 + rng.Float64()
	}
	return y
}

func TestJacobianExamples(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for _, name := range examples.Names() {
		s := mustCompile(t, loadExample(t, name))
		for k := 0; k < 3; k++ {
			checkJacobianFD(t, name, s, randomState(rng, s))
		}
	}
}

// randomModel builds a random network mixing every law of lawTable over
// 1–8 species in 1–3 compartments (TestEveryLawInRandomModel keeps it so).
func randomModel(rng *rand.Rand) *Model {
	m := &Model{}
	nc := 1 + rng.IntN(3)
	for c := 0; c < nc; c++ {
		vol := 0.2 + 5*rng.Float64()
		// A unit of volume chosen from the volume's digits, so that the
		// random stream is the same as without units: the compartment
		// rule then compares volumes given in different units.
		unit := []string{"", "L", "mL"}[int(vol*1000)%3]
		m.Compartments = append(m.Compartments, Compartment{Name: fmt.Sprintf("c%d", c), Volume: vol, Unit: unit})
	}
	ns := 1 + rng.IntN(8)
	for i := 0; i < ns; i++ {
		m.Species = append(m.Species, Species{Name: fmt.Sprintf("S%d", i), Initial: rng.Float64(),
			Compartment: fmt.Sprintf("c%d", rng.IntN(nc)), Fixed: rng.IntN(10) == 0})
	}
	np := 3
	for p := 0; p < np; p++ {
		m.Parameters = append(m.Parameters, Parameter{Name: fmt.Sprintf("p%d", p), Value: 0.3 + rng.Float64()})
	}
	sp := func() string { return fmt.Sprintf("S%d", rng.IntN(ns)) }
	par := func() string { return fmt.Sprintf("p%d", rng.IntN(np)) }
	side := func(max int) string {
		k := rng.IntN(max + 1)
		var ts []string
		for i := 0; i < k; i++ {
			if rng.IntN(2) == 0 {
				ts = append(ts, "2 "+sp())
			} else {
				ts = append(ts, sp())
			}
		}
		return strings.Join(ts, " + ")
	}
	var gen func(depth int) string
	gen = func(depth int) string {
		if depth == 0 || rng.IntN(3) == 0 {
			switch rng.IntN(3) {
			case 0:
				return par()
			case 1:
				return fmt.Sprintf("%.3g", 0.5+rng.Float64())
			}
			return sp()
		}
		a, b := gen(depth-1), gen(depth-1)
		switch rng.IntN(8) {
		case 0:
			return a + " + " + b
		case 1:
			return a + " - " + b
		case 2:
			return "(" + a + ")*(" + b + ")"
		case 3:
			return "(" + a + ")/(1 + " + sp() + ")"
		case 4:
			return "(" + sp() + ")^" + par()
		case 5:
			return "exp(-" + sp() + ")*(" + a + ")"
		case 6:
			return "sqrt(1 + " + sp() + ")"
		}
		return "log(1 + " + sp() + "^2)*t"
	}
	nr := 1 + rng.IntN(10)
	for r := 0; r < nr; r++ {
		rx := Reaction{Name: fmt.Sprintf("r%d", r)}
		switch k := rng.IntN(13); k {
		case 3, 4, 5, 6, 7, 8, 9, 10, 11:
			rx.Rate, rx.Equation = randomEnzymeLaw(k, rng, m, sp, par)
		case 0:
			lhs, rhs := side(2), side(2)
			if lhs == "" && rhs == "" {
				rhs = sp()
			}
			rev := lhs != "" && rhs != "" && rng.IntN(2) == 0
			rx.Rate = NewRate(MassAction, "k", Named(par()))
			if rev {
				rx.Equation = lhs + " <=> " + rhs
				rx.Rate = rx.Rate.With("k_reverse", Number(0.1+rng.Float64()))
			} else {
				rx.Equation = lhs + " -> " + rhs
			}
		case 1:
			s := sp()
			rx.Equation = s + " -> " + side(2)
			if rng.IntN(2) == 0 {
				rx.Rate = NewRate(MichaelisMenten, "vmax", Named(par()), "km", Number(0.5))
			} else {
				rx.Rate = NewRate(MichaelisMenten, "kcat", Named(par()), "enzyme", Named(sp()), "km", Named(par()))
			}
		default:
			lhs, rhs := side(2), side(2)
			if lhs == "" && rhs == "" {
				lhs = sp()
			}
			rx.Equation = lhs + " -> " + rhs
			rx.Rate = Rate{Law: Expression, Expression: gen(3)}
		}
		if rx.Rate.Law == "" { // the law does not fit this network
			rx.Equation = sp() + " -> " + sp()
			rx.Rate = NewRate(MassAction, "k", Named(par()))
		}
		m.Reactions = append(m.Reactions, rx)
	}
	return m
}

// randomEnzymeLaw returns a reaction with law k (3–11) of randomModel:
// the laws beyond mass action, Michaelis–Menten and expressions, with
// their constants parameters or numbers and their modifiers random
// species. It returns an unset rate when the network cannot hold the law
// (two different substrates or two compartments needed).
func randomEnzymeLaw(k int, rng *rand.Rand, m *Model, sp, par func() string) (Rate, string) {
	val := func() any {
		if rng.IntN(3) == 0 {
			return 0.2 + rng.Float64()
		}
		return par()
	}
	s, p := sp(), sp()
	switch k {
	case 3:
		if rng.IntN(2) == 0 {
			return NewRate(MichaelisMentenReversible, "vf", val(), "vr", val(), "kms", val(), "kmp", val()), s + " <=> " + p
		}
		return NewRate(MichaelisMentenReversible, "vf", val(), "keq", val(), "kms", val(), "kmp", val()), s + " <=> " + p
	case 4, 5, 6, 7:
		law := []string{CompetitiveInhibition, UncompetitiveInhibition, NoncompetitiveInhibition, MixedInhibition}[k-4]
		r := NewRate(law, "vmax", val(), "km", val(), "inhibitor", sp(), "ki", val())
		if law == MixedInhibition {
			r = r.With("alpha_ki", Named(par()))
		}
		return r, s + " -> " + p
	case 8, 9:
		law := []string{HillActivation, HillRepression}[k-8]
		r := NewRate(law, "vmax", val(), "k_half", val(), "n", val())
		if law == HillRepression || rng.IntN(2) == 0 {
			r = r.With("regulator", Named(sp()))
		}
		if law == HillRepression && rng.IntN(2) == 0 {
			return r, "-> " + p // synthesis under repression
		}
		return r, s + " -> " + p
	case 10:
		b := sp()
		if b == s {
			return Rate{}, ""
		}
		if rng.IntN(2) == 0 {
			return NewRate(RandomBi, "vmax", val(), "ka", val(), "kb", val(), "alpha", val()), s + " + " + b + " -> " + p
		}
		return NewRate(OrderedBi, "vmax", val(), "kia", val(), "kma", val(), "kmb", val()), s + " + " + b + " -> " + p
	}
	comp := map[string]string{}
	for _, x := range m.Species {
		comp[x.Name] = x.Compartment
	}
	if comp[s] == comp[p] {
		return Rate{}, ""
	}
	return NewRate(Transport, "vmax", val(), "km", val()), s + " -> " + p
}

// Every law of the registry appears in some network of randomModel, so
// the property tests cover it.
func TestEveryLawInRandomModel(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	seen := map[string]bool{}
	for k := 0; k < 300; k++ {
		for _, r := range randomModel(rng).Reactions {
			seen[r.Rate.Law] = true
		}
	}
	for _, l := range Laws {
		if !seen[l] {
			t.Errorf("law %s never appears in randomModel", l)
		}
	}
}

func TestJacobianRandomNetworks(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	compiled := 0
	for k := 0; k < 300; k++ {
		m := randomModel(rng)
		s, err := Compile(m)
		if err != nil {
			t.Fatalf("network %d: %v", k, err)
		}
		compiled++
		checkJacobianFD(t, fmt.Sprintf("random network %d", k), s, randomState(rng, s))
		if t.Failed() {
			var b strings.Builder
			m.Write(&b)
			t.Fatalf("failing network:\n%s", b.String())
		}
	}
	if compiled != 300 {
		t.Fatalf("compiled %d of 300", compiled)
	}
}

func TestTransportBetweenCompartments(t *testing.T) {
	// d[A_blood]/dt = −k·A_blood, d[A_tissue]/dt = +(V_blood/V_tissue)·k·A_blood
	// (amount is conserved; common practice of compartmental modelling).
	m := &Model{
		Compartments: []Compartment{{Name: "blood", Volume: 5}, {Name: "tissue", Volume: 1}},
		Species:      []Species{{Name: "A_blood", Initial: 2, Compartment: "blood"}, {Name: "A_tissue", Compartment: "tissue"}},
		Reactions:    []Reaction{{Name: "move", Equation: "A_blood -> A_tissue", Rate: NewRate(MassAction, "k", Number(0.3))}},
	}
	s := mustCompile(t, m)
	y := []float64{2, 0.5}
	f := make([]float64, 2)
	s.RHS(0, y, f)
	if want := -0.3 * 2; math.Abs(f[0]-want) > 1e-15 {
		t.Errorf("d[A_blood]/dt = %g, want %g", f[0], want)
	}
	if want := 5 * 0.3 * 2; math.Abs(f[1]-want) > 1e-15 {
		t.Errorf("d[A_tissue]/dt = %g, want %g", f[1], want)
	}
	s.SetVolume(1, 10) // tissue 10: now +0.5·k·A_blood
	s.RHS(0, y, f)
	if want := 0.5 * 0.3 * 2; math.Abs(f[1]-want) > 1e-15 {
		t.Errorf("after SetVolume: d[A_tissue]/dt = %g, want %g", f[1], want)
	}
}

func TestMichaelisMentenAndSetters(t *testing.T) {
	// rate = vmax·S/(km+S) and kcat·E·S/(km+S) (Michaelis–Menten, common practice).
	m := &Model{
		Species:    []Species{{Name: "S", Initial: 3}, {Name: "E", Initial: 0.2}, {Name: "P"}},
		Parameters: []Parameter{{Name: "Vmax", Value: 2}, {Name: "Km", Value: 1.5}, {Name: "kcat", Value: 7}},
		Reactions: []Reaction{
			{Name: "a", Equation: "S -> P", Rate: NewRate(MichaelisMenten, "vmax", Named("Vmax"), "km", Named("Km"))},
			{Name: "b", Equation: "S -> P", Rate: NewRate(MichaelisMenten, "kcat", Named("kcat"), "enzyme", Named("E"), "km", Number(0.5))},
		},
	}
	s := mustCompile(t, m)
	y := s.Initial()
	f := make([]float64, 3)
	s.RHS(0, y, f)
	want := 2*3/(1.5+3) + 7*0.2*3/(0.5+3)
	if math.Abs(f[2]-want) > 1e-14 || math.Abs(f[0]+want) > 1e-14 || f[1] != 0 {
		t.Errorf("RHS = %v, want [%g 0 %g]", f, -want, want)
	}
	c := s.Clone()
	i, _ := s.ParameterIndex("Vmax")
	s.SetParameter(i, 4)
	s.RHS(0, y, f)
	want2 := 4*3/(1.5+3) + 7*0.2*3/(0.5+3)
	if math.Abs(f[2]-want2) > 1e-14 {
		t.Errorf("after SetParameter: d[P]/dt = %g, want %g", f[2], want2)
	}
	c.RHS(0, y, f)
	if math.Abs(f[2]-want) > 1e-14 {
		t.Errorf("clone changed by SetParameter on the original: %g, want %g", f[2], want)
	}
}

func TestFixedSpecies(t *testing.T) {
	m := &Model{
		Species:   []Species{{Name: "B", Initial: 2, Fixed: true}, {Name: "X", Initial: 1}},
		Reactions: []Reaction{{Name: "r", Equation: "B + X -> 2 X", Rate: NewRate(MassAction, "k", Number(3))}},
	}
	s := mustCompile(t, m)
	f := make([]float64, 2)
	s.RHS(0, []float64{2, 1}, f)
	if f[0] != 0 || f[1] != 6 { // k·B·X = 6 (mass action, common practice)
		t.Errorf("RHS = %v, want [0 6]", f)
	}
	jac := mat.NewDense(2, 2, nil)
	s.Jacobian(0, []float64{2, 1}, jac)
	if jac.At(0, 0) != 0 || jac.At(0, 1) != 0 || jac.At(1, 0) != 3 || jac.At(1, 1) != 6 {
		t.Errorf("Jacobian = %v, want [[0 0] [3 6]]", mat.Formatted(jac))
	}
}

func TestNoAllocations(t *testing.T) {
	for _, name := range []string{"toggle-repressors.json", "signalling-cascade-50.json", "two-compartment-drug.json"} {
		s := mustCompile(t, loadExample(t, name))
		y := randomState(rand.New(rand.NewPCG(3, 4)), s)
		f := make([]float64, s.Dim())
		jac := mat.NewDense(s.Dim(), s.Dim(), nil)
		_, ci := s.JacobianPattern()
		vals := make([]float64, len(ci))
		if a := testing.AllocsPerRun(20, func() { s.RHS(1, y, f) }); a != 0 {
			t.Errorf("%s: RHS allocates %v times", name, a)
		}
		if a := testing.AllocsPerRun(20, func() { s.Jacobian(1, y, jac) }); a != 0 {
			t.Errorf("%s: Jacobian allocates %v times", name, a)
		}
		if a := testing.AllocsPerRun(20, func() { s.JacobianCSR(1, y, vals) }); a != 0 {
			t.Errorf("%s: JacobianCSR allocates %v times", name, a)
		}
	}
}

func TestCompileRefusesErrors(t *testing.T) {
	m := &Model{Species: []Species{{Name: "A", Initial: -1}},
		Reactions: []Reaction{{Name: "r", Equation: "A -> Q", Rate: NewRate(MassAction, "k", Number(1))}}}
	_, err := Compile(m)
	if err == nil {
		t.Fatal("Compile accepted a model with errors")
	}
	var pe ErrorList
	if !errors.As(err, &pe) || len(pe) != 2 {
		t.Fatalf("error = %v, want an ErrorList with 2 problems", err)
	}
	if !strings.Contains(err.Error(), `unknown species "Q"`) || !strings.Contains(err.Error(), "initial concentration -1") {
		t.Errorf("error text lacks the problems: %v", err)
	}
}

func newRng() *rand.Rand { return rand.New(rand.NewPCG(5, 6)) }

// A network is autonomous unless a rate expression reads the time t
// (common practice: ∂f/∂t = 0 exactly then).
func TestAutonomous(t *testing.T) {
	for _, c := range []struct {
		expr string
		want bool
	}{{"k*A", true}, {"k*A*exp(-t)", false}} {
		m := &Model{
			Species:    []Species{{Name: "A", Initial: 1}},
			Parameters: []Parameter{{Name: "k", Value: 1}},
			Reactions:  []Reaction{{Name: "r", Equation: "A ->", Rate: Rate{Law: Expression, Expression: c.expr}}},
		}
		s, err := Compile(m)
		if err != nil {
			t.Fatal(err)
		}
		if s.Autonomous() != c.want || s.Clone().Autonomous() != c.want {
			t.Errorf("%s: Autonomous() = %v, want %v", c.expr, s.Autonomous(), c.want)
		}
	}
}
