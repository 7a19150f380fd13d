package analyse

import (
	"bytes"
	"context"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"kinetarium/examples"
	"kinetarium/network"
	"kinetarium/solve"
)

func ptr[T any](v T) *T { return &v }

// brusselator is the Brusselator written as a network
// (analytic-checks.md): -> X (rate a), X -> Y (rate b X),
// 2 X + Y -> 3 X (rate X² Y), X -> (rate X).
func brusselator(a, b float64) *network.Model {
	return &network.Model{
		Species:    []network.Species{{Name: "X", Initial: 0.5}, {Name: "Y", Initial: 0.5}},
		Parameters: []network.Parameter{{Name: "a", Value: a}, {Name: "b", Value: b}, {Name: "one", Value: 1}},
		Reactions: []network.Reaction{
			{Name: "feed", Equation: "-> X", Rate: massAction("a", "")},
			{Name: "convert", Equation: "X -> Y", Rate: massAction("b", "")},
			{Name: "autocatalysis", Equation: "2 X + Y -> 3 X", Rate: massAction("one", "")},
			{Name: "drain", Equation: "X ->", Rate: massAction("one", "")},
		},
		Simulation: network.Simulation{TEnd: 10},
	}
}

func prepare(t *testing.T, m *network.Model) *Model {
	t.Helper()
	a, err := Prepare(m)
	if err != nil {
		t.Fatal(err)
	}
	return a
}

// Hopf point of the network Brusselator at b = 1 + a² with frequency a
// (analytic-checks.md, Prigogine & Lefever 1968), for a = 1 and a = 2, to
// 1e-6.
func TestBrusselatorNetworkHopf(t *testing.T) {
	for _, a := range []float64{1, 2} {
		m := prepare(t, brusselator(a, 0.5))
		d, err := m.Continue(context.Background(), ContinueOptions{Knob: "b", From: 0.5, To: 8})
		if err != nil {
			t.Fatal(err)
		}
		var hopf []int
		for k, s := range d.Specials {
			if s.Kind == "hopf" {
				hopf = append(hopf, k)
			}
		}
		if len(hopf) != 1 {
			t.Fatalf("a = %g: specials %+v, want one Hopf point", a, d.Specials)
		}
		s := d.Specials[hopf[0]]
		if math.Abs(s.P-(1+a*a)) > 1e-6 || math.Abs(s.Omega-a) > 1e-6 || math.Abs(s.Period-2*math.Pi/a) > 1e-5 {
			t.Errorf("a = %g: Hopf at b = %.9f, ω = %.9f; want b = %g, ω = %g", a, s.P, s.Omega, 1+a*a, a)
		}
		if math.Abs(s.Y[0]-a) > 1e-6 || math.Abs(s.Y[1]-s.P/a) > 1e-6 {
			t.Errorf("a = %g: Hopf state %v, want (a, b/a)", a, s.Y)
		}
		for k, p := range d.Points {
			if want := p.P < 1+a*a-1e-6; p.Stable != want && math.Abs(p.P-1-a*a) > 1e-6 {
				t.Errorf("a = %g, point %d at b = %g: stable %v", a, k, p.P, p.Stable)
			}
		}
	}
}

// cubicSwitch is x' = μ + x − x³ as a network with an expression law.
func cubicSwitch() *network.Model {
	return &network.Model{
		Species:    []network.Species{{Name: "x", Initial: 0}},
		Parameters: []network.Parameter{{Name: "mu", Value: -1}},
		Reactions: []network.Reaction{
			{Name: "switch", Equation: "-> x", Rate: network.Rate{Law: network.Expression, Expression: "mu + x - x^3"}},
		},
		Simulation: network.Simulation{TEnd: 10, NonNegative: ptr(false)},
	}
}

