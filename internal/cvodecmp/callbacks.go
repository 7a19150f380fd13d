//go:build sundials

package cvodecmp

// This file holds the functions CVODE calls back into Go; cgo allows only
// declarations in the preamble of a file with //export.

/*
#include <stdint.h>
#include <sundials/sundials_types.h>
*/
import "C"

import (
	"runtime/cgo"
	"unsafe"
)

// cvcGoRHS writes f(t, y) of the Go system behind handle h into f.
//
//export cvcGoRHS
func cvcGoRHS(h C.uintptr_t, t C.double, y, f *C.double) {
	g := handleSystem(h)
	g.sys.RHS(float64(t), unsafe.Slice((*float64)(unsafe.Pointer(y)), g.n), unsafe.Slice((*float64)(unsafe.Pointer(f)), g.n))
}

// cvcGoJac writes the Jacobian of the Go system behind handle h into jac,
// column-major as SUNDIALS' dense matrix stores it.
//
//export cvcGoJac
func cvcGoJac(h C.uintptr_t, t C.double, y, jac *C.double) {
	g := cgo.Handle(h).Value().(*goSystem)
	n := g.n
	g.sys.Jacobian(float64(t), unsafe.Slice((*float64)(unsafe.Pointer(y)), n), g.jac)
	raw := g.jac.RawMatrix()
	out := unsafe.Slice((*float64)(unsafe.Pointer(jac)), n*n)
	for i := 0; i < n; i++ {
		row := raw.Data[i*raw.Stride : i*raw.Stride+n]
		for j, v := range row {
			out[i+j*n] = v
		}
	}
}

// handleSystem returns the Go system behind handle h, for either variant.
func handleSystem(h C.uintptr_t) *goSystem {
	switch v := cgo.Handle(h).Value().(type) {
	case *cscSystem:
		return &v.goSystem
	default:
		return v.(*goSystem)
	}
}

// cvcGoJacCSC writes the Jacobian of the Go system behind handle h into a
// CVODE sparse matrix in compressed sparse columns: the pattern (colptrs,
// rowvals) and the values (data), scattered from the network's CSR order.
//
//export cvcGoJacCSC
func cvcGoJacCSC(h C.uintptr_t, t C.double, y, data *C.double, colptrs, rowvals *C.sunindextype) {
	c := cgo.Handle(h).Value().(*cscSystem)
	nnz := len(c.vals)
	c.sys.JacobianCSR(float64(t), unsafe.Slice((*float64)(unsafe.Pointer(y)), c.n), c.vals)
	copy(unsafe.Slice(colptrs, c.n+1), c.colPtr)
	copy(unsafe.Slice(rowvals, nnz), c.rowIdx)
	out := unsafe.Slice((*float64)(unsafe.Pointer(data)), nnz)
	for k, v := range c.vals {
		out[c.perm[k]] = v
	}
}
