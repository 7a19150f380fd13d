//go:build !exprready

package network

import "errors"

// colMsg is a message about a column of an expression.
type colMsg struct {
	Col int
	Msg string
}

type stubProgram struct{}

func (*stubProgram) Eval([]float64) float64 { return 0 }

type program = *stubProgram

func cloneProgram(p program) program { return p }

func analyseExpr(src string) ([]string, []colMsg) {
	return nil, []colMsg{{1, "expressions are not available in this build"}}
}

func compileExpr(src string, slot func(string) (int, bool), wrt []string) (program, []program, error) {
	return nil, nil, errors.New("expressions are not available in this build")
}

func exprVars(src string) []string { return nil }