// The cubic switch's folds at μ = ∓2/(3√3), x = ±1/√3
// (analytic-checks.md), to 1e-6, and its middle branch unstable.
func TestCubicSwitchNetworkFolds(t *testing.T) {
	m := prepare(t, cubicSwitch())
	d, err := m.Continue(context.Background(), ContinueOptions{Knob: "mu", From: -1, To: 1})
	if err != nil {
		t.Fatal(err)
	}
	mu, x := 2/(3*math.Sqrt(3)), 1/math.Sqrt(3)
	if len(d.Specials) != 2 {
		t.Fatalf("specials %+v, want two folds", d.Specials)
	}
	for k, want := range [][2]float64{{mu, -x}, {-mu, x}} {
		s := d.Specials[k]
		if s.Kind != "fold" || math.Abs(s.P-want[0]) > 1e-6 || math.Abs(d.SpecialValues[k][0]-want[1]) > 1e-6 {
			t.Errorf("special %d: %s at μ = %.9f, x = %.9f; want a fold at μ = %.9f, x = %.9f", k, s.Kind, s.P, d.SpecialValues[k][0], want[0], want[1])
		}
	}
	middle := 0
	for k, p := range d.Points {
		if math.Abs(d.Values[k][0]) < x-1e-4 {
			middle++
			if p.Stable {
				t.Errorf("middle branch point x = %g is stable", d.Values[k][0])
			}
		} else if math.Abs(d.Values[k][0]) > x+1e-4 && !p.Stable {
			t.Errorf("outer branch point x = %g is unstable", d.Values[k][0])
		}
	}
	if middle < 5 {
		t.Errorf("only %d points on the middle branch", middle)
	}
	if _, err := d.Hill(0); err == nil || !strings.Contains(err.Error(), "folds") {
		t.Errorf("a Hill curve was fitted across folds: %v", err)
	}
}

// twoStep is X0 -> S -> with v1 = e1 (k1 X0 − k−1 S), v2 = e2 k2 S, X0
// held: the two-step chain of Kacser & Burns (1973) as given in
// analytic-checks.md.
func twoStep() *network.Model {
	return &network.Model{
		Species: []network.Species{{Name: "X0", Initial: 1, Fixed: true}, {Name: "S", Initial: 0}},
		Parameters: []network.Parameter{{Name: "e1", Value: 1}, {Name: "e2", Value: 1},
			{Name: "k1", Value: 1}, {Name: "km1", Value: 1}, {Name: "k2", Value: 3}},
		Reactions: []network.Reaction{
			{Name: "v1", Equation: "X0 -> S", Rate: network.Rate{Law: network.Expression, Expression: "e1*(k1*X0 - km1*S)"}},
			{Name: "v2", Equation: "S ->", Rate: network.Rate{Law: network.Expression, Expression: "e2*k2*S"}},
		},
		Simulation: network.Simulation{TEnd: 10},
	}
}

// The two-step chain's published values (analytic-checks.md; Kacser &
// Burns 1973, Heinrich & Rapoport 1974): S = 0.25, J = 0.75,
// C^J = (0.75, 0.25), C^S = (0.75, −0.75); and the parameter
// sensitivities of J to the enzyme levels equal the flux control
// coefficients, since each rate is proportional to its enzyme (Kacser &
// Burns 1973, common practice).
func TestTwoStepChainPublished(t *testing.T) {
	m := prepare(t, twoStep())
	s, err := m.FindSteady(context.Background())
	if err != nil {
		t.Fatal(err)
	}
	near := func(what string, got, want float64) {
		t.Helper()
		if math.Abs(got-want) > 1e-10 {
			t.Errorf("%s = %.12g, want %g", what, got, want)
		}
	}
	near("S", s.Y[1], 0.25)
	near("J1", s.Fluxes[0], 0.75)
	near("J2", s.Fluxes[1], 0.75)
	c, err := m.Control(s)
	if err != nil {
		t.Fatal(err)
	}
	for i := 0; i < 2; i++ {
		near("C^J1_v1", c.FluxControl.At(i, 0), 0.75)
		near("C^J1_v2", c.FluxControl.At(i, 1), 0.25)
	}
	near("C^S_v1", c.ConcControl.At(1, 0), 0.75)
	near("C^S_v2", c.ConcControl.At(1, 1), -0.75)
	near("∂lnJ/∂ln e1", c.ParamFluxes.At(1, 0), 0.75)
	near("∂lnJ/∂ln e2", c.ParamFluxes.At(1, 1), 0.25)
	near("∂lnS/∂ln e2", c.ParamVariables.At(1, 1), -0.75)
}

