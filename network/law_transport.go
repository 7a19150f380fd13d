package network

import "kinetarium/network/expr"

// transport is saturable transport of a species from one compartment to
// another: Vmax·S/(Km + S) on the concentration S in the source
// compartment (a carrier following Michaelis–Menten kinetics; common
// practice of compartmental modelling). Like every rate it is in the
// source's concentration per time, so the destination gains
// V_source/V_destination times as much concentration and the amount is
// conserved.
type transport struct{}

// Transport is the name of the saturable transport law.
const Transport = "saturable_transport"

func (transport) Name() string  { return Transport }
func (transport) Title() string { return "Saturable transport" }

func (transport) Fields() []Field {
	return []Field{
		{Key: "vmax", Label: "Vmax", Kind: ParamField},
		{Key: "km", Label: "Km", Kind: ParamField, Positive: true},
	}
}

func (transport) Check(c *LawCheck) []string {
	eq := c.Equation
	if eq == nil {
		return []string{"vmax", "km"}
	}
	switch {
	case eq.Reversible:
		c.Errorf("equation", "saturable_transport moves one way; use \"->\" (add a second reaction for the way back)")
	case len(eq.Reactants) != 1 || eq.Reactants[0].Coef != 1 || len(eq.Products) != 1 || eq.Products[0].Coef != 1:
		c.Errorf("equation", "saturable_transport needs one species on each side, each with coefficient 1, such as \"A_out -> A_in\"")
	default:
		src, ok1 := c.Compartment(eq.Reactants[0].Species)
		dst, ok2 := c.Compartment(eq.Products[0].Species)
		if ok1 && ok2 && src == dst {
			where := "the same compartment"
			if src != "" {
				where = "compartment " + src
			}
			c.Errorf("equation", "saturable_transport moves a species between compartments, but %s and %s are both in %s; put them in different compartments, or use michaelis_menten within one", eq.Reactants[0].Species, eq.Products[0].Species, where)
		}
	}
	return []string{"vmax", "km"}
}

func (transport) Rate(r Rate, eq Equation) expr.Node {
	S := expr.Var(eq.Reactants[0].Species)
	return frac(expr.Mul(arg(r, "vmax"), S), expr.Add(arg(r, "km"), S))
}

func (transport) Formula(r Rate, eq *Equation) string {
	if eq == nil {
		return ""
	}
	s := substrate(eq, 0)
	return txt(r, "vmax") + "·" + s + "/(" + txt(r, "km") + " + " + s + ")"
}

func (transport) fieldUnits(Equation) map[string]dims {
	return map[string]dims{"vmax": dimRate, "km": dimConc}
}
