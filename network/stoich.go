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
// entries. The span is unchanged (unimodular steps). Vectors are taken in
// order, and for each the others in order, the first multiple of 1, −1,
// 2, −2, 3, −3 that helps being kept. The nonzero places and the number of
// negative entries of each vector are kept beside it, so that a pair
// without a species in common (whose sum never has fewer negatives) costs
// a merge of two short lists, not a pass over the cluster.
func improveSigns(basis [][]*big.Int) {
	lv := newLawVecs(basis)
	for a, v := range basis {
		if lv.neg[a] > len(lv.supp[a])-lv.neg[a] {
			for _, x := range v {
				x.Neg(x)
			}
			lv.update(a)
		}
	}
	mults := []*big.Int{big.NewInt(1), big.NewInt(-1), big.NewInt(2), big.NewInt(-2), big.NewInt(3), big.NewInt(-3)}
	tmp := new(big.Int)
	for changed, rounds := true, 0; changed && rounds < 10; rounds++ {
		changed = false
		for a := range basis {
			if lv.neg[a] == 0 {
				continue
			}
			for b := range basis {
				if a == b || !overlapping(lv.supp[a], lv.supp[b]) {
					continue // the sum has the negatives of both, or more
				}
				va, vb := basis[a], basis[b]
				for _, mult := range mults {
					// Count the signs of a + mult·b before building it:
					// on a's places, then on b's places outside a's.
					neg, pos := 0, 0
					count := func(sg int) {
						switch {
						case sg < 0:
							neg++
						case sg > 0:
							pos++
						}
					}
					for _, k := range lv.supp[a] {
						sg := va[k].Sign()
						if vb[k].Sign() != 0 {
							tmp.Mul(mult, vb[k])
							sg = tmp.Add(tmp, va[k]).Sign()
						}
						count(sg)
					}
					for _, k := range lv.supp[b] {
						if va[k].Sign() == 0 {
							count(vb[k].Sign() * mult.Sign())
						}
					}
					if neg == 0 && pos == 0 {
						continue
					}
					if min(neg, pos) >= lv.neg[a] { // a flip keeps the fewer
						continue
					}
					cand := make([]*big.Int, len(va))
					for k := range cand {
						cand[k] = new(big.Int).Add(va[k], new(big.Int).Mul(mult, vb[k]))
					}
					if neg > pos {
						for _, x := range cand {
							x.Neg(x)
						}
					}
					basis[a] = cand
					lv.update(a)
					changed = true
					break
				}
			}
		}
	}
}

// lawVecs keeps, for each vector of a basis, its nonzero places in
// increasing order and its number of negative entries.
type lawVecs struct {
	basis [][]*big.Int
	supp  [][]int
	neg   []int
}

func newLawVecs(basis [][]*big.Int) *lawVecs {
	lv := &lawVecs{basis: basis, supp: make([][]int, len(basis)), neg: make([]int, len(basis))}
	for a := range basis {
		lv.update(a)
	}
	return lv
}

// update reads vector a again.
func (lv *lawVecs) update(a int) {
	lv.supp[a], lv.neg[a] = lv.supp[a][:0], 0
	for k, x := range lv.basis[a] {
		if sg := x.Sign(); sg != 0 {
			lv.supp[a] = append(lv.supp[a], k)
			if sg < 0 {
				lv.neg[a]++
			}
		}
	}
}

// overlapping reports whether two increasing lists share an element.
func overlapping(a, b []int) bool {
	for i, j := 0, 0; i < len(a) && j < len(b); {
		switch {
		case a[i] == b[j]:
			return true
		case a[i] < b[j]:
			i++
		default:
			j++
		}
	}
	return false
}

// subset reports whether the increasing list b is contained in a.
func subset(b, a []int) bool {
	i := 0
	for _, x := range b {
		for i < len(a) && a[i] < x {
			i++
		}
		if i == len(a) || a[i] != x {
			return false
		}
	}
	return true
}

// shrink subtracts one basis vector from another wherever the result stays
// non-negative, so that laws such as "E + ES" do not carry others along.
// Vectors are taken in order, and for each the others in order. b fits
// under a only where b's nonzero places are among a's, which is checked
// first on the lists of places.
func shrink(basis [][]*big.Int) {
	lv := newLawVecs(basis)
	for changed, rounds := true, 0; changed && rounds < 100; rounds++ {
		changed = false
		for a := range basis {
			if lv.neg[a] > 0 {
				continue
			}
			for b := range basis {
				if a == b || lv.neg[b] > 0 || !subset(lv.supp[b], lv.supp[a]) {
					continue
				}
				ok, same := true, len(lv.supp[a]) == len(lv.supp[b])
				for _, k := range lv.supp[a] {
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
				for _, k := range lv.supp[b] {
					basis[a][k] = new(big.Int).Sub(basis[a][k], basis[b][k])
				}
				lv.update(a)
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
