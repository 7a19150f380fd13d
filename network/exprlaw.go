package network

import (
	"fmt"

	"kinetarium/network/expr"
)

// colMsg is a message about a column of an expression.
type colMsg struct {
	Col int
	Msg string
}

// program is a compiled expression.
type program = *expr.Program

func cloneProgram(p program) program { return p.Clone() }

// analyseExpr parses and checks src and returns its variable names and its
// problems.
func analyseExpr(src string) ([]string, []colMsg) {
	n, err := expr.Parse(src)
	if err != nil {
		if e, ok := err.(*expr.Error); ok {
			return nil, []colMsg{{e.Col, e.Msg}}
		}
		return nil, []colMsg{{0, err.Error()}}
	}
	var out []colMsg
	for _, e := range expr.Check(n) {
		out = append(out, colMsg{e.Col, e.Msg})
	}
	return expr.Vars(n), out
}

// compileExpr compiles src and its derivatives with respect to wrt.
func compileExpr(src string, slot func(string) (int, bool), wrt []string) (program, []program, error) {
	n, err := expr.Parse(src)
	if err != nil {
		return nil, nil, err
	}
	rate, err := expr.Compile(n, slot)
	if err != nil {
		return nil, nil, err
	}
	ders := make([]program, len(wrt))
	for i, w := range wrt {
		ders[i], err = expr.Compile(expr.Simplify(expr.Diff(n, w)), slot)
		if err != nil {
			return nil, nil, fmt.Errorf("derivative by %s: %w", w, err)
		}
	}
	return rate, ders, nil
}

// exprVars returns the variables of src (which parses).
func exprVars(src string) []string {
	n, err := expr.Parse(src)
	if err != nil {
		return nil
	}
	return expr.Vars(n)
}
