//go:build sundials

package cvodecmp

/*
#cgo CFLAGS: -I/opt/sundials-dev/include -O2
#cgo LDFLAGS: -L/opt/sundials-dev/lib -Wl,-rpath,/opt/sundials-dev/lib -lsundials_cvode -lm

#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <cvode/cvode.h>
#include <nvector/nvector_serial.h>
#include <sunmatrix/sunmatrix_dense.h>
#include <sunlinsol/sunlinsol_dense.h>

enum { CVC_HIRES = 0, CVC_POLLU = 1, CVC_GO = 2 };

// Defined in callbacks.go: f and J of a Go network.System.
extern void cvcGoRHS(uintptr_t h, double t, double *y, double *f);
extern void cvcGoJac(uintptr_t h, double t, double *y, double *jac);

// HIRES, as ODEs in the Test Set for IVP Solvers (Mazzia and Magherini,
// University of Bari, release 2.4), problem file hires.f.
static void cvc_hires_rhs(const double *y, double *f) {
	f[0] = -1.71*y[0] + 0.43*y[1] + 8.32*y[2] + 0.0007;
	f[1] = 1.71*y[0] - 8.75*y[1];
	f[2] = -10.03*y[2] + 0.43*y[3] + 0.035*y[4];
	f[3] = 8.32*y[1] + 1.71*y[2] - 1.12*y[3];
	f[4] = -1.745*y[4] + 0.43*y[5] + 0.43*y[6];
	f[5] = -280.0*y[5]*y[7] + 0.69*y[3] + 1.71*y[4] - 0.43*y[5] + 0.69*y[6];
	f[6] = 280.0*y[5]*y[7] - 1.81*y[6];
	f[7] = -f[6];
}

// cvc_hires_jac writes the Jacobian column-major: J[i + 8*j] = df_i/dy_j.
static void cvc_hires_jac(const double *y, double *J) {
	memset(J, 0, 64 * sizeof(double));
#define H(i, j) J[(i) + 8*(j)]
	H(0,0) = -1.71; H(0,1) = 0.43; H(0,2) = 8.32;
	H(1,0) = 1.71;  H(1,1) = -8.75;
	H(2,2) = -10.03; H(2,3) = 0.43; H(2,4) = 0.035;
	H(3,1) = 8.32; H(3,2) = 1.71; H(3,3) = -1.12;
	H(4,4) = -1.745; H(4,5) = 0.43; H(4,6) = 0.43;
	H(5,3) = 0.69; H(5,4) = 1.71; H(5,5) = -0.43 - 280.0*y[7]; H(5,6) = 0.69; H(5,7) = -280.0*y[5];
	H(6,5) = 280.0*y[7]; H(6,6) = -1.81; H(6,7) = 280.0*y[5];
	H(7,5) = -280.0*y[7]; H(7,6) = 1.81; H(7,7) = -280.0*y[5];
#undef H
}

// POLLU, from the same Test Set (problem file pollu.f): 25 mass-action
// reactions of 20 species. Indices below are 1-based as in the source.
static const double cvc_pollu_k[25] = {
	0.35, 26.6, 1.23e4, 8.6e-4, 8.2e-4, 1.5e4, 1.3e-4, 2.4e4, 1.65e4, 9.0e3,
	2.2e-2, 1.2e4, 1.88, 1.63e4, 4.8e6, 3.5e-4, 1.75e-2, 1.0e8, 4.44e11, 1.24e3,
	2.1, 5.78, 4.74e-2, 1.78e3, 3.12,
};

static void cvc_pollu_rhs(const double *yy, double *f) {
	const double *k = cvc_pollu_k;
	const double *y = yy - 1; // y[1] … y[20]
	double r1 = k[0]*y[1], r2 = k[1]*y[2]*y[4], r3 = k[2]*y[5]*y[2], r4 = k[3]*y[7],
		r5 = k[4]*y[7], r6 = k[5]*y[7]*y[6], r7 = k[6]*y[9], r8 = k[7]*y[9]*y[6],
		r9 = k[8]*y[11]*y[2], r10 = k[9]*y[11]*y[1], r11 = k[10]*y[13], r12 = k[11]*y[10]*y[2],
		r13 = k[12]*y[14], r14 = k[13]*y[1]*y[6], r15 = k[14]*y[3], r16 = k[15]*y[4],
		r17 = k[16]*y[4], r18 = k[17]*y[16], r19 = k[18]*y[16], r20 = k[19]*y[17]*y[6],
		r21 = k[20]*y[19], r22 = k[21]*y[19], r23 = k[22]*y[1]*y[4], r24 = k[23]*y[19]*y[1],
		r25 = k[24]*y[20];
	f[0] = -r1 - r10 - r14 - r23 - r24 + r2 + r3 + r9 + r11 + r12 + r22 + r25;
	f[1] = -r2 - r3 - r9 - r12 + r1 + r21;
	f[2] = -r15 + r1 + r17 + r19 + r22;
	f[3] = -r2 - r16 - r17 - r23 + r15;
	f[4] = -r3 + r4 + r4 + r6 + r7 + r13 + r20;
	f[5] = -r6 - r8 - r14 - r20 + r3 + r18 + r18;
	f[6] = -r4 - r5 - r6 + r13;
	f[7] = r4 + r5 + r6 + r7;
	f[8] = -r7 - r8;
	f[9] = -r12 + r7 + r9;
	f[10] = -r9 - r10 + r8 + r11;
	f[11] = r9;
	f[12] = -r11 + r10;
	f[13] = -r13 + r12;
	f[14] = r14;
	f[15] = -r18 - r19 + r16;
	f[16] = -r20;
	f[17] = r20;
	f[18] = -r21 - r22 - r24 + r23 + r25;
	f[19] = -r25 + r24;
}

// Reactants (second one 0 when unimolecular) and products (0-padded) of the
// POLLU reactions, 1-based, for the Jacobian.
static const int cvc_pollu_in[25][2] = {
	{1,0},{2,4},{5,2},{7,0},{7,0},{7,6},{9,0},{9,6},{11,2},{11,1},
	{13,0},{10,2},{14,0},{1,6},{3,0},{4,0},{4,0},{16,0},{16,0},{17,6},
	{19,0},{19,0},{1,4},{19,1},{20,0},
};
static const int cvc_pollu_out[25][3] = {
	{2,3,0},{1,0,0},{1,6,0},{5,5,8},{8,0,0},{5,8,0},{5,8,10},{11,0,0},{1,10,12},{13,0,0},
	{1,11,0},{1,14,0},{5,7,0},{15,0,0},{4,0,0},{16,0,0},{3,0,0},{6,6,0},{3,0,0},{5,18,0},
	{2,0,0},{1,3,0},{19,0,0},{20,0,0},{1,19,0},
};

// cvc_pollu_jac writes the Jacobian column-major: J[i + 20*j] = df_i/dy_j.
static void cvc_pollu_jac(const double *y, double *J) {
	memset(J, 0, 400 * sizeof(double));
	for (int r = 0; r < 25; r++) {
		int a = cvc_pollu_in[r][0] - 1, b = cvc_pollu_in[r][1] - 1;
		double k = cvc_pollu_k[r];
		double da = b >= 0 ? k*y[b] : k; // d rate / d y_a
		double db = b >= 0 ? k*y[a] : 0; // d rate / d y_b
		J[a + 20*a] -= da;
		if (b >= 0) {
			J[b + 20*a] -= da;
			J[a + 20*b] -= db;
			J[b + 20*b] -= db;
		}
		for (int p = 0; p < 3 && cvc_pollu_out[r][p] > 0; p++) {
			int s = cvc_pollu_out[r][p] - 1;
			J[s + 20*a] += da;
			if (b >= 0) J[s + 20*b] += db;
		}
	}
}

static void cvc_rhs(int problem, const double *y, double *f) {
	if (problem == CVC_HIRES) cvc_hires_rhs(y, f); else cvc_pollu_rhs(y, f);
}

static void cvc_jac_dense(int problem, const double *y, double *J) {
	if (problem == CVC_HIRES) cvc_hires_jac(y, J); else cvc_pollu_jac(y, J);
}

// cvc_time_evals evaluates f (what == 0) or J (what == 1) reps times, for
// the cost of one evaluation without cgo overhead.
static double cvc_time_evals(int problem, int what, const double *y, double *out, long reps) {
	double sum = 0;
	for (long i = 0; i < reps; i++) {
		if (what == 0) cvc_rhs(problem, y, out); else cvc_jac_dense(problem, y, out);
		sum += out[i % 8];
	}
	return sum;
}

typedef struct {
	int problem;      // CVC_HIRES, CVC_POLLU or CVC_GO
	uintptr_t handle; // cgo.Handle of the Go system for CVC_GO
} cvc_user;

static int cvc_f(sunrealtype t, N_Vector y, N_Vector ydot, void *ud) {
	cvc_user *u = ud;
	double *yy = N_VGetArrayPointer(y), *f = N_VGetArrayPointer(ydot);
	if (u->problem == CVC_GO) cvcGoRHS(u->handle, t, yy, f);
	else cvc_rhs(u->problem, yy, f);
	return 0;
}

static int cvc_jac(sunrealtype t, N_Vector y, N_Vector fy, SUNMatrix J, void *ud,
                   N_Vector t1, N_Vector t2, N_Vector t3) {
	cvc_user *u = ud;
	double *yy = N_VGetArrayPointer(y), *jd = SUNDenseMatrix_Data(J);
	if (u->problem == CVC_GO) cvcGoJac(u->handle, t, yy, jd);
	else cvc_jac_dense(u->problem, yy, jd);
	return 0;
}

typedef struct {
	SUNContext ctx;
	void *mem;
	N_Vector y;
	SUNMatrix A;
	SUNLinearSolver LS;
	cvc_user user;
	int n, started;
} cvc_solver;

typedef struct {
	long steps, errfails, solvefails, rhs, linrhs, jac, setups;
} cvc_stats;

static void cvc_free(cvc_solver *s) {
	if (!s) return;
	if (s->mem) CVodeFree(&s->mem);
	if (s->LS) SUNLinSolFree(s->LS);
	if (s->A) SUNMatDestroy(s->A);
	if (s->y) N_VDestroy(s->y);
	if (s->ctx) SUNContext_Free(&s->ctx);
	free(s);
}

static cvc_solver *cvc_new(int problem, int n, uintptr_t handle) {
	cvc_solver *s = calloc(1, sizeof *s);
	if (!s) return NULL;
	s->n = n;
	s->user.problem = problem;
	s->user.handle = handle;
	if (SUNContext_Create(NULL, &s->ctx) != 0) goto fail;
	if (!(s->y = N_VNew_Serial(n, s->ctx))) goto fail;
	if (!(s->A = SUNDenseMatrix(n, n, s->ctx))) goto fail;
	if (!(s->LS = SUNLinSol_Dense(s->y, s->A, s->ctx))) goto fail;
	if (!(s->mem = CVodeCreate(CV_BDF, s->ctx))) goto fail;
	return s;
fail:
	cvc_free(s);
	return NULL;
}

// cvc_solve integrates from (0, y0) to tend with CVODE's defaults (BDF up to
// order 5, Newton iteration, Jacobian and setup reuse as CVODE decides),
// landing on tend exactly. It returns CVODE's flag (negative on failure).
static int cvc_solve(cvc_solver *s, const double *y0, double tend, double rtol, double atol,
                     double *yout, double *tret, cvc_stats *st) {
	double *yy = N_VGetArrayPointer(s->y);
	int flag;
	memcpy(yy, y0, s->n * sizeof(double));
	if (!s->started) {
		if ((flag = CVodeInit(s->mem, cvc_f, 0.0, s->y)) != CV_SUCCESS) return flag;
		if ((flag = CVodeSetUserData(s->mem, &s->user)) != CV_SUCCESS) return flag;
		if ((flag = CVodeSetLinearSolver(s->mem, s->LS, s->A)) != CV_SUCCESS) return flag;
		if ((flag = CVodeSetJacFn(s->mem, cvc_jac)) != CV_SUCCESS) return flag;
		if ((flag = CVodeSetMaxNumSteps(s->mem, 1000000)) != CV_SUCCESS) return flag;
		s->started = 1;
	} else if ((flag = CVodeReInit(s->mem, 0.0, s->y)) != CV_SUCCESS) {
		return flag;
	}
	if ((flag = CVodeSStolerances(s->mem, rtol, atol)) != CV_SUCCESS) return flag;
	if ((flag = CVodeSetStopTime(s->mem, tend)) != CV_SUCCESS) return flag;
	sunrealtype t = 0;
	flag = CVode(s->mem, tend, s->y, &t, CV_NORMAL);
	*tret = t;
	memcpy(yout, yy, s->n * sizeof(double));
	CVodeGetNumSteps(s->mem, &st->steps);
	CVodeGetNumErrTestFails(s->mem, &st->errfails);
	CVodeGetNumStepSolveFails(s->mem, &st->solvefails);
	CVodeGetNumRhsEvals(s->mem, &st->rhs);
	CVodeGetNumLinRhsEvals(s->mem, &st->linrhs);
	CVodeGetNumJacEvals(s->mem, &st->jac);
	CVodeGetNumLinSolvSetups(s->mem, &st->setups);
	return flag;
}
*/
import "C"

