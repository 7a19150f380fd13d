// Package units reads unit expressions such as "1/(uM*s)", "mg/L" or
// "L/h" and does their algebra: products, quotients and powers, the
// dimension of each (time, amount of substance, mass, length), and the
// factor that converts a value to SI base units, from which conversions
// between any two units of one dimension follow.
//
// The symbols are those of the trade: s, ms, min, h, day; mol, mmol, umol
// (µmol), nmol, pmol, fmol; M, mM, uM (µM), nM, pM, fM (mol/L); kg, g, mg,
// ug (µg), ng; L, mL, uL (µL), nL, fL; m. A bare number is a factor, so
// "1/s" and "1000*L" read too.
package units

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Avogadro is the Avogadro constant N_A in 1/mol, exact since the 2019
// redefinition of the SI (BIPM, The International System of Units, 9th
// edition, 2019).
const Avogadro = 6.02214076e23

// Base quantities, the indices of Dim.
const (
	Time   = iota // second
	Amount        // mole
	Mass          // kilogram
	Length        // metre
	nBase
)

var baseSymbol = [nBase]string{Time: "s", Amount: "mol", Mass: "kg", Length: "m"}

// Dim holds the exponent of each base quantity (Time, Amount, Mass,
// Length): a concentration in mol/L is {0, 1, 0, -3}.
type Dim [nBase]float64

// Unit is a unit: a value x in it is x·Factor in SI base units of the
// dimension Dim. The zero Unit is not valid; One is the dimensionless 1.
type Unit struct {
	Factor float64
	Dim    Dim
}

// One is the unit of dimensionless numbers.
var One = Unit{Factor: 1}

// Mul returns the unit u·v.
func (u Unit) Mul(v Unit) Unit {
	w := Unit{Factor: u.Factor * v.Factor}
	for i := range w.Dim {
		w.Dim[i] = u.Dim[i] + v.Dim[i]
	}
	return w
}

// Div returns the unit u/v.
func (u Unit) Div(v Unit) Unit { return u.Mul(v.Pow(-1)) }

// Pow returns the unit u^p.
func (u Unit) Pow(p float64) Unit {
	w := Unit{Factor: math.Pow(u.Factor, p)}
	for i := range w.Dim {
		w.Dim[i] = u.Dim[i] * p
		if w.Dim[i] == 0 {
			w.Dim[i] = 0 // no −0
		}
	}
	return w
}

// SameDim reports whether u and v measure the same kind of quantity.
func (u Unit) SameDim(v Unit) bool {
	for i := range u.Dim {
		if math.Abs(u.Dim[i]-v.Dim[i]) > 1e-9 {
			return false
		}
	}
	return true
}

// Dimensionless reports whether u is a pure number (such as 1 or uM/nM).
func (u Unit) Dimensionless() bool { return u.SameDim(One) }

// Equal reports whether u and v are the same unit: the same dimension and
// factors equal to 1e-9 relative (so "1/(uM*s)" equals "1000/(mM*s)").
func (u Unit) Equal(v Unit) bool {
	return u.SameDim(v) && math.Abs(u.Factor-v.Factor) <= 1e-9*math.Max(math.Abs(u.Factor), math.Abs(v.Factor))
}

// To returns the factor that converts a value in u to a value in v
// (x_v = x_u·factor), or an error when they measure different kinds of
// quantity.
func (u Unit) To(v Unit) (float64, error) {
	if !u.SameDim(v) {
		return 0, fmt.Errorf("cannot convert %s to %s: they measure %s and %s", u, v, u.Kind(), v.Kind())
	}
	return u.Factor / v.Factor, nil
}

// IsTime reports whether u is a unit of time.
func (u Unit) IsTime() bool { return u.SameDim(Unit{Dim: Dim{Time: 1}}) }

// IsConcentration reports whether u is an amount or a mass per volume.
func (u Unit) IsConcentration() bool {
	return u.SameDim(Unit{Dim: Dim{Amount: 1, Length: -3}}) || u.SameDim(Unit{Dim: Dim{Mass: 1, Length: -3}})
}

