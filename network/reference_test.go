package network

import (
	"math"
	"testing"
)

// polluRHS is the POLLU right-hand side as published in the Test Set for
// IVP Solvers (Mazzia & Magherini, Univ. Bari, release 2.4; originally
// Verwer 1994), subroutine feval, written out by hand.
func polluRHS(y []float64) []float64 {
	k := [26]float64{0, .35, .266e2, .123e5, .86e-3, .82e-3, .15e5, .13e-3, .24e5, .165e5, .9e4, .22e-1,
		.12e5, .188e1, .163e5, .48e7, .35e-3, .175e-1, .1e9, .444e12, .124e4, .21e1, .578e1, .474e-1, .178e4, .312e1}
	Y := func(i int) float64 { return y[i-1] }
	r1 := k[1] * Y(1)
	r2 := k[2] * Y(2) * Y(4)
	r3 := k[3] * Y(5) * Y(2)
	r4 := k[4] * Y(7)
	r5 := k[5] * Y(7)
	r6 := k[6] * Y(7) * Y(6)
	r7 := k[7] * Y(9)
	r8 := k[8] * Y(9) * Y(6)
	r9 := k[9] * Y(11) * Y(2)
	r10 := k[10] * Y(11) * Y(1)
	r11 := k[11] * Y(13)
	r12 := k[12] * Y(10) * Y(2)
	r13 := k[13] * Y(14)
	r14 := k[14] * Y(1) * Y(6)
	r15 := k[15] * Y(3)
	r16 := k[16] * Y(4)
	r17 := k[17] * Y(4)
	r18 := k[18] * Y(16)
	r19 := k[19] * Y(16)
	r20 := k[20] * Y(17) * Y(6)
	r21 := k[21] * Y(19)
	r22 := k[22] * Y(19)
	r23 := k[23] * Y(1) * Y(4)
	r24 := k[24] * Y(19) * Y(1)
	r25 := k[25] * Y(20)
	return []float64{
		-r1 - r10 - r14 - r23 - r24 + r2 + r3 + r9 + r11 + r12 + r22 + r25,
		-r2 - r3 - r9 - r12 + r1 + r21,
		-r15 + r1 + r17 + r19 + r22,
		-r2 - r16 - r17 - r23 + r15,
		-r3 + r4 + r4 + r6 + r7 + r13 + r20,
		-r6 - r8 - r14 - r20 + r3 + r18 + r18,
		-r4 - r5 - r6 + r13,
		r4 + r5 + r6 + r7,
		-r7 - r8,
		-r12 + r7 + r9,
		-r9 - r10 + r8 + r11,
		r9,
		-r11 + r10,
		-r13 + r12,
		r14,
		-r18 - r19 + r16,
		-r20,
		r20,
		-r21 - r22 - r24 + r23 + r25,
		-r25 + r24,
	}
}

// hiresRHS is the HIRES right-hand side (Hairer & Wanner, Solving ODEs II,
// 1996; Test Set for IVP Solvers, release 2.4), written out by hand.
func hiresRHS(y []float64) []float64 {
	f := make([]float64, 8)
	f[0] = -1.71*y[0] + 0.43*y[1] + 8.32*y[2] + 0.0007
	f[1] = 1.71*y[0] - 8.75*y[1]
	f[2] = -10.03*y[2] + 0.43*y[3] + 0.035*y[4]
	f[3] = 8.32*y[1] + 1.71*y[2] - 1.12*y[3]
	f[4] = -1.745*y[4] + 0.43*y[5] + 0.43*y[6]
	f[5] = -280*y[5]*y[7] + 0.69*y[3] + 1.71*y[4] - 0.43*y[5] + 0.69*y[6]
	f[6] = 280*y[5]*y[7] - 1.81*y[6]
	f[7] = -f[6]
	return f
}

// compareRHS checks sys against want at y. The tolerance is relative to
// the largest reaction term, since sums of large rates cancel.
func compareRHS(t *testing.T, label string, s *System, y []float64, want []float64, scale, tol float64) {
	t.Helper()
	got := make([]float64, s.Dim())
	s.RHS(0, y, got)
	for i := range want {
		if d := math.Abs(got[i] - want[i]); d > tol*math.Max(math.Abs(want[i]), scale) {
			t.Errorf("%s: f[%d] = %.17g, published equations give %.17g", label, i+1, got[i], want[i])
		}
	}
}

func TestPOLLU(t *testing.T) {
	m, err := Load("testdata/pollu.json")
	if err != nil {
		t.Fatal(err)
	}
	s := mustCompile(t, m)
	if s.Dim() != 20 {
		t.Fatalf("POLLU has %d species, want 20", s.Dim())
	}
	y0 := s.Initial()
	// Published initial state (Test Set): y2 = 0.2, y4 = 0.04, y7 = 0.1,
	// y8 = 0.3, y9 = 0.01, y17 = 0.007.
	want0 := []float64{0, 0.2, 0, 0.04, 0, 0, 0.1, 0.3, 0.01, 0, 0, 0, 0, 0, 0, 0, 0.007, 0, 0, 0}
	for i := range want0 {
		if y0[i] != want0[i] {
			t.Errorf("y%d(0) = %g, want %g", i+1, y0[i], want0[i])
		}
	}
	compareRHS(t, "POLLU at y0", s, y0, polluRHS(y0), 0, 1e-12)
	y := make([]float64, 20)
	for i := range y {
		y[i] = 0.1 * float64(i+1)
	}
	// At this state rates up to 4.44e11·1.6 cancel in f3, so compare
	// against the size of the largest term.
	compareRHS(t, "POLLU at y_i = 0.1·i", s, y, polluRHS(y), 1e-3, 1e-12)
	rng := newRng()
	for k := 0; k < 5; k++ {
		checkJacobianFD(t, "POLLU", s, randomState(rng, s))
	}
}

func TestHIRES(t *testing.T) {
	m, err := Load("testdata/hires.json")
	if err != nil {
		t.Fatal(err)
	}
	s := mustCompile(t, m)
	y0 := s.Initial()
	// Published initial state: y1 = 1, y8 = 0.0057.
	if y0[0] != 1 || y0[7] != 0.0057 {
		t.Errorf("initial state %v, want y1 = 1, y8 = 0.0057", y0)
	}
	compareRHS(t, "HIRES at y0", s, y0, hiresRHS(y0), 0, 1e-12)
	y := []float64{0.3, 1.1, 0.02, 0.7, 2.5, 0.004, 0.9, 0.006}
	compareRHS(t, "HIRES at a mixed state", s, y, hiresRHS(y), 0, 1e-12)
}
