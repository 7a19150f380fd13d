package network

import (
	"fmt"
	"math/big"
	"strings"

	"gonum.org/v1/gonum/mat"
)

// Stoichiometry returns the net stoichiometry matrix of m: n[i][j] is the
// net coefficient of species i in reaction j (products minus reactants; a
// reversible reaction is one column). Reactions whose equation does not
// parse get a zero column. The matrix is nil when the model has no species
// or no reactions.
func (m *Model) Stoichiometry() (species []string, reactions []string, n *mat.Dense) {
	net, _ := Check(m)
	return net.Stoichiometry()
}

// Stoichiometry returns the net stoichiometry matrix of the checked
// network, as Model.Stoichiometry describes.
func (net *Net) Stoichiometry() (species []string, reactions []string, n *mat.Dense) {
	m := net.Model
	ix := map[string]int{}
	for i, s := range m.Species {
		species = append(species, s.Name)
		if _, dup := ix[s.Name]; !dup {
			ix[s.Name] = i
		}
	}
	for _, r := range m.Reactions {
		reactions = append(reactions, r.Name)
	}
	if len(species) == 0 || len(reactions) == 0 {
		return species, reactions, nil
	}
	n = mat.NewDense(len(species), len(reactions), nil)
	for _, cr := range net.Reactions {
		j, eq := cr.Index, cr.Equation
		if !cr.EqOK {
			continue
		}
		for _, t := range eq.Reactants {
			if i, ok := ix[t.Species]; ok {
				n.Set(i, j, n.At(i, j)-t.Coef)
			}
		}
		for _, t := range eq.Products {
			if i, ok := ix[t.Species]; ok {
				n.Set(i, j, n.At(i, j)+t.Coef)
			}
		}
	}
	return species, reactions, n
}

// ConservationLaw is a weighted sum of species amounts that no reaction
// changes.
type ConservationLaw struct {
	// Terms are the species of the law with their integer weights, in
	// model order; fixed species and species outside the law are left
	// out.
	Terms []LawTerm
	// Text is the law in words, e.g. "E + ES = constant" or
	// "2 A + B = constant".
	Text string
}

// LawTerm is one species of a conservation law and its weight.
type LawTerm struct {
	Species int // index in Model.Species
	Weight  int // nonzero
}

// Weights returns the law's weights as one integer per species of a model
// with n species (zero for species outside the law).
func (l ConservationLaw) Weights(n int) []int {
	w := make([]int, n)
	for _, t := range l.Terms {
		w[t.Species] = t.Weight
	}
	return w
}

// ConservationLaws returns an integer basis of the conserved totals of m:
// the vectors w with w·N = 0, N the stoichiometry over the species that are
// not fixed. The totals are in amounts (concentration × volume of each
// species' compartment): Σ w_i·V_i·[i] stays constant. Their number is the
// number of non-fixed species minus the rank of N. The basis is the one
// read from the reduced row echelon form of Nᵀ with the species in model
// order, then changed with few negative weights where simple combinations
// allow. Coefficients are taken as the decimals they are written as (0.1
// is 1/10). A law whose integer weights do not fit in an int (coefficients
// spanning more than about 18 orders of magnitude) is left out rather than
// listed wrongly.
//
// The work grows with the number of nonzero stoichiometric coefficients,
// not with the square of the number of species (see laws.go).
func (m *Model) ConservationLaws() []ConservationLaw {
	net, _ := Check(m)
	return net.ConservationLaws()
}

// integerVector scales w to coprime integers with a positive first nonzero
// entry.
func integerVector(w []*big.Rat) []*big.Int {
	l := big.NewInt(1)
	for _, x := range w {
		d := x.Denom()
		g := new(big.Int).GCD(nil, nil, l, d)
		l.Mul(l, new(big.Int).Quo(d, g))
	}
	out := make([]*big.Int, len(w))
	g := new(big.Int)
	for k, x := range w {
		v := new(big.Int).Mul(x.Num(), new(big.Int).Quo(l, x.Denom()))
		out[k] = v
		g.GCD(nil, nil, g, new(big.Int).Abs(v))
	}
	if g.Sign() != 0 && g.Cmp(big.NewInt(1)) != 0 {
		for _, v := range out {
			v.Quo(v, g)
		}
	}
	for _, v := range out {
		if v.Sign() != 0 {
			if v.Sign() < 0 {
				for _, u := range out {
					u.Neg(u)
				}
			}
			break
		}
	}
	return out
}