import (
	"fmt"
	"runtime/cgo"
	"time"
	"unsafe"

	"gonum.org/v1/gonum/mat"

	"kinetarium/network"
)

// RHS says where CVODE takes f and J from.
type RHS int

const (
	// CRHS uses f and J of HIRES or POLLU written in C.
	CRHS RHS = iota
	// GoRHS calls back into the compiled Go network.System.
	GoRHS
)

// Work counts what one solve did, for either library.
type Work struct {
	Steps          int // accepted steps
	Rejected       int // steps rejected by the error test or the Newton iteration
	RHSEvals       int // evaluations of f
	JacobianEvals  int // evaluations of J
	Factorizations int // LU factorizations (CVODE: linear solver setups)
}

// CVODE is one CVODE solver (BDF, Newton, dense matrix and linear solver,
// user Jacobian) for one problem, reused from solve to solve through
// CVodeReInit. It is used by one goroutine at a time; Close frees it.
type CVODE struct {
	p      Problem
	s      *C.cvc_solver
	handle cgo.Handle
	y      []float64
}

// goSystem is what the Go callbacks see.
type goSystem struct {
	sys *network.System
	n   int
	jac *mat.Dense
}

// NewCVODE returns a CVODE solver for p taking f and J from rhs.
func NewCVODE(p Problem, rhs RHS) (*CVODE, error) {
	c := &CVODE{p: p, y: make([]float64, p.Sys.Dim())}
	id := C.int(p.id)
	var h C.uintptr_t
	if rhs == GoRHS {
		n := p.Sys.Dim()
		c.handle = cgo.NewHandle(&goSystem{sys: p.Sys.Clone(), n: n, jac: mat.NewDense(n, n, nil)})
		h = C.uintptr_t(c.handle)
		id = C.CVC_GO
	}
	c.s = C.cvc_new(id, C.int(p.Sys.Dim()), h)
	if c.s == nil {
		c.Close()
		return nil, fmt.Errorf("cvodecmp: creating the CVODE solver for %s failed", p.Name)
	}
	return c, nil
}

