package solve

import (
	"math"

	"gonum.org/v1/gonum/mat"
)

// Published stiff test problems, shared by the tests of all methods.
//
// Source: Test Set for IVP Solvers, F. Mazzia and C. Magherini, Department
// of Mathematics, University of Bari, release 2.4 (2008): problems HIRES
// (E. Schäfer 1975; Hairer & Wanner, Solving ODEs II, 1996) and POLLU
// (J. G. Verwer, SIAM J. Sci. Comput. 15 (1994) 1243–1259), with their
// published reference solutions.

// hiresSystem is HIRES: 8 species, t in [0, 321.8122].
type hiresSystem struct{}

const hiresTEnd = 321.8122

// hiresY0 returns the initial state of HIRES.
func hiresY0() []float64 { return []float64{1, 0, 0, 0, 0, 0, 0, 0.0057} }

// hiresRef is the reference solution at t = 321.8122 (Test Set for IVP
// Solvers, release 2.4).
var hiresRef = []float64{
	0.7371312573325668e-3, 0.1442485726316185e-3, 0.5888729740967575e-4, 0.1175651343283149e-2,
	0.2386356198831331e-2, 0.6238968252742796e-2, 0.2849998395185769e-2, 0.2850001604814231e-2,
}

func (hiresSystem) Dim() int         { return 8 }
func (hiresSystem) Autonomous() bool { return true }

func (hiresSystem) RHS(_ float64, y, f []float64) {
	f[0] = -1.71*y[0] + 0.43*y[1] + 8.32*y[2] + 0.0007
	f[1] = 1.71*y[0] - 8.75*y[1]
	f[2] = -10.03*y[2] + 0.43*y[3] + 0.035*y[4]
	f[3] = 8.32*y[1] + 1.71*y[2] - 1.12*y[3]
	f[4] = -1.745*y[4] + 0.43*y[5] + 0.43*y[6]
	f[5] = -280*y[5]*y[7] + 0.69*y[3] + 1.71*y[4] - 0.43*y[5] + 0.69*y[6]
	f[6] = 280*y[5]*y[7] - 1.81*y[6]
	f[7] = -f[6]
}

func (hiresSystem) Jacobian(_ float64, y []float64, j *mat.Dense) {
	j.Zero()
	j.Set(0, 0, -1.71)
	j.Set(0, 1, 0.43)
	j.Set(0, 2, 8.32)
	j.Set(1, 0, 1.71)
	j.Set(1, 1, -8.75)
	j.Set(2, 2, -10.03)
	j.Set(2, 3, 0.43)
	j.Set(2, 4, 0.035)
	j.Set(3, 1, 8.32)
	j.Set(3, 2, 1.71)
	j.Set(3, 3, -1.12)
	j.Set(4, 4, -1.745)
	j.Set(4, 5, 0.43)
	j.Set(4, 6, 0.43)
	j.Set(5, 3, 0.69)
	j.Set(5, 4, 1.71)
	j.Set(5, 5, -0.43-280*y[7])
	j.Set(5, 6, 0.69)
	j.Set(5, 7, -280*y[5])
	j.Set(6, 5, 280*y[7])
	j.Set(6, 6, -1.81)
	j.Set(6, 7, 280*y[5])
	j.Set(7, 5, -280*y[7])
	j.Set(7, 6, 1.81)
	j.Set(7, 7, -280*y[5])
}

// massAction is one mass-action reaction: rate k·Π y[in[i]], consuming
// in and producing out (indices repeat for coefficients above 1).
type massAction struct {
	k   float64
	in  []int
	out []int
}

// massActionSystem is a mass-action network with an exact Jacobian.
type massActionSystem struct {
	n  int
	rx []massAction
}

func (m *massActionSystem) Dim() int         { return m.n }
func (m *massActionSystem) Autonomous() bool { return true }

func (m *massActionSystem) RHS(_ float64, y, f []float64) {
	for i := range f {
		f[i] = 0
	}
	for _, r := range m.rx {
		rate := r.k
		for _, i := range r.in {
			rate *= y[i]
		}
		for _, i := range r.in {
			f[i] -= rate
		}
		for _, i := range r.out {
			f[i] += rate
		}
	}
}