func negatives(v []*big.Int) int {
	c := 0
	for _, x := range v {
		if x.Sign() < 0 {
			c++
		}
	}
	return c
}

// improveSigns adds small multiples of the other basis vectors to each
// vector, and flips signs, while that reduces its number of negative
// entries. The span is unchanged (unimodular steps).
func improveSigns(basis [][]*big.Int) {
	flip := func(v []*big.Int) {
		if negatives(v) > len(v)-negatives(v)-zeros(v) {
			for _, x := range v {
				x.Neg(x)
			}
		}
	}
	for _, v := range basis {
		flip(v)
	}
	mults := []*big.Int{big.NewInt(1), big.NewInt(-1), big.NewInt(2), big.NewInt(-2), big.NewInt(3), big.NewInt(-3)}
	tmp := new(big.Int)
	for changed, rounds := true, 0; changed && rounds < 10; rounds++ {
		changed = false
		for a := range basis {
			if negatives(basis[a]) == 0 {
				continue
			}
			for b := range basis {
				if a == b {
					continue
				}
				if !overlap(basis[a], basis[b]) {
					continue // the sum has the negatives of both, or more
				}
				for _, mult := range mults {
					// Count the signs of a + mult·b before building it.
					neg, pos := 0, 0
					for k, x := range basis[a] {
						sg := x.Sign()
						if basis[b][k].Sign() != 0 {
							tmp.Mul(mult, basis[b][k])
							sg = tmp.Add(tmp, x).Sign()
						}
						switch {
						case sg < 0:
							neg++
						case sg > 0:
							pos++
						}
					}
					if neg == 0 && pos == 0 {
						continue
					}
					if min(neg, pos) >= negatives(basis[a]) { // flip keeps the fewer
						continue
					}
					cand := make([]*big.Int, len(basis[a]))
					for k := range cand {
						cand[k] = new(big.Int).Add(basis[a][k], new(big.Int).Mul(mult, basis[b][k]))
					}
					flip(cand)
					basis[a] = cand
					changed = true
					break
				}
			}
		}
	}
}

// overlap reports whether a and b are both nonzero somewhere.
func overlap(a, b []*big.Int) bool {
	for k, x := range a {
		if x.Sign() != 0 && b[k].Sign() != 0 {
			return true
		}
	}
	return false
}

// shrink subtracts one basis vector from another wherever the result stays
// non-negative, so that laws such as "E + ES" do not carry others along.
func shrink(basis [][]*big.Int) {
	for changed, rounds := true, 0; changed && rounds < 100; rounds++ {
		changed = false
		for a := range basis {
			if negatives(basis[a]) > 0 {
				continue
			}
			for b := range basis {
				if a == b || negatives(basis[b]) > 0 {
					continue
				}
				ok, same := true, true
				for k := range basis[a] {
					c := basis[a][k].Cmp(basis[b][k])
					if c < 0 {
						ok = false
						break
					}
					same = same && c == 0
				}
				if !ok || same {
					continue
				}
				for k := range basis[a] {
					basis[a][k] = new(big.Int).Sub(basis[a][k], basis[b][k])
				}
				changed = true
			}
		}
	}
}

func zeros(v []*big.Int) int {
	c := 0
	for _, x := range v {
		if x.Sign() == 0 {
			c++
		}
	}
	return c
}

// lawText writes the law with terms ts in words.
func lawText(m *Model, ts []LawTerm) string {
	var b strings.Builder
	mixed := false
	for _, t := range ts {
		mixed = mixed || m.Species[t.Species].Compartment != m.Species[ts[0].Species].Compartment
		x := t.Weight
		a := x
		switch {
		case b.Len() == 0 && x < 0:
			b.WriteString("-")
			a = -x
		case b.Len() > 0 && x < 0:
			b.WriteString(" - ")
			a = -x
		case b.Len() > 0:
			b.WriteString(" + ")
		}
		if a != 1 {
			fmt.Fprintf(&b, "%d ", a)
		}
		b.WriteString(m.Species[t.Species].Name)
	}
	b.WriteString(" = constant")
	if mixed {
		b.WriteString(" (in amounts: concentration × volume)")
	}
	return b.String()
}
