package network

import (
	"math"
	"math/big"
	"strconv"
)

// denseConservationLaws is the earlier method of Net.ConservationLaws,
// kept as the reference of the sparse one: the reduced row echelon form
// of the dense rational matrix Nᵀ, then improveSigns and shrink on the
// whole basis. Its work grows as species²·reactions.
func denseConservationLaws(net *Net) []ConservationLaw {
	m := net.Model
	_, _, n := net.Stoichiometry()
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
	improveSignsDense(basis)
	shrinkDense(basis)
	var laws []ConservationLaw
basis:
	for _, b := range basis {
		var law ConservationLaw
		for k, i := range free {
			if !b[k].IsInt64() || int64(int(b[k].Int64())) != b[k].Int64() {
				continue basis // a weight too large for an int: not listed
			}
			if w := int(b[k].Int64()); w != 0 {
				law.Terms = append(law.Terms, LawTerm{Species: i, Weight: w})
			}
		}
		law.Text = lawText(m, law.Terms)
		laws = append(laws, law)
	}
	return laws
}

// improveSignsDense is improveSigns as it was, for the reference: it
// adds small multiples of the other basis vectors to each vector, and
// flips signs, while that reduces its number of negative entries. The span is unchanged (unimodular steps).
func improveSignsDense(basis [][]*big.Int) {
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

// shrinkDense is shrink as it was, for the reference: it subtracts one
// basis vector from another wherever the result stays non-negative, so
// that laws such as "E + ES" do not carry others along.
func shrinkDense(basis [][]*big.Int) {
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