func (m *massActionSystem) Jacobian(_ float64, y []float64, j *mat.Dense) {
	j.Zero()
	for _, r := range m.rx {
		for a, ia := range r.in {
			// ∂rate/∂y[ia] for the a-th reactant factor (product rule).
			d := r.k
			for b, ib := range r.in {
				if b != a {
					d *= y[ib]
				}
			}
			for _, i := range r.in {
				j.Set(i, ia, j.At(i, ia)-d)
			}
			for _, i := range r.out {
				j.Set(i, ia, j.At(i, ia)+d)
			}
		}
	}
}

// polluSystem returns POLLU: 20 species, 25 reactions, t in [0, 60]. The
// reactions and rate constants are those of the Test Set (y1 … y20 are
// indices 0 … 19).
func polluSystem() *massActionSystem {
	r := func(k float64, in, out []int) massAction {
		for i := range in {
			in[i]--
		}
		for i := range out {
			out[i]--
		}
		return massAction{k: k, in: in, out: out}
	}
	return &massActionSystem{n: 20, rx: []massAction{
		r(0.35, []int{1}, []int{2, 3}),
		r(26.6, []int{2, 4}, []int{1}),
		r(1.23e4, []int{5, 2}, []int{1, 6}),
		r(8.6e-4, []int{7}, []int{5, 5, 8}),
		r(8.2e-4, []int{7}, []int{8}),
		r(1.5e4, []int{7, 6}, []int{5, 8}),
		r(1.3e-4, []int{9}, []int{5, 8, 10}),
		r(2.4e4, []int{9, 6}, []int{11}),
		r(1.65e4, []int{11, 2}, []int{1, 10, 12}),
		r(9.0e3, []int{11, 1}, []int{13}),
		r(2.2e-2, []int{13}, []int{1, 11}),
		r(1.2e4, []int{10, 2}, []int{1, 14}),
		r(1.88, []int{14}, []int{5, 7}),
		r(1.63e4, []int{1, 6}, []int{15}),
		r(4.8e6, []int{3}, []int{4}),
		r(3.5e-4, []int{4}, []int{16}),
		r(1.75e-2, []int{4}, []int{3}),
		r(1.0e8, []int{16}, []int{6, 6}),
		r(4.44e11, []int{16}, []int{3}),
		r(1.24e3, []int{17, 6}, []int{5, 18}),
		r(2.1, []int{19}, []int{2}),
		r(5.78, []int{19}, []int{1, 3}),
		r(4.74e-2, []int{1, 4}, []int{19}),
		r(1.78e3, []int{19, 1}, []int{20}),
		r(3.12, []int{20}, []int{1, 19}),
	}}
}

const polluTEnd = 60.0

// polluY0 returns the initial state of POLLU.
func polluY0() []float64 {
	y := make([]float64, 20)
	y[1], y[3], y[6], y[7], y[8], y[16] = 0.2, 0.04, 0.1, 0.3, 0.01, 0.007
	return y
}

// polluRef is the reference solution at t = 60 (Test Set for IVP Solvers,
// release 2.4).
var polluRef = []float64{
	0.5646255480022769e-1, 0.1342484130422339e+0, 0.4139734331099427e-8, 0.5523140207484359e-2,
	0.2018977262302196e-6, 0.1464541863493966e-6, 0.7784249118997964e-1, 0.3245075353396018e+0,
	0.7494013383880406e-2, 0.1622293157301561e-7, 0.1135863833257075e-7, 0.2230505975721359e-2,
	0.2087162882798630e-3, 0.1396921016840158e-4, 0.8964884856898295e-2, 0.4352846369330103e-17,
	0.6899219696263405e-2, 0.1007803037365946e-3, 0.1772146513969984e-5, 0.5682943292316392e-4,
}

// scaledError is max_i |y_i − ref_i| / (atol + rtol·|ref_i|), the measure
// the Test Set uses to compare codes.
func scaledError(y, ref []float64, rtol, atol float64) float64 {
	var m float64
	for i := range ref {
		m = math.Max(m, math.Abs(y[i]-ref[i])/(atol+rtol*math.Abs(ref[i])))
	}
	return m
}
