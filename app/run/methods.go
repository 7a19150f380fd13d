package run

import (
	"fmt"
	"strings"

	"kinetarium/network"
	"kinetarium/solve"
)

// Method is one integration method a model can ask for: the word of the
// model file (one of network.Methods), the solver's method, and how people
// see it.
type Method struct {
	Name   string       // the model file's word: "auto", "rosenbrock", …
	Solve  solve.Method // what the solver runs
	Title  string       // the method's name for people: "Rosenbrock (RODAS4)"
	Suited string       // the problems it suits, in a word or two: "stiff"
}

// Methods is the one table from the model file's method words to the
// solver's methods, in the order of network.Methods.
var Methods = []Method{
	{"auto", solve.Auto, "Automatic", ""},
	{"rosenbrock", solve.Rosenbrock, "Rosenbrock (RODAS4)", "stiff"},
	{"radau", solve.Radau, "Radau IIA (order 5)", "stiff"},
	{"bdf", solve.BDF, "BDF (orders 1–5)", "stiff"},
	{"explicit", solve.Explicit, "Dormand–Prince", "non-stiff"},
}

// Choice is the method's label in a list of choices: the title and the
// problems it suits, "Rosenbrock (RODAS4) — stiff".
func (m Method) Choice() string {
	if m.Suited == "" {
		return m.Title
	}
	return m.Title + " — " + m.Suited
}

// LookupMethod returns the method of a model file's word; "" means "auto".
// It is the one place an unknown method is refused.
func LookupMethod(name string) (Method, error) {
	if name == "" {
		name = network.DefaultMethod
	}
	for _, m := range Methods {
		if m.Name == name {
			return m, nil
		}
	}
	return Method{}, fmt.Errorf("simulation method %q is not known; expected one of %s", name, strings.Join(network.Methods, ", "))
}

// MethodTitle returns the title of a solver method, as in Methods, or the
// method's own word when the table does not have it.
func MethodTitle(m solve.Method) string {
	for _, x := range Methods {
		if x.Solve == m && m != solve.Auto {
			return x.Title
		}
	}
	return string(m)
}

// Settings is the one translation of a model's simulation settings into
// solver settings with the output times. An unknown method is an error.
func Settings(sim network.Simulation) (solve.Settings, error) {
	s := sim.WithDefaults()
	m, err := LookupMethod(s.Method)
	if err != nil {
		return solve.Settings{}, err
	}
	return solve.Settings{
		RTol:        s.RTol,
		ATol:        s.ATol,
		Method:      m.Solve,
		Times:       network.OutputTimes(s.TEnd, s.Output),
		NonNegative: s.KeepNonNegative(),
	}, nil
}