// checkTheorems checks the summation theorems (Σ_j C^J_ij = 1,
// Σ_j C^S_ij = 0) and the connectivity theorems in matrix form
// (C^J ε L = 0, C^S ε L = −L; Reder 1988) on the unscaled coefficients,
// which hold whether or not a flux is zero.
func checkTheorems(t *testing.T, name string, m *Model, s *Steady, c *ControlTables) {
	t.Helper()
	nr := len(s.Reactions)
	tol := 1e-7
	vmax, ymax := 0.0, 0.0
	for _, v := range s.Fluxes {
		vmax = math.Max(vmax, math.Abs(v))
	}
	for _, v := range s.Y {
		ymax = math.Max(ymax, math.Abs(v))
	}
	if vmax < 1e-12 {
		t.Logf("%s: every flux is below 1e-12 (an equilibrium): flux control is undefined, only concentrations checked", name)
	}
	// Unscaled: Σ_j C^J_ij v_j = J_i and Σ_j C^S_ij v_j = 0 hold at every
	// steady state (N·v = 0).
	for i := 0; i < nr; i++ {
		sum := 0.0
		for j := 0; j < nr; j++ {
			sum += c.UnscaledFlux.At(i, j) * s.Fluxes[j]
		}
		if vmax >= 1e-12 && math.Abs(sum-s.Fluxes[i]) > tol*vmax {
			t.Errorf("%s: Σ_j C^J_%s,j v_j = %g, want J = %g", name, s.Reactions[i], sum, s.Fluxes[i])
		}
	}
	// Scaled sums, where the flux or the concentration is not lost in
	// rounding (below 1e-8 of the largest, the scaled coefficients are
	// ratios of rounding errors).
	for i := 0; i < nr; i++ {
		if math.Abs(s.Fluxes[i]) < 1e-8*vmax || vmax < 1e-12 {
			continue
		}
		sum := 0.0
		for j := 0; j < nr; j++ {
			sum += c.FluxControl.At(i, j)
		}
		if math.Abs(sum-1) > tol {
			t.Errorf("%s: flux control coefficients of %s sum to %.10g, want 1", name, s.Reactions[i], sum)
		}
	}
	for _, i := range c.Free {
		if math.Abs(s.Y[i]) < 1e-8*ymax {
			continue
		}
		sum := 0.0
		for j := 0; j < nr; j++ {
			sum += c.ConcControl.At(i, j)
		}
		if math.Abs(sum) > tol {
			t.Errorf("%s: concentration control coefficients of %s sum to %.3g, want 0", name, s.Species[i], sum)
		}
	}
	if s.Link == nil {
		return
	}
	var e = newRateJac(m, s)
	n, k := s.Link.Dims()
	for i := 0; i < nr; i++ {
		for col := 0; col < k; col++ {
			v := 0.0
			for j := 0; j < nr; j++ {
				for sp := 0; sp < n; sp++ {
					v += c.UnscaledFlux.At(i, j) * e.At(j, sp) * s.Link.At(sp, col)
				}
			}
			if math.Abs(v) > tol*scaleOf(e) {
				t.Errorf("%s: flux connectivity (C^J ε L)[%d][%d] = %g, want 0", name, i, col, v)
			}
		}
	}
	for i := 0; i < n; i++ {
		for col := 0; col < k; col++ {
			v := 0.0
			for j := 0; j < nr; j++ {
				for sp := 0; sp < n; sp++ {
					v += c.UnscaledConc.At(i, j) * e.At(j, sp) * s.Link.At(sp, col)
				}
			}
			if math.Abs(v+s.Link.At(i, col)) > tol*(1+math.Abs(s.Link.At(i, col))) {
				t.Errorf("%s: concentration connectivity (C^S ε L)[%d][%d] = %g, want %g", name, i, col, v, -s.Link.At(i, col))
			}
		}
	}
}

// Summation and connectivity theorems on every example with a steady
// state.
func TestTheoremsOnExamples(t *testing.T) {
	tested := 0
	for _, name := range examples.Names() {
		b, _ := examples.Open(name)
		mod, err := network.Read(bytes.NewReader(b), name)
		if err != nil {
			t.Fatal(err)
		}
		m, err := Prepare(mod)
		if err != nil {
			t.Logf("%s: %v", name, err)
			continue
		}
		s, err := m.FindSteady(context.Background())
		if err != nil {
			t.Logf("%s: no steady state: %v", name, err)
			continue
		}
		c, err := m.Control(s)
		if err != nil {
			t.Logf("%s: %v", name, err)
			continue
		}
		checkTheorems(t, name, m, s, c)
		tested++
	}
	if tested < 3 {
		t.Errorf("only %d examples had a steady state with control coefficients", tested)
	}
}

