package network

import (
	"fmt"
	"math"
	"math/big"
	"strconv"
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
	// Weights has one integer per species of the model, in model order
	// (zero for fixed species and species outside the law).
	Weights []int
	// Text is the law in words, e.g. "E + ES = constant" or
	// "2 A + B = constant".
	Text string
}

// ConservationLaws returns an integer basis of the conserved totals of m:
// the vectors w with w·N = 0, N the stoichiometry over the species that are
// not fixed. The totals are in amounts (concentration × volume of each
// species' compartment): Σ w_i·V_i·[i] stays constant. Their number is the
// number of non-fixed species minus the rank of N. The basis is chosen with
// few negative weights where simple combinations allow. Coefficients are
// taken as the decimals they are written as (0.1 is 1/10). A law whose
// integer weights do not fit in an int (coefficients spanning more than
// about 18 orders of magnitude) is left out rather than listed wrongly.
func (m *Model) ConservationLaws() []ConservationLaw {
	net, _ := Check(m)
	return net.ConservationLaws()
}

// ConservationLaws returns the conserved totals of the checked network, as
// Model.ConservationLaws describes.
func (net *Net) ConservationLaws() []ConservationLaw {
	m := net.Model
	species, _, n := net.Stoichiometry()
	var free []int // non-fixed species
	for i, s := range m.Species {
		if !s.Fixed {
			free = append(free, i)
		}
	}
	if len(free) == 0 {
		return nil
	}
	nr := len(m.Reactions)
	// A = Nᵀ restricted to free species, as rationals.
	rows := make([][]*big.Rat, nr)
	for j := range rows {
		rows[j] = make([]*big.Rat, len(free))
		for k, i := range free {
			x := 0.0
			if n != nil {
				x = n.At(i, j)
			}
			r := new(big.Rat)
			if !math.IsNaN(x) && !math.IsInf(x, 0) {
				// The shortest decimal that reads back as x: a coefficient
				// written 0.1 is the rational 1/10, not the binary
				// fraction nearest to it.
				r.SetString(strconv.FormatFloat(x, 'g', -1, 64))
			}
			rows[j][k] = r
		}
	}
	// Reduced row echelon form.
	var pivots []int
	pr := 0
	for col := 0; col < len(free) && pr < nr; col++ {
		sel := -1
		for r := pr; r < nr; r++ {
			if rows[r][col].Sign() != 0 {
				sel = r
				break
			}
		}
		if sel < 0 {
			continue
		}
		rows[pr], rows[sel] = rows[sel], rows[pr]
		inv := new(big.Rat).Inv(rows[pr][col])
		for k := range rows[pr] {
			rows[pr][k].Mul(rows[pr][k], inv)
		}
		for r := 0; r < nr; r++ {
			if r == pr || rows[r][col].Sign() == 0 {
				continue
			}
			f := new(big.Rat).Set(rows[r][col])
			for k := range rows[r] {
				rows[r][k].Sub(rows[r][k], new(big.Rat).Mul(f, rows[pr][k]))
			}
		}
		pivots = append(pivots, col)
		pr++
	}
	isPivot := make([]bool, len(free))
	for _, p := range pivots {
		isPivot[p] = true
	}
	var basis [][]*big.Int
	for fc := range free {
		if isPivot[fc] {
			continue
		}
		w := make([]*big.Rat, len(free))
		for k := range w {
			w[k] = new(big.Rat)
		}
		w[fc].SetInt64(1)
		for r, p := range pivots {
			w[p].Neg(rows[r][fc])
		}
		basis = append(basis, integerVector(w))
	}
	improveSigns(basis)
	shrink(basis)
	var laws []ConservationLaw
basis:
	for _, b := range basis {
		law := ConservationLaw{Weights: make([]int, len(m.Species))}
		for k, i := range free {
			if !b[k].IsInt64() || int64(int(b[k].Int64())) != b[k].Int64() {
				continue basis // a weight too large for an int: not listed
			}
			law.Weights[i] = int(b[k].Int64())
		}
		law.Text = lawText(m, species, law.Weights)
		laws = append(laws, law)
	}
	return laws
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
				for _, mult := range []int64{1, -1, 2, -2, 3, -3} {
					cand := make([]*big.Int, len(basis[a]))
					for k := range cand {
						cand[k] = new(big.Int).Add(basis[a][k], new(big.Int).Mul(big.NewInt(mult), basis[b][k]))
					}
					if zeros(cand) == len(cand) {
						continue
					}
					flip(cand)
					if negatives(cand) < negatives(basis[a]) {
						basis[a] = cand
						changed = true
						break
					}
				}
			}
		}
	}
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

func lawText(m *Model, species []string, w []int) string {
	var b strings.Builder
	comps := map[string]bool{}
	for i, x := range w {
		if x == 0 {
			continue
		}
		comps[m.Species[i].Compartment] = true
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
		b.WriteString(species[i])
	}
	b.WriteString(" = constant")
	if len(comps) > 1 {
		b.WriteString(" (in amounts: concentration × volume)")
	}
	return b.String()
}
