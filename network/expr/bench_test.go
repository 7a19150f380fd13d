package expr

import (
	"math"
	"slices"
	"testing"
)

// compileNamed compiles src with slots in the order of names.
func compileNamed(b *testing.B, src string, names ...string) *Program {
	b.Helper()
	n, err := Parse(src)
	if err != nil {
		b.Fatal(err)
	}
	p, err := Compile(n, func(name string) (int, bool) {
		i := slices.Index(names, name)
		return i, i >= 0
	})
	if err != nil {
		b.Fatal(err)
	}
	return p
}

var sink float64

// Hand-written Go versions read their inputs from a slice, as Eval does, and
// are kept out of line so that both sides pay for one call.

//go:noinline
func goHill(v []float64) float64 { return v[0] / (1 + math.Pow(v[1]/v[2], v[3])) }

//go:noinline
func goMM(v []float64) float64 { return v[0] * v[1] / (v[2] + v[1]) }

//go:noinline
func goMassAction(v []float64) float64 {
	// k1, k2, k3, k4, k5, A, B, C, D
	return v[0]*v[5]*v[6] - v[1]*v[7] + v[2]*v[5]*v[5] - v[3]*v[7]*v[8] + v[4]*v[8]
}

const massAction = "k1*A*B - k2*C + k3*A^2 - k4*C*D + k5*D"

var massNames = []string{"k1", "k2", "k3", "k4", "k5", "A", "B", "C", "D"}

func BenchmarkEvalHill(b *testing.B) {
	p := compileNamed(b, "a1/(1 + (V/K)^n)", "a1", "V", "K", "n")
	v := []float64{2, 0.7, 1.3, 2.4}
	b.ReportAllocs()
	for b.Loop() {
		sink = p.Eval(v)
	}
}

func BenchmarkGoHill(b *testing.B) {
	v := []float64{2, 0.7, 1.3, 2.4}
	b.ReportAllocs()
	for b.Loop() {
		sink = goHill(v)
	}
}

func BenchmarkEvalMM(b *testing.B) {
	p := compileNamed(b, "Vmax*S/(Km + S)", "Vmax", "S", "Km")
	v := []float64{2, 0.7, 1.3}
	b.ReportAllocs()
	for b.Loop() {
		sink = p.Eval(v)
	}
}

func BenchmarkGoMM(b *testing.B) {
	v := []float64{2, 0.7, 1.3}
	b.ReportAllocs()
	for b.Loop() {
		sink = goMM(v)
	}
}

func BenchmarkEvalMassAction(b *testing.B) {
	p := compileNamed(b, massAction, massNames...)
	v := []float64{0.1, 0.2, 0.3, 0.4, 0.5, 1.1, 1.2, 1.3, 1.4}
	b.ReportAllocs()
	for b.Loop() {
		sink = p.Eval(v)
	}
}

func BenchmarkGoMassAction(b *testing.B) {
	v := []float64{0.1, 0.2, 0.3, 0.4, 0.5, 1.1, 1.2, 1.3, 1.4}
	b.ReportAllocs()
	for b.Loop() {
		sink = goMassAction(v)
	}
}

// BenchmarkDiffHill measures forming and simplifying a derivative, done once
// per Jacobian entry when a model is assembled.
func BenchmarkDiffHill(b *testing.B) {
	n, _ := Parse("a1/(1 + (V/K)^n)")
	b.ReportAllocs()
	for b.Loop() {
		_ = Diff(n, "V")
	}
}

func TestBenchFormulasAgree(t *testing.T) {
	// The Go versions used as speed references compute the same values
	// (reference: Go's math package).
	b := &testing.B{}
	check := func(name string, p *Program, fn func([]float64) float64, v []float64) {
		if got, want := p.Eval(v), fn(v); math.Abs(got-want) > 1e-15*math.Abs(want) {
			t.Errorf("%s: Eval = %v, Go = %v", name, got, want)
		}
	}
	check("Hill", compileNamed(b, "a1/(1 + (V/K)^n)", "a1", "V", "K", "n"), goHill, []float64{2, 0.7, 1.3, 2.4})
	check("MM", compileNamed(b, "Vmax*S/(Km + S)", "Vmax", "S", "Km"), goMM, []float64{2, 0.7, 1.3})
	check("mass action", compileNamed(b, massAction, massNames...), goMassAction, []float64{0.1, 0.2, 0.3, 0.4, 0.5, 1.1, 1.2, 1.3, 1.4})
}
