// Package cvodecmp compares the integrators of package solve with the C
// library SUNDIALS CVODE (BDF, Newton iteration, dense direct linear solver,
// exact user Jacobian) on the published stiff test problems HIRES and POLLU,
// on the same machine and at the same tolerances.
//
// Everything but this file is built only with the build tag sundials, so the
// default build and tests need neither cgo nor the C library:
//
//	scripts/install-sundials.sh                  # CVODE headers and library
//	go test -tags sundials ./internal/cvodecmp   # validates the harness
//	go run -tags sundials ./internal/cvodecmp/cmd  # writes bench/cvode-comparison.md
//
// CVODE is driven two ways: with the right-hand sides and Jacobians of HIRES
// and POLLU written in C (as in the Test Set for IVP Solvers, F. Mazzia and
// C. Magherini, University of Bari, release 2.4), which is what a C user
// would write and what the wall-time comparison is about; and with callbacks
// into the compiled Go network.System, so that the same f and J are used by
// both libraries and the counts can be set side by side.
package cvodecmp
