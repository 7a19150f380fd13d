// Package cvodecmp compares the integrators of package solve with the C
// library SUNDIALS CVODE (BDF, Newton iteration, exact user Jacobian) with
// its dense direct linear solver and with its sparse one, KLU from
// SuiteSparse, on the published stiff test problems HIRES and POLLU, the
// 50-species example cascade and generated networks of any size, on the
// same machine and at the same tolerances; AtDigits reads the wall times
// at equal accuracy off the work-precision lines.
//
// Everything but this file is built only with the build tag sundials, so the
// default build and tests need neither cgo nor the C library:
//
//	scripts/install-sundials.sh                  # CVODE headers and library
//	go test -tags sundials ./internal/cvodecmp   # validates the harness
//	go run -tags sundials ./internal/cvodecmp/cmd  # writes bench/cvode-comparison.md
//	make cvode-compare                           # all three, and the stage profiles
//
// CVODE is driven two ways: with the right-hand sides and Jacobians of HIRES
// and POLLU written in C (as in the Test Set for IVP Solvers, F. Mazzia and
// C. Magherini, University of Bari, release 2.4), which is what a C user
// would write and what the wall-time comparison is about; and with callbacks
// into the compiled Go network.System, so that the same f and J are used by
// both libraries and the counts can be set side by side. CVODE–KLU always
// calls back into Go, with the Jacobian in compressed sparse columns (the
// network's CSR pattern transposed once), and times its stages: f, J,
// KLU's factorizations and solves, and the rest.
package cvodecmp