// Moles returns the moles in one u, for a unit of amount of substance
// (1e-6 for umol); ok is false for other units. Times Avogadro it gives
// molecules per unit.
func (u Unit) Moles() (float64, bool) {
	if !u.SameDim(Unit{Dim: Dim{Amount: 1}}) {
		return 0, false
	}
	return u.Factor, true
}

var kinds = []struct {
	d    Dim
	name string
}{
	{Dim{}, "a pure number"},
	{Dim{Time: 1}, "time"},
	{Dim{Time: -1}, "a rate (per time)"},
	{Dim{Amount: 1}, "amount of substance"},
	{Dim{Mass: 1}, "mass"},
	{Dim{Length: 3}, "volume"},
	{Dim{Amount: 1, Length: -3}, "concentration"},
	{Dim{Mass: 1, Length: -3}, "mass concentration"},
	{Dim{Amount: 1, Length: -3, Time: -1}, "concentration per time"},
	{Dim{Mass: 1, Length: -3, Time: -1}, "mass concentration per time"},
}

// Kind names the kind of quantity u measures ("concentration", "time",
// …), or writes its dimension in base units when it has no common name.
func (u Unit) Kind() string {
	for _, k := range kinds {
		if u.SameDim(Unit{Dim: k.d}) {
			return k.name
		}
	}
	return "dimension " + Unit{Factor: 1, Dim: u.Dim}.String()
}

// String writes u in SI base units with its factor in front, such as
// "0.001*mol/m^3" for uM or "1000*m^3/(mol*s)" for 1/(uM*s); Parse reads
// it back to an equal unit.
func (u Unit) String() string {
	var num, den []string
	for _, i := range []int{Amount, Mass, Length, Time} {
		p := u.Dim[i]
		switch {
		case p > 0:
			num = append(num, powText(baseSymbol[i], p))
		case p < 0:
			den = append(den, powText(baseSymbol[i], -p))
		}
	}
	var b strings.Builder
	if u.Factor != 1 || len(num) == 0 {
		b.WriteString(strconv.FormatFloat(u.Factor, 'g', -1, 64))
		if len(num) > 0 {
			b.WriteString("*")
		}
	}
	b.WriteString(strings.Join(num, "*"))
	switch len(den) {
	case 0:
	case 1:
		b.WriteString("/" + den[0])
	default:
		b.WriteString("/(" + strings.Join(den, "*") + ")")
	}
	return b.String()
}

func powText(sym string, p float64) string {
	if p == 1 {
		return sym
	}
	return sym + "^" + strconv.FormatFloat(p, 'g', -1, 64)
}

// Compose writes conc^a·time^b for reading, from the texts of a
// concentration and a time unit: Compose("uM", -1, "s", -1) is
// "1/(uM·s)", Compose("uM", 1, "s", -1) is "uM/s", Compose("mg/L", 0,
// "h", -1) is "1/h". Composite texts are put in parentheses, except
// when one stands alone: Compose("mg/L", 1, "h", 0) is "mg/L".
func Compose(conc string, a float64, time string, b float64) string {
	switch {
	case a == 1 && b == 0:
		return conc
	case a == 0 && b == 1:
		return time
	}
	var num, den []string
	put := func(text string, p float64) {
		if p == 0 {
			return
		}
		if strings.ContainsAny(text, "*/·^ ") {
			text = "(" + text + ")"
		}
		if p > 0 {
			num = append(num, powText(text, p))
		} else {
			den = append(den, powText(text, -p))
		}
	}
	put(conc, a)
	put(time, b)
	s := strings.Join(num, "·")
	if s == "" {
		s = "1"
	}
	switch len(den) {
	case 0:
	case 1:
		s += "/" + den[0]
	default:
		s += "/(" + strings.Join(den, "·") + ")"
	}
	return s
}

// IsVolume reports whether u is a unit of volume (L, mL, uL, fL).
func (u Unit) IsVolume() bool { return u.SameDim(Unit{Dim: Dim{Length: 3}}) }

// Symbol returns the unit symbol that equals u ("umol" for uM·L, "mg"
// for mg/L·L), preferring the shortest, and whether there is one.
func Symbol(u Unit) (string, bool) {
	best := ""
	for _, name := range Symbols() {
		if v := symbols[name]; v.Equal(u) && (best == "" || len(name) < len(best)) {
			best = name
		}
	}
	return best, best != ""
}
