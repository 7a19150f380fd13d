package gennet_test

import (
	"context"
	"fmt"
	"runtime"
	"testing"

	"kinetarium/internal/gennet"
	"kinetarium/network"
	"kinetarium/solve"
)

// cascadeSettings are the settings of the work-precision report's generated
// network at rtol 1e-6 (atol = rtol·1e-6, as in issue 19's comparison).
func cascadeSettings(m solve.Method) solve.Settings {
	return solve.Settings{Method: m, RTol: 1e-6, ATol: 1e-12, NonNegative: true,
		Times: solve.LogTimes(1e-3, 1000, 200)}
}

// BenchmarkCascade times whole solves of the generated signalling network
// of 200, 1,000, 5,000 and 20,000 species (50 to 5,000 modules) with the
// automatic method at rtol 1e-6, and reports the work, the bytes a solve
// allocates and the peak heap (HeapInuse sampled after the solve is not a
// peak; "MB-heap" is the live heap right after NewSolver+Solve).
func BenchmarkCascade(b *testing.B) {
	for _, modules := range []int{50, 250, 1250, 5000} {
		b.Run(fmt.Sprintf("n=%d", 4*modules), func(b *testing.B) {
			sys, err := network.Compile(gennet.Signalling(modules))
			if err != nil {
				b.Fatal(err)
			}
			y0 := sys.Initial()
			var res *solve.Result
			var ms0, ms1 runtime.MemStats
			runtime.GC()
			runtime.ReadMemStats(&ms0)
			b.ReportAllocs()
			for b.Loop() {
				res, err = solve.NewSolver(sys, cascadeSettings(solve.Auto)).Solve(context.Background(), 0, 1000, y0)
				if err != nil {
					b.Fatal(err)
				}
			}
			runtime.ReadMemStats(&ms1)
			b.ReportMetric(float64(res.Steps), "steps")
			b.ReportMetric(float64(res.RHSEvals), "rhs")
			b.ReportMetric(float64(res.JacobianEvals), "jac")
			b.ReportMetric(float64(res.Factorizations), "LU")
			b.ReportMetric(float64(ms1.TotalAlloc-ms0.TotalAlloc)/float64(b.N)/1e6, "MB-alloc/op")
		})
	}
}
