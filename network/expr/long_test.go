package expr

import (
	"fmt"
	"math"
	"strings"
	"testing"
)

// longSum is a sum of n terms k*A; longProduct a product of n factors
// (1 + c_i*A) with distinct constants c_i = i/n.
func longSum(n int) string { return strings.Repeat("k*A + ", n-1) + "k*A" }

func longProduct(n int) string {
	var b strings.Builder
	for i := 1; i <= n; i++ {
		if i > 1 {
			b.WriteByte('*')
		}
		fmt.Fprintf(&b, "(1 + %v*A)", float64(i)/float64(n))
	}
	return b.String()
}

var longSlots = map[string]int{"k": 0, "A": 1}

func longSlot(s string) (int, bool) { i, ok := longSlots[s]; return i, ok }

// Issue 17: a product of 1,600 factors took 33 s to differentiate and
// compile, since the derivative's shared parts were compiled once per use.
// The derivative of ∏(1 + cᵢA) is Σᵢ cᵢ ∏_{j≠i}(1 + cⱼA) (product rule,
// closed form); the compiled derivative must match it, and its code must
// grow in proportion to the factors, not their square.
func TestLongProductDerivative(t *testing.T) {
	const a = 0.3
	for _, n := range []int{10, 100, 1600} {
		tree, err := Parse(longProduct(n))
		if err != nil {
			t.Fatal(err)
		}
		p, err := Compile(Diff(tree, "A"), longSlot)
		if err != nil {
			t.Fatal(err)
		}
		if len(p.code) > 12*n {
			t.Errorf("%d factors: %d instructions, want at most %d (linear)", n, len(p.code), 12*n)
		}
		// Closed form: the product times Σ cᵢ/(1 + cᵢA).
		prod, sum := 1.0, 0.0
		for i := 1; i <= n; i++ {
			c := float64(i) / float64(n)
			prod *= 1 + c*a
			sum += c / (1 + c*a)
		}
		want := prod * sum
		if got := p.Eval([]float64{0, a}); math.Abs(got-want) > 1e-12*math.Abs(want)*float64(n) {
			t.Errorf("%d factors: derivative %v, closed form %v", n, got, want)
		}
		if allocs := testing.AllocsPerRun(10, func() { p.Eval([]float64{0, a}) }); allocs != 0 {
			t.Errorf("%d factors: %v allocations per Eval", n, allocs)
		}
	}
}

// A sum of MaxTerms terms parses, differentiates and compiles (to k times
// the number of terms); one more term is an error at the column of the
// operator that passes the limit.
func TestLongSumLimit(t *testing.T) {
	tree, err := Parse(longSum(MaxTerms))
	if err != nil {
		t.Fatal(err)
	}
	p, err := Compile(Diff(tree, "A"), longSlot)
	if err != nil {
		t.Fatal(err)
	}
	if got := p.Eval([]float64{0.5, 2}); got != 0.5*MaxTerms {
		t.Errorf("derivative of the sum: %v, want %v", got, 0.5*MaxTerms)
	}
	src := longSum(MaxTerms + 1)
	_, err = Parse(src)
	col := len(longSum(MaxTerms)) + 2 // the "+" after the last allowed term
	var e *Error
	if !asError(err, &e) || e.Col != col || !strings.Contains(e.Msg, "sum of more than 100000 terms") {
		t.Errorf("one term too many: %v; want an error at column %d", err, col)
	}
	_, err = Parse(strings.Repeat("A*", MaxTerms) + "A")
	if !asError(err, &e) || !strings.Contains(e.Msg, "product of more than 100000 factors") {
		t.Errorf("one factor too many: %v", err)
	}
	// A million-term sum used to overflow the stack.
	_, err = Parse(longSum(1_000_000))
	if !asError(err, &e) || e.Col == 0 {
		t.Errorf("a million terms: %v; want a located error", err)
	}
	_, err = Parse(strings.Repeat("(A+A+A+A+A+A+A+A+A+A)*", 30_000) + "A")
	if !asError(err, &e) || !strings.Contains(e.Msg, "too long") {
		t.Errorf("more than MaxItems: %v", err)
	}
}

func asError(err error, e **Error) bool {
	x, ok := err.(*Error)
	*e = x
	return ok
}

// BenchmarkLongSum parses, differentiates and compiles a sum of 10⁵ terms
// (issue 17: 54 s before; the target is under a second).
func BenchmarkLongSum(b *testing.B) {
	src := longSum(100_000)
	for b.Loop() {
		tree, err := Parse(src)
		if err != nil {
			b.Fatal(err)
		}
		if _, err := Compile(tree, longSlot); err != nil {
			b.Fatal(err)
		}
		if _, err := Compile(Diff(tree, "A"), longSlot); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkLongProduct does the same for a product of 1,600 factors
// (issue 17: 33 s before).
func BenchmarkLongProduct(b *testing.B) {
	src := longProduct(1600)
	for b.Loop() {
		tree, err := Parse(src)
		if err != nil {
			b.Fatal(err)
		}
		if _, err := Compile(tree, longSlot); err != nil {
			b.Fatal(err)
		}
		if _, err := Compile(Diff(tree, "A"), longSlot); err != nil {
			b.Fatal(err)
		}
	}
}