// Random reversible chains A0 <=> A1 <=> … <=> An with held ends and
// random constants: the theorems hold at every steady state.
func TestTheoremsOnRandomChains(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for trial := 0; trial < 30; trial++ {
		n := 2 + rng.IntN(6)
		mod := &network.Model{Simulation: network.Simulation{TEnd: 10}}
		for i := 0; i <= n; i++ {
			mod.Species = append(mod.Species, network.Species{Name: "A" + itoa(i), Initial: rng.Float64() * 2, Fixed: i == 0 || i == n})
		}
		for i := 0; i < n; i++ {
			kf, kr := "kf"+itoa(i), "kr"+itoa(i)
			mod.Parameters = append(mod.Parameters, network.Parameter{Name: kf, Value: 0.1 + 3*rng.Float64()}, network.Parameter{Name: kr, Value: 0.1 + 3*rng.Float64()})
			r := network.Reaction{Name: "r" + itoa(i), Equation: "A" + itoa(i) + " <=> A" + itoa(i+1),
				Rate: massAction(kf, kr)}
			if trial%3 == 1 { // saturable steps as expressions
				a, b := "A"+itoa(i), "A"+itoa(i+1)
				r.Rate = network.Rate{Law: network.Expression, Expression: "(" + kf + "*" + a + " - " + kr + "*" + b + ")/(1 + " + a + " + " + b + ")"}
			}
			mod.Reactions = append(mod.Reactions, r)
		}
		if trial%3 == 2 { // an enzyme that binds the first intermediate: a conservation law
			mod.Species = append(mod.Species, network.Species{Name: "E", Initial: 1}, network.Species{Name: "EA", Initial: 0})
			mod.Parameters = append(mod.Parameters, network.Parameter{Name: "kb", Value: 1}, network.Parameter{Name: "ku", Value: 0.5})
			mod.Reactions = append(mod.Reactions, network.Reaction{Name: "bind", Equation: "E + A" + itoa(1) + " <=> EA",
				Rate: massAction("kb", "ku")})
		}
		m := prepare(t, mod)
		s, err := m.FindSteady(context.Background())
		if err != nil {
			t.Fatalf("chain %d: %v", trial, err)
		}
		if !s.Stable {
			t.Errorf("chain %d: %s, want stable", trial, s.Class)
		}
		c, err := m.Control(s)
		if err != nil {
			t.Fatal(err)
		}
		checkTheorems(t, "chain", m, s, c)
	}
}

// Steady states against long integrations of the same model (common
// practice): integrated with the model's method to t = 1e4 at rtol 1e-10,
// every species within 1e-6 relative (1e-9 absolute).
func TestSteadyAgainstLongIntegration(t *testing.T) {
	models := map[string]*network.Model{"two-step": twoStep(), "brusselator a=1 b=1.5": brusselator(1, 1.5)}
	for _, name := range examples.Names() {
		b, _ := examples.Open(name)
		mod, _ := network.Read(bytes.NewReader(b), name)
		if len(mod.Events) == 0 {
			models[name] = mod
		}
		if strings.HasPrefix(name, "signalling-cascade") {
			models[name+" dp×100"] = withClearableReporter(t, mod)
		}
	}
	checked := 0
	for name, mod := range models {
		m, err := Prepare(mod)
		if err != nil {
			continue
		}
		s, err := m.FindSteady(context.Background())
		if err != nil {
			t.Logf("%s: %v", name, err)
			continue
		}
		if !s.Stable {
			continue
		}
		// Long enough for the slowest mode to decay by e^-40.
		tEnd := math.Max(1e4, 40*s.SlowestTimeScale)
		res, err := solve.Solve(context.Background(), m.Sys, 0, tEnd, m.Sys.Initial(),
			solve.Settings{RTol: 1e-10, ATol: 1e-14, Times: []float64{tEnd}, NonNegative: true})
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		y := res.Y[len(res.Y)-1]
		for i, v := range s.Y {
			if math.Abs(v-y[i]) > 1e-6*math.Abs(y[i])+1e-9 {
				t.Errorf("%s: %s steady %.10g, integrated %.10g", name, s.Species[i], v, y[i])
			}
		}
		checked++
	}
	if checked < 6 {
		t.Errorf("only %d models compared", checked)
	}
}

