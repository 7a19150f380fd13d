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
	"fmt"
	"slices"
	"strconv"
	"strings"
)

// Format is the value of the "format" key that model files must carry.
const Format = "kinetarium.model/1"

// Names of the built-in rate laws (see Laws and LawNamed for all).
const (
	MassAction      = "mass_action"      // k·Π[reactant]^coef (− k_reverse·Π[product]^coef)
	MichaelisMenten = "michaelis_menten" // vmax·S/(km+S) or kcat·E·S/(km+S)
	Expression      = "expression"       // any expression over species, parameters, assignments and t
)

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
	Assignments  []Assignment
	Reactions    []Reaction
	Events       []Event
	Rates        []RateRule // time derivatives of species and parameters (see RateRule)
	Simulation   Simulation
	Layout       Layout // where the diagram draws each item; optional

	source *sourceMap // where Read found each item; nil for models built in code
}

// Units name the units of time and amount (concentration) used by the
// model. They are labels only; nothing is converted (the compartments'
// units of volume, Compartment.Unit, are what make volumes comparable).
// MoleculesPerAmount, when not zero, is the number of molecules in one
// amount unit × one volume unit, for stochastic runs (see
// MoleculesPerAmount, which also knows molar units).
type Units struct {
	Time, Amount       string
	MoleculesPerAmount float64
}

