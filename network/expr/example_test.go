package expr_test

import (
	"fmt"

	"kinetarium/network/expr"
)

func ExampleCompile() {
	// Rate of a Michaelis–Menten step and its derivative with respect to
	// the substrate, for a Jacobian entry.
	rate, err := expr.Parse("Vmax*S/(Km + S)")
	if err != nil {
		fmt.Println(err)
		return
	}
	dS := expr.Diff(rate, "S")
	slots := map[string]int{"Vmax": 0, "S": 1, "Km": 2}
	slot := func(name string) (int, bool) { i, ok := slots[name]; return i, ok }
	r, err := expr.Compile(rate, slot)
	if err != nil {
		fmt.Println(err)
		return
	}
	d, err := expr.Compile(dS, slot)
	if err != nil {
		fmt.Println(err)
		return
	}
	vars := []float64{2, 1, 3} // Vmax, S, Km
	fmt.Println(dS)
	fmt.Printf("rate %.4f, d/dS %.4f\n", r.Eval(vars), d.Eval(vars))
	// Output:
	// Vmax/(Km + S) - Vmax*S/(Km + S)^2
	// rate 0.5000, d/dS 0.3750
}
