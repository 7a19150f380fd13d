package network

// The network in molecule counts, for stochastic simulation.

import (
	"fmt"
	"math"
	"strings"

	"kinetarium/network/units"
)

// Avogadro is the number of molecules in a mole (SI, exact since 2019).
const Avogadro = 6.02214076e23

// molesPerLitre returns the moles per litre of a molar concentration
// unit (M, mM, uM, nM, pM, fM, mol/L, …) as the units parser reads it.
func molesPerLitre(unit string) (float64, bool) {
	u, err := units.Parse(unit)
	if err != nil || !u.SameDim(units.MustParse("M")) {
		return 0, false
	}
	return wholeRatio(u.Factor / 1000), true // 1 M = 1000 mol/m³
}

// litres returns the litres in the model's unit of volume (1 when the
// compartments give none: volumes are then read as litres).
func litres(m *Model) (float64, string) {
	unit, _ := m.VolumeUnit()
	if unit == "" {
		return 1, "litre"
	}
	return wholeRatio(units.MustParse(unit).Factor / 1e-3), unit
}

// countUnits are amount units that are already molecule counts.
var countUnits = map[string]bool{"molecules": true, "molecule": true, "count": true, "counts": true, "copies": true, "#": true}

// UnderstoodAmountUnits lists, for messages and help, the amount units
// from which MoleculesPerAmount finds the number of molecules itself.
const UnderstoodAmountUnits = "M, mM, µM (or uM), nM, pM, fM and mol/L, mmol/L, µmol/L, nmol/L, pmol/L (with volumes in litres), or molecules, count, copies"

// MoleculesPerAmount returns the number of molecules in one amount unit
// times one volume unit of m (so that a species' count is its
// concentration × its compartment's volume × this number), and says how
// it was found. It is the one place where amounts become molecules:
//
//   - the model states it: "units": {"molecules_per_amount": N};
//   - a molar amount unit (M, mM, µM, nM, pM, fM, mol/L, …): Avogadro's
//     number times the unit's moles per litre times the litres in the
//     compartments' unit of volume (volumes read as litres when they give
//     none);
//   - an amount unit that counts molecules (molecules, count, copies): 1.
//
// Otherwise it returns an error that says what to add to the model.
func MoleculesPerAmount(m *Model) (float64, string, error) {
	pos := Pos{Field: "units.molecules_per_amount"} // "units" is no list: no item number
	if n := m.Units.MoleculesPerAmount; n != 0 {
		if !(n > 0) || math.IsInf(n, 0) {
			return 0, "", ErrorList{{Pos: pos, Severity: Error,
				Message: fmt.Sprintf("molecules_per_amount = %v is not allowed; expected a positive number of molecules in one amount unit × one volume unit", n)}}
		}
		return n, fmt.Sprintf("%g molecules per amount unit × volume unit, as the model states", n), nil
	}
	unit := strings.TrimSpace(m.Units.Amount)
	if f, ok := molesPerLitre(unit); ok {
		l, vol := litres(m)
		n := Avogadro * f * l
		if vol == "litre" {
			return n, fmt.Sprintf("%g molecules per %s × litre (Avogadro's number; volumes read as litres)", n, unit), nil
		}
		return n, fmt.Sprintf("%g molecules per %s × %s (Avogadro's number; the compartments' volumes in %s)", n, unit, vol, vol), nil
	}
	if countUnits[unit] {
		return 1, "amounts are molecule counts", nil
	}
	what := "the model gives no amount unit"
	if unit != "" {
		what = fmt.Sprintf("the amount unit %q is not one that gives a number of molecules", unit)
	}
	return 0, "", ErrorList{{Pos: pos, Severity: Error, Message: fmt.Sprintf(
		"a stochastic run needs molecule counts, and %s; state the molecules in one amount unit × one volume unit as \"units\": {\"molecules_per_amount\": N}, or use one of %s",
		what, UnderstoodAmountUnits)}}
}

