// Package network holds reaction-network models: species, parameters,
// compartments and reactions with their rate laws, read from and written to
// JSON model files, checked for mistakes (Validate), analysed (stoichiometry,
// conservation laws) and compiled into an ODE system with an exact,
// allocation-free Jacobian (Compile).
//
// The state of a compiled System is the concentration of every species, in
// the order the model lists them. Fixed species stay in the state with a zero
// derivative.
package network

import (
	"strconv"
)

// Format is the value of the "format" key that model files must carry.
const Format = "kinetarium.model/1"

// Rate law names.
const (
	MassAction      = "mass_action"      // k·Π[reactant]^coef (− k_reverse·Π[product]^coef)
	MichaelisMenten = "michaelis_menten" // vmax·S/(km+S) or kcat·E·S/(km+S)
	Expression      = "expression"       // any expression over species, parameters and t
)

// Laws lists the rate law names in the order menus show them.
var Laws = []string{MassAction, MichaelisMenten, Expression}

// DefaultCompartment is the name of the implicit compartment of volume 1
// used when a model declares none.
const DefaultCompartment = "default"

// Model is a reaction network with its simulation settings.
type Model struct {
	Title        string
	Note         string // free text shown with the model
	Units        Units
	Compartments []Compartment
	Species      []Species
	Parameters   []Parameter
	Reactions    []Reaction
	Simulation   Simulation
}

// Units name the units of time and amount (concentration) used by the
// model. They are labels only; nothing is converted.
type Units struct {
	Time, Amount string
}

// Compartment is a well-mixed volume. Species concentrations are per
// compartment volume.
type Compartment struct {
	Name   string
	Volume float64
	Note   string
}

// Species is a chemical species. Initial is its initial concentration.
// Compartment names its compartment; empty means the first compartment (or
// the implicit one). A fixed species keeps its concentration.
type Species struct {
	Name        string
	Initial     float64
	Compartment string
	Fixed       bool
	Note        string
}

// Parameter is a named constant usable in rate laws.
type Parameter struct {
	Name  string
	Value float64
	Unit  string
	Note  string
}

// Reaction is one reaction: an equation such as "E + S <=> ES" and its rate
// law.
type Reaction struct {
	Name     string
	Equation string
	Rate     Rate
	Note     string
}

// Rate is a rate law. Law is one of MassAction, MichaelisMenten and
// Expression; the other fields are used according to the law:
//
//   - mass_action: K, and KReverse for reversible reactions;
//   - michaelis_menten: Vmax and Km, or Kcat, Enzyme (a species) and Km;
//   - expression: Expression, the rate (for a reversible reaction, the net
//     rate).
type Rate struct {
	Law        string
	K          Value
	KReverse   Value
	Vmax       Value
	Km         Value
	Kcat       Value
	Enzyme     Value
	Expression string
}

// Value is a rate-law field given either as the name of a parameter (Name
// not empty) or as a number (Num). Set reports whether the field is given at
// all. In model files it is written as a JSON string or number.
type Value struct {
	Name string
	Num  float64
	Set  bool
}

// Named returns a Value that refers to a parameter or species by name.
func Named(name string) Value { return Value{Name: name, Set: true} }

// Number returns a Value holding the number v.
func Number(v float64) Value { return Value{Num: v, Set: true} }

// String returns the name, or the number in its shortest form ("12"), or
// "" when the value is not set.
func (v Value) String() string {
	switch {
	case !v.Set:
		return ""
	case v.Name != "":
		return v.Name
	default:
		return strconv.FormatFloat(v.Num, 'g', -1, 64)
	}
}

// Simulation holds the settings of a time-course simulation. A zero field
// means its default (see WithDefaults); Read fills defaults in.
type Simulation struct {
	TEnd   float64 // end time; default 100
	Output Output
	RTol   float64 // relative tolerance; default 1e-6
	ATol   float64 // absolute tolerance; default 1e-12
	// Method is "auto" (default), "rosenbrock", "radau", "bdf" or "explicit".
	Method string
	// NonNegative keeps concentrations ≥ 0 during integration; nil means on.
	NonNegative *bool
}

// Methods lists the accepted values of Simulation.Method.
var Methods = []string{"auto", "rosenbrock", "radau", "bdf", "explicit"}

// Output describes the grid of output times.
type Output struct {
	Points  int    // number of points; default 200
	Spacing string // "linear" (default) or "log"
	// First is the first positive time of a log grid; 0 means TEnd·1e-6.
	First float64
}

// Defaults of Simulation.
const (
	DefaultTEnd    = 100.0
	DefaultPoints  = 200
	DefaultSpacing = "linear"
	DefaultRTol    = 1e-6
	DefaultATol    = 1e-12
	DefaultMethod  = "auto"
)

// WithDefaults returns s with every zero field replaced by its default.
func (s Simulation) WithDefaults() Simulation {
	if s.TEnd == 0 {
		s.TEnd = DefaultTEnd
	}
	if s.Output.Points == 0 {
		s.Output.Points = DefaultPoints
	}
	if s.Output.Spacing == "" {
		s.Output.Spacing = DefaultSpacing
	}
	if s.RTol == 0 {
		s.RTol = DefaultRTol
	}
	if s.ATol == 0 {
		s.ATol = DefaultATol
	}
	if s.Method == "" {
		s.Method = DefaultMethod
	}
	return s
}

// KeepNonNegative reports whether concentrations are to be kept ≥ 0 (the
// default).
func (s Simulation) KeepNonNegative() bool { return s.NonNegative == nil || *s.NonNegative }

// Clone returns a deep copy of m.
func (m *Model) Clone() *Model {
	c := *m
	c.Compartments = append([]Compartment(nil), m.Compartments...)
	c.Species = append([]Species(nil), m.Species...)
	c.Parameters = append([]Parameter(nil), m.Parameters...)
	c.Reactions = append([]Reaction(nil), m.Reactions...)
	if m.Simulation.NonNegative != nil {
		b := *m.Simulation.NonNegative
		c.Simulation.NonNegative = &b
	}
	return &c
}
