package network

import "kinetarium/network/expr"

// program is a compiled expression.
type program = *expr.Program

func cloneProgram(p program) program { return p.Clone() }