// Close frees the C memory of c.
func (c *CVODE) Close() {
	if c.s != nil {
		C.cvc_free(c.s)
		c.s = nil
	}
	if c.handle != 0 {
		c.handle.Delete()
		c.handle = 0
	}
}

// Solve integrates c's problem from 0 to its end time at relative tolerance
// rtol and absolute tolerance atol. It returns the state at the end
// time (valid until the next Solve), the work done and the wall time of the
// C call.
func (c *CVODE) Solve(rtol, atol float64) ([]float64, Work, time.Duration, error) {
	y0 := c.p.Sys.Initial()
	var st C.cvc_stats
	var t C.double
	start := time.Now()
	flag := C.cvc_solve(c.s, (*C.double)(unsafe.Pointer(&y0[0])), C.double(c.p.TEnd), C.double(rtol),
		C.double(atol), (*C.double)(unsafe.Pointer(&c.y[0])), &t, &st)
	wall := time.Since(start)
	w := Work{
		Steps:          int(st.steps),
		Rejected:       int(st.errfails + st.solvefails),
		RHSEvals:       int(st.rhs + st.linrhs),
		JacobianEvals:  int(st.jac),
		Factorizations: int(st.setups),
	}
	if flag < 0 {
		return c.y, w, wall, fmt.Errorf("cvodecmp: CVODE failed on %s at t = %g with flag %d", c.p.Name, float64(t), int(flag))
	}
	if float64(t) != c.p.TEnd {
		return c.y, w, wall, fmt.Errorf("cvodecmp: CVODE stopped on %s at t = %g, not at %g", c.p.Name, float64(t), c.p.TEnd)
	}
	return c.y, w, wall, nil
}

// cRHS evaluates the C right-hand side of p at y into f.
func cRHS(p Problem, y, f []float64) {
	C.cvc_rhs(C.int(p.id), (*C.double)(unsafe.Pointer(&y[0])), (*C.double)(unsafe.Pointer(&f[0])))
}

// cJacobian evaluates the C Jacobian of p at y into jac, column-major.
func cJacobian(p Problem, y, jac []float64) {
	C.cvc_jac_dense(C.int(p.id), (*C.double)(unsafe.Pointer(&y[0])), (*C.double)(unsafe.Pointer(&jac[0])))
}

// cEvalCost returns the time of one C evaluation of f (jacobian false) or
// J (true) at y, measured over reps evaluations inside C.
func cEvalCost(p Problem, jacobian bool, y []float64, reps int) time.Duration {
	n := p.Sys.Dim()
	out := make([]float64, n*n)
	what := C.int(0)
	if jacobian {
		what = 1
	}
	start := time.Now()
	C.cvc_time_evals(C.int(p.id), what, (*C.double)(unsafe.Pointer(&y[0])), (*C.double)(unsafe.Pointer(&out[0])), C.long(reps))
	return time.Since(start) / time.Duration(reps)
}
