//go:build !sundials

// Command cmd compares Kinetarium's integrators with SUNDIALS CVODE. It
// needs the C library and the build tag sundials:
//
//	scripts/install-sundials.sh
//	go run -tags sundials ./internal/cvodecmp/cmd
package main

import (
	"fmt"
	"os"
)

func main() {
	fmt.Fprintln(os.Stderr, "cvodecmp: built without SUNDIALS; run scripts/install-sundials.sh, then go run -tags sundials ./internal/cvodecmp/cmd")
	os.Exit(2)
}