// CountTerm is a species index with a whole number: a reactant's order or
// a change of count.
type CountTerm struct {
	Species int
	N       int
}

// CountChannel is one reaction channel in molecule counts: a reaction, one
// direction of a reversible mass-action reaction, or the infusion of a
// species by events.
type CountChannel struct {
	Name     string
	Reaction int         // index in Model.Reactions; −1 for an infusion
	Change   []CountTerm // per firing; fixed species do not change
	// Mass action: propensity C·Π x_i(x_i − 1)…(x_i − N_i + 1) over
	// Reactants, with C = k · Ω_r · Π Ω_i^(−N_i) (Ω_r of the reaction's
	// compartment, Ω_i of each reactant's). For one compartment this is
	// k·Ω for ∅ → …, k for A → …, (k/Ω) for A + B → … and 2 A → ….
	Reactants []CountTerm
	C         float64
	// General channels (other rate laws, infusions) have the propensity
	// rate × volume × molecules per amount, computed by CountDynamic;
	// Reads lists the species whose counts they read.
	General       bool
	Reads         []int
	TimeDependent bool

	k      val     // the mass-action constant's parameter or number
	factor float64 // C = k·factor
	rx     int     // the System's reaction (general channels)
	inflow int     // the infused species (infusion channels), else −1
}

// Counts is a checked network in molecule counts: what a stochastic
// simulation needs, built from the Net and the compiled System by
// Net.Counts.
type Counts struct {
	Species []string
	Fixed   []bool
	Initial []float64 // whole numbers: concentration × Ω rounded
	// Omega[i] is the volume of species i's compartment × molecules per
	// amount: count = concentration × Omega.
	Omega     []float64
	PerAmount float64 // molecules per amount unit × volume unit
	HowFound  string  // how PerAmount was found
	Channels  []CountChannel
	// Approximate names the reactions whose laws are not mass action:
	// their propensity is rate × volume × molecules per amount, an
	// approximation that holds when their rates do not depend strongly on
	// single molecules.
	Approximate []string
	// Rounded names the species whose initial count was more than 0.01
	// from a whole number and was rounded.
	Rounded []string

	sys *System
}

