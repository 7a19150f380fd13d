package solve

import "math"

// cLU is an allocation-free dense LU factorization with partial pivoting of
// a complex n×n matrix stored as separate row-major real and imaginary
// parts. Radau IIA uses it for its complex linear system; it is faster than
// the equivalent real 2n×2n system (measured in BenchmarkComplexSolve).
type cLU struct {
	n      int
	re, im []float64 // row-major factors
	piv    []int
}

// newCLU returns work space for complex n×n factorizations.
func newCLU(n int) *cLU {
	return &cLU{n: n, re: make([]float64, n*n), im: make([]float64, n*n), piv: make([]int, n)}
}

// factor factorizes the complex matrix re + i·im (both left unchanged).
func (f *cLU) factor(re, im []float64) error {
	n := f.n
	ar, ai := f.re, f.im
	copy(ar, re)
	copy(ai, im)
	for k := 0; k < n; k++ {
		p := k
		maxv := math.Abs(ar[k*n+k]) + math.Abs(ai[k*n+k])
		for i := k + 1; i < n; i++ {
			if v := math.Abs(ar[i*n+k]) + math.Abs(ai[i*n+k]); v > maxv {
				maxv, p = v, i
			}
		}
		f.piv[k] = p
		if maxv == 0 || math.IsNaN(maxv) || math.IsInf(maxv, 0) {
			return errSingular
		}
		if p != k {
			rk, rp := ar[k*n:(k+1)*n], ar[p*n:(p+1)*n]
			ik, ip := ai[k*n:(k+1)*n], ai[p*n:(p+1)*n]
			for j := range rk {
				rk[j], rp[j] = rp[j], rk[j]
				ik[j], ip[j] = ip[j], ik[j]
			}
		}
		// 1/(a + ib) = (a − ib)/(a² + b²)
		pr, pi := ar[k*n+k], ai[k*n+k]
		den := pr*pr + pi*pi
		invr, invi := pr/den, -pi/den
		rkr := ar[k*n+k+1 : (k+1)*n]
		rki := ai[k*n+k+1 : (k+1)*n]
		for i := k + 1; i < n; i++ {
			xr, xi := ar[i*n+k], ai[i*n+k]
			lr := xr*invr - xi*invi
			li := xr*invi + xi*invr
			ar[i*n+k], ai[i*n+k] = lr, li
			if lr == 0 && li == 0 {
				continue
			}
			rir := ar[i*n+k+1 : (i+1)*n]
			rii := ai[i*n+k+1 : (i+1)*n]
			rii = rii[:len(rir)]
			for j, vr := range rkr {
				vi := rki[j]
				rir[j] -= lr*vr - li*vi
				rii[j] -= lr*vi + li*vr
			}
		}
	}
	return nil
}

// solve overwrites br + i·bi with the solution of A x = b.
func (f *cLU) solve(br, bi []float64) {
	n := f.n
	ar, ai := f.re, f.im
	for k := 0; k < n; k++ {
		if p := f.piv[k]; p != k {
			br[k], br[p] = br[p], br[k]
			bi[k], bi[p] = bi[p], bi[k]
		}
	}
	for i := 1; i < n; i++ {
		rr, ri := ar[i*n:i*n+i], ai[i*n:i*n+i]
		sr, si := br[i], bi[i]
		for j, vr := range rr {
			vi := ri[j]
			sr -= vr*br[j] - vi*bi[j]
			si -= vr*bi[j] + vi*br[j]
		}
		br[i], bi[i] = sr, si
	}
	for i := n - 1; i >= 0; i-- {
		sr, si := br[i], bi[i]
		rr, ri := ar[i*n+i+1:(i+1)*n], ai[i*n+i+1:(i+1)*n]
		for j, vr := range rr {
			vi := ri[j]
			sr -= vr*br[i+1+j] - vi*bi[i+1+j]
			si -= vr*bi[i+1+j] + vi*br[i+1+j]
		}
		dr, di := ar[i*n+i], ai[i*n+i]
		den := dr*dr + di*di
		br[i] = (sr*dr + si*di) / den
		bi[i] = (si*dr - sr*di) / den
	}
}