// Bad input: each gets a message that names the problem.
func TestBadInputMessages(t *testing.T) {
	m := prepare(t, brusselator(1, 1.5))
	for _, c := range []struct {
		o    ContinueOptions
		want string
	}{
		{ContinueOptions{Knob: "kcat", From: 1, To: 2}, `no parameter "kcat"`},
		{ContinueOptions{Knob: "b", From: 1, To: 2, Start: ptr(3.0)}, "outside the range"},
		{ContinueOptions{Knob: "b", From: 2, To: 2}, "give a range"},
		{ContinueOptions{Knob: "volume:default", From: 1, To: 2}, "parameter or init:SPECIES"},
		{ContinueOptions{Knob: "b", From: 1, To: 2, Quantities: []string{"Z"}}, `no species or assignment "Z"`},
	} {
		_, err := m.Continue(context.Background(), c.o)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%+v: error %v, want one containing %q", c.o, err, c.want)
		}
	}
	synth := &network.Model{Species: []network.Species{{Name: "P"}},
		Parameters: []network.Parameter{{Name: "k", Value: 2}},
		Reactions:  []network.Reaction{{Name: "make", Equation: "-> P", Rate: massAction("k", "")}},
		Simulation: network.Simulation{TEnd: 1}}
	_, err := prepare(t, synth).FindSteady(context.Background())
	if err == nil || !strings.Contains(err.Error(), "P keeps growing") {
		t.Errorf("pure synthesis: %v, want a message that P keeps growing", err)
	}
	t.Log(err)
	timed := cubicSwitch()
	timed.Reactions[0].Rate.Expression = "mu + x - x^3 + t"
	if _, err := Prepare(timed); err == nil || !strings.Contains(err.Error(), "time t") {
		t.Errorf("time-dependent rate: %v", err)
	}
}

// Dose–response of a receptor R + L <=> C with L held: at steady state the
// bound fraction is L/(Kd + L), Kd = koff/kon (law of mass action, common
// practice), a Hill curve with EC50 = Kd and coefficient 1.
func TestDoseResponseHill(t *testing.T) {
	mod := &network.Model{
		Species:    []network.Species{{Name: "R", Initial: 1}, {Name: "L", Initial: 0.01, Fixed: true}, {Name: "C"}},
		Parameters: []network.Parameter{{Name: "kon", Value: 2}, {Name: "koff", Value: 0.6}},
		Reactions: []network.Reaction{{Name: "bind", Equation: "R + L <=> C",
			Rate: massAction("kon", "koff")}},
		Simulation: network.Simulation{TEnd: 10},
	}
	m := prepare(t, mod)
	d, err := m.Continue(context.Background(), ContinueOptions{Knob: "init:L", From: 0.001, To: 100, Quantities: []string{"C"}})
	if err != nil {
		t.Fatal(err)
	}
	for k, p := range d.Points {
		L := p.P
		if want := L / (0.3 + L); math.Abs(d.Values[k][0]-want) > 1e-8 {
			t.Fatalf("L = %g: C = %g, want %g", L, d.Values[k][0], want)
		}
	}
	h, err := d.Hill(0)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(h.EC50-0.3) > 1e-4 || math.Abs(h.N-1) > 1e-4 || h.R2 < 0.999999 {
		t.Errorf("Hill fit %+v, want EC50 0.3, N 1", h)
	}
	if s := DescribeHill(d, 0, h); strings.Contains(s, "extrapolated") {
		t.Errorf("an EC50 inside the doses is called extrapolated: %s", s)
	}
	if h.EC50 = 1e4; !strings.Contains(DescribeHill(d, 0, h), "the EC50 lies outside the doses followed") {
		t.Errorf("an EC50 outside the doses is not called extrapolated: %s", DescribeHill(d, 0, h))
	}
	if last := d.Points[len(d.Points)-1].P; math.Abs(last-100) > 1e-9 {
		t.Errorf("last point at %g, want 100", last)
	}
}

// massAction is a mass-action rate with constant k (and kr for the
// reverse direction when not empty), read through the model file.
func massAction(k, kr string) network.Rate {
	args := `"k": "` + k + `"`
	if kr != "" {
		args += `, "k_reverse": "` + kr + `"`
	}
	m, err := network.Read(strings.NewReader(`{"format": "kinetarium.model/1", "species": [{"name": "A"}],
		"parameters": [{"name": "`+k+`", "value": 1}`+map[bool]string{true: `, {"name": "` + kr + `", "value": 1}`, false: ""}[kr != ""]+`],
		"reactions": [{"name": "r", "equation": "A <=> A", "rate": {"law": "mass_action", `+args+`}}]}`), "rate")
	if err != nil {
		panic(err)
	}
	return m.Reactions[0].Rate
}

func itoa(i int) string { return string(rune('0'+i/10)) + string(rune('0'+i%10)) }