// Counts converts the checked network into molecule counts (see
// MoleculesPerAmount and CountChannel). Every problem found is returned
// in one ErrorList: coefficients that are not whole numbers, a missing
// number of molecules per amount, initial counts beyond 2^53.
func (net *Net) Counts() (*Counts, error) {
	sys, err := net.Compile()
	if err != nil {
		return nil, err
	}
	var probs ErrorList
	m := net.Model
	per, how, err := MoleculesPerAmount(m)
	if err != nil {
		probs = append(probs, err.(ErrorList)...)
	}
	c := &Counts{PerAmount: per, HowFound: how, sys: sys}
	for i, r := range m.Rates {
		probs.Add(Pos{Section: "rates", Index: i, Item: r.Name}, Error,
			"a rate (a continuous change of %s) cannot be simulated with counts of molecules; remove it for a stochastic run", r.Name)
	}
	n := sys.nSpecies // parameters carried in the state (set by events) stay concentrations
	for i := 0; i < n; i++ {
		om := sys.volumes[sys.spComp[i]] * per
		x := m.Species[i].Initial * om
		r := math.Round(x)
		if per > 0 && (!(r >= 0) || r > 1<<53) {
			probs.Add(Pos{Section: "species", Index: i, Item: m.Species[i].Name, Field: "initial"}, Error,
				"the initial amount gives %g molecules; a stochastic run needs a count between 0 and 2^53", x)
		}
		if math.Abs(r-x) > 0.01 { // not a whole number of molecules, beyond a typing of it
			c.Rounded = append(c.Rounded, m.Species[i].Name)
		}
		c.Species = append(c.Species, m.Species[i].Name)
		c.Fixed = append(c.Fixed, sys.fixed[i])
		c.Initial = append(c.Initial, r)
		c.Omega = append(c.Omega, om)
	}
	whole := func(ri int, ts []Term) bool {
		for _, t := range ts {
			if t.Coef != math.Trunc(t.Coef) || t.Coef < 1 {
				probs.Add(Pos{Section: "reactions", Index: net.Reactions[ri].Index, Item: net.Reactions[ri].Name, Field: "equation", Col: t.Col}, Error,
					"the coefficient %v of %s is not a whole number; a stochastic run counts molecules, so every coefficient must be 1, 2, 3, …", t.Coef, t.Species)
				return false
			}
		}
		return true
	}
	for ri := range net.Reactions {
		cr := &net.Reactions[ri]
		r := &sys.rx[ri]
		eq := cr.Equation
		if !whole(ri, eq.Reactants) || !whole(ri, eq.Products) {
			continue
		}
		var change []CountTerm
		for ci := r.c0; ci < r.c1; ci++ {
			change = append(change, CountTerm{Species: sys.cSp[ci], N: int(sys.cNet[ci])})
		}
		neg := make([]CountTerm, len(change))
		for i, t := range change {
			neg[i] = CountTerm{t.Species, -t.N}
		}
		omR := sys.volumes[r.comp] * per
		if r.kind == kindMassAction {
			c.Channels = append(c.Channels, c.massAction(cr.Name, cr.Index, eq.Reactants, change, r.k, omR))
			if r.reversible {
				c.Channels = append(c.Channels, c.massAction(cr.Name+" (reverse)", cr.Index, eq.Products, neg, r.kr, omR))
			}
			continue
		}
		c.Approximate = append(c.Approximate, cr.Name)
		ch := CountChannel{Name: cr.Name, Reaction: cr.Index, Change: change, General: true,
			TimeDependent: r.kind == kindExpr && sys.usesTime, rx: ri, inflow: -1}
		for _, sp := range sys.depSp[r.d0:r.d1] {
			if sp < sys.nSpecies { // parameters in the state are not counts
				ch.Reads = append(ch.Reads, sp)
			}
		}
		c.Channels = append(c.Channels, ch)
	}
	// Infusions: an inflow channel for each species an event infuses.
	infused := make([]bool, n)
	for _, e := range sys.events {
		for _, a := range e.infuse {
			if a.sp >= 0 && !sys.fixed[a.sp] {
				infused[a.sp] = true
			}
		}
	}
	for i, ok := range infused {
		if ok {
			c.Channels = append(c.Channels, CountChannel{Name: "infusion of " + c.Species[i], Reaction: -1,
				Change: []CountTerm{{i, 1}}, General: true, rx: -1, inflow: i})
		}
	}
	if err := probs.Err(); err != nil {
		return nil, err
	}
	return c, nil
}

// massAction builds a mass-action channel with the reactant terms ts
// (merged by species), whose rate is in the concentration units of a
// compartment with Ω = omR.
func (c *Counts) massAction(name string, reaction int, ts []Term, change []CountTerm, k val, omR float64) CountChannel {
	ch := CountChannel{Name: name, Reaction: reaction, Change: change, k: k, factor: omR, rx: -1, inflow: -1}
	for _, t := range ts {
		i := c.sys.spIx[t.Species]
		n := int(t.Coef)
		ch.factor *= math.Pow(c.Omega[i], -float64(n))
		merged := false
		for q := range ch.Reactants {
			if ch.Reactants[q].Species == i {
				ch.Reactants[q].N += n
				merged = true
			}
		}
		if !merged {
			ch.Reactants = append(ch.Reactants, CountTerm{i, n})
		}
	}
	ch.C = c.sys.get(k) * ch.factor
	return ch
}

// CountDynamic computes the propensities of general channels and applies
// events to counts, with a System of its own. It implements the Dynamic
// interface of package solve/stochastic by its method set.
type CountDynamic struct {
	c    *Counts
	sys  *System
	y    []float64 // concentrations
	vars []float64 // the System's variables
}