// Compartment is a well-mixed volume. Species concentrations are per
// compartment volume. Unit is the unit of Volume (L, mL, uL, fL; see
// VolumeUnits); empty means the unit of the compartments that give one,
// or no unit at all when none does.
type Compartment struct {
	Name   string
	Volume float64
	Unit   string
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

// Assignment is a named quantity computed from species, parameters, other
// assignments and t, such as E_total = E + ES. Assignments can be used in
// rate expressions, are plotted and exported beside the species, and can be
// read out and fitted.
type Assignment struct {
	Name       string
	Expression string
	Unit       string
	Note       string
}

// Event is a change of the state or of a parameter during a run: a dose, a
// washout, an infusion, a switch. It has one timing — At (once, or Count
// times Every apart), When (each time a condition turns true; only the
// first time with Once), or From and To (an infusion over that interval,
// repeated Count times Every apart) — and its actions, applied in order.
type Event struct {
	Name  string
	Note  string
	At    Value // time of the first (or only) occurrence
	Every Value // interval between occurrences
	Count int   // number of occurrences (with Every)
	When  string
	Once  bool
	From  Value // start of an infusion
	To    Value // end of an infusion
	// Add raises species by amounts; Set gives species or parameters new
	// values (expressions evaluated with the values just before the
	// event); Infuse feeds species at a constant amount per time from From
	// to To.
	Add, Set, Infuse []Change
}

// Change is one action of an event: its target (a species or parameter)
// and its value, the text of a number, a parameter name or an
// expression.
type Change struct {
	Target string
	Value  string
}

// Reaction is one reaction: an equation such as "E + S <=> ES" and its rate
// law.
type Reaction struct {
	Name     string
	Equation string
	Rate     Rate
	Note     string
}

// Rate is a rate law: the law's name and the values of its fields (see
// Law.Fields). Args holds the parameter and species fields with their
// keys in model files ("k", "k_reverse", "vmax", "km", "kcat", "enzyme",
// …), each key once, in the order of the keys (a law has a handful, so a
// short list costs a fraction of a map); read a field with Arg, treat the
// list as read-only and change a field with With, so that copies of a
// Rate never share changes. Expression is the text of the expression law.
type Rate struct {
	Law        string
	Args       []Arg
	Expression string
}

// Arg is one field of a rate law: its key in model files and its value.
type Arg struct {
	Key   string
	Value Value
}

// Arg returns the value of the field key (unset when absent).
func (r Rate) Arg(key string) Value {
	for _, a := range r.Args {
		if a.Key == key {
			return a.Value
		}
	}
	return Value{}
}

// With returns a copy of r whose field key holds v (an unset v removes
// it). r itself is not changed.
func (r Rate) With(key string, v Value) Rate {
	args := make([]Arg, 0, len(r.Args)+1)
	for _, a := range r.Args {
		if a.Key != key {
			args = append(args, a)
		}
	}
	if v.Set {
		args = insertArg(args, key, v)
	}
	if len(args) == 0 {
		args = nil
	}
	r.Args = args
	return r
}

// insertArg sets the field key of the list args, which is in the order of
// the keys, to v: in place when the key is there, else inserted where
// the order puts it.
func insertArg(args []Arg, key string, v Value) []Arg {
	i, found := slices.BinarySearchFunc(args, key, func(a Arg, k string) int { return strings.Compare(a.Key, k) })
	if found {
		args[i].Value = v
		return args
	}
	return slices.Insert(args, i, Arg{key, v})
}

// Equal reports whether r and o are the same law with the same fields.
func (r Rate) Equal(o Rate) bool {
	if r.Law != o.Law || r.Expression != o.Expression || len(r.Args) != len(o.Args) {
		return false
	}
	for _, a := range r.Args {
		if w := o.Arg(a.Key); w != a.Value {
			return false
		}
	}
	return true
}

// NewRate returns a rate of the given law with fields given as key, value
// pairs: NewRate(MassAction, "k", Named("kon"), "k_reverse", Number(0.1)).
// It panics on an odd number of arguments or a key that is not a string,
// which are programming mistakes.
func NewRate(law string, kv ...any) Rate {
	if len(kv)%2 != 0 {
		panic("network.NewRate: odd number of key/value arguments")
	}
	r := Rate{Law: law}
	for i := 0; i < len(kv); i += 2 {
		k, ok := kv[i].(string)
		if !ok {
			panic(fmt.Sprintf("network.NewRate: key %v is not a string", kv[i]))
		}
		switch v := kv[i+1].(type) {
		case Value:
			if v.Set {
				r.Args = insertArg(r.Args, k, v)
			}
		case string:
			r.Args = insertArg(r.Args, k, Named(v))
		case float64:
			r.Args = insertArg(r.Args, k, Number(v))
		case int:
			r.Args = insertArg(r.Args, k, Number(float64(v)))
		default:
			panic(fmt.Sprintf("network.NewRate: value %v of %q is not a Value, name or number", v, k))
		}
	}
	return r
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
	// Display chooses the units results are shown in; empty fields mean
	// the model's own units (Model.Units).
	Display Display
}

// Display holds the units that figures, tables and exports show results
// in, each converted from the model's units (Model.Units) when shown.
// Time is a unit of time ("h"), Concentration a concentration of the
// same kind as the model's ("nM" for a model in uM). An empty field keeps
// the model's unit. The model's stored values never change.
type Display struct {
	Time, Concentration string
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
	c.source = nil // positions in the file need not hold for an edited copy
	c.Compartments = append([]Compartment(nil), m.Compartments...)
	c.Species = append([]Species(nil), m.Species...)
	c.Parameters = append([]Parameter(nil), m.Parameters...)
	c.Reactions = append([]Reaction(nil), m.Reactions...)
	for i := range c.Reactions {
		c.Reactions[i].Rate.Args = slices.Clone(c.Reactions[i].Rate.Args) // a list of its own
	}
	c.Assignments = append([]Assignment(nil), m.Assignments...)
	c.Events = append([]Event(nil), m.Events...)
	c.Rates = append([]RateRule(nil), m.Rates...)
	for i := range c.Events {
		e := &c.Events[i]
		e.Add = append([]Change(nil), e.Add...)
		e.Set = append([]Change(nil), e.Set...)
		e.Infuse = append([]Change(nil), e.Infuse...)
	}
	c.Layout = m.Layout.clone()
	if m.Simulation.NonNegative != nil {
		b := *m.Simulation.NonNegative
		c.Simulation.NonNegative = &b
	}
	return &c
}