// NewDynamic returns a CountDynamic with its own copy of the System, for
// one simulator.
func (c *Counts) NewDynamic() *CountDynamic {
	s := c.sys.Clone()
	d := &CountDynamic{c: c, sys: s, y: make([]float64, s.n), vars: s.vars}
	d.resetState()
	return d
}

// resetState puts the initial values of the parameters carried in the
// System's state (those events set) after the species.
func (d *CountDynamic) resetState() {
	s := d.sys
	copy(d.y[s.nSpecies:], s.initial[s.nSpecies:])
	copy(d.vars[s.nSpecies:s.n], d.y[s.nSpecies:])
}

// concentrations converts all counts x into d.y (the species; the
// parameters in the state keep their values).
func (d *CountDynamic) concentrations(x []float64) {
	for i, v := range x {
		d.y[i] = v / d.c.Omega[i]
	}
}

// Propensity returns the propensity of general channel j: the reaction's
// rate at the concentrations of the counts x, times its compartment's
// volume and the molecules per amount; or the infusion's rate in
// molecules per time.
func (d *CountDynamic) Propensity(j int, t float64, x []float64) float64 {
	ch := &d.c.Channels[j]
	s := d.sys
	if ch.inflow >= 0 {
		return s.inflow[ch.inflow] * d.c.Omega[ch.inflow]
	}
	for _, i := range ch.Reads {
		v := x[i] / d.c.Omega[i]
		d.y[i], d.vars[i] = v, v
	}
	d.vars[len(d.vars)-1] = t
	r := &s.rx[ch.rx]
	return s.rate(r, d.y) * s.volumes[r.comp] * d.c.PerAmount
}

// Constants writes the mass-action constants at the current parameter
// values into cs (events may have changed them).
func (d *CountDynamic) Constants(cs []float64) {
	for j := range d.c.Channels {
		ch := &d.c.Channels[j]
		if ch.General {
			continue
		}
		k := d.sys.get(ch.k)
		if ch.k.p >= 0 && d.sys.parState[ch.k.p] >= 0 { // a parameter events set: its value is in the state
			k = d.y[d.sys.parState[ch.k.p]]
		}
		cs[j] = k * ch.factor
	}
}

// ResetEvents makes every event pending again (System.ResetEvents).
func (d *CountDynamic) ResetEvents(t0 float64) {
	d.sys.ResetEvents(t0)
	d.resetState()
}

// NextEvent returns the next scheduled event time (System.NextEvent).
func (d *CountDynamic) NextEvent(t float64) float64 { return d.sys.NextEvent(t) }

// Conditions returns the number of triggered events.
func (d *CountDynamic) Conditions() int { return d.sys.Conditions() }

// Watch evaluates the triggered events' conditions at the concentrations
// of the counts x.
func (d *CountDynamic) Watch(t float64, x, g []float64) {
	d.concentrations(x)
	d.sys.Watch(t, d.y, g)
}

// Fire applies the events due at t to the counts x through the System
// (amounts added become molecules: amount × molecules per amount), and
// rounds every count to a whole number ≥ 0.
func (d *CountDynamic) Fire(t float64, x []float64, rose []bool) []string {
	d.concentrations(x)
	names := d.sys.Fire(t, d.y, rose)
	if len(names) == 0 {
		return nil
	}
	for i := range x {
		x[i] = math.Max(0, math.Round(d.y[i]*d.c.Omega[i]))
	}
	copy(d.vars[d.sys.nSpecies:d.sys.n], d.y[d.sys.nSpecies:]) // parameters events set
	return names
}

// ConcentrationOf returns count × 1/Ω of species i: the concentration a
// count stands for.
func (c *Counts) ConcentrationOf(i int, count float64) float64 { return count / c.Omega[i] }
