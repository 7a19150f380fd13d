//go:build sundials

package cvodecmp

/*
#cgo CFLAGS: -I/opt/sundials-dev/include -I/opt/sundials-dev/include/suitesparse -O2
#cgo LDFLAGS: -L/opt/sundials-dev/lib -Wl,--disable-new-dtags -Wl,-rpath,/opt/sundials-dev/lib -lsundials_cvode -lsundials_sunlinsolklu -lsundials_sunmatrixsparse -lklu -lm

#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>
#include <cvode/cvode.h>
#include <nvector/nvector_serial.h>
#include <sunmatrix/sunmatrix_sparse.h>
#include <sunlinsol/sunlinsol_klu.h>

// Defined in callbacks.go: f and the CSC Jacobian of a Go network.System.
extern void cvcGoRHS(uintptr_t h, double t, double *y, double *f);
extern void cvcGoJacCSC(uintptr_t h, double t, double *y, double *data, sunindextype *colptrs, sunindextype *rowvals);

static int64_t ckl_now(void) {
	struct timespec ts;
	clock_gettime(CLOCK_MONOTONIC, &ts);
	return (int64_t)ts.tv_sec * 1000000000 + ts.tv_nsec;
}

// ckl_times is where the time of one solve goes, in nanoseconds.
typedef struct {
	int64_t rhs, jac, setup, solve;
	long nsetup, nsolve;
} ckl_times;

typedef struct {
	uintptr_t handle; // cgo.Handle of the Go system
	ckl_times tm;
} ckl_user;

static int ckl_f(sunrealtype t, N_Vector y, N_Vector ydot, void *ud) {
	ckl_user *u = ud;
	int64_t t0 = ckl_now();
	cvcGoRHS(u->handle, t, N_VGetArrayPointer(y), N_VGetArrayPointer(ydot));
	u->tm.rhs += ckl_now() - t0;
	return 0;
}

static int ckl_jac(sunrealtype t, N_Vector y, N_Vector fy, SUNMatrix J, void *ud,
                   N_Vector t1, N_Vector t2, N_Vector t3) {
	ckl_user *u = ud;
	int64_t t0 = ckl_now();
	cvcGoJacCSC(u->handle, t, N_VGetArrayPointer(y), SUNSparseMatrix_Data(J),
		SUNSparseMatrix_IndexPointers(J), SUNSparseMatrix_IndexValues(J));
	u->tm.jac += ckl_now() - t0;
	return 0;
}

// The linear solver's setup (KLU's factorization or refactorization of
// I − γJ) and solve (its triangular solves) are wrapped to time them. Each
// SUNLinearSolver has its own ops table; the originals are kept in the
// solver's struct, found from the linear solver through a small table.
typedef struct ckl_solver ckl_solver;
struct ckl_solver {
	SUNContext ctx;
	void *mem;
	N_Vector y;
	SUNMatrix A;
	SUNLinearSolver LS;
	ckl_user user;
	int n, started;
	int (*setup)(SUNLinearSolver, SUNMatrix);
	int (*solve)(SUNLinearSolver, SUNMatrix, N_Vector, N_Vector, sunrealtype);
};

enum { CKL_MAX = 256 };
static ckl_solver *ckl_table[CKL_MAX];

static ckl_solver *ckl_find(SUNLinearSolver LS) {
	for (int i = 0; i < CKL_MAX; i++) if (ckl_table[i] && ckl_table[i]->LS == LS) return ckl_table[i];
	return NULL;
}

static int ckl_setup(SUNLinearSolver LS, SUNMatrix A) {
	ckl_solver *s = ckl_find(LS);
	int64_t t0 = ckl_now();
	int r = s->setup(LS, A);
	s->user.tm.setup += ckl_now() - t0;
	s->user.tm.nsetup++;
	return r;
}

static int ckl_solve(SUNLinearSolver LS, SUNMatrix A, N_Vector x, N_Vector b, sunrealtype tol) {
	ckl_solver *s = ckl_find(LS);
	int64_t t0 = ckl_now();
	int r = s->solve(LS, A, x, b, tol);
	s->user.tm.solve += ckl_now() - t0;
	s->user.tm.nsolve++;
	return r;
}

static void ckl_free(ckl_solver *s) {
	if (!s) return;
	for (int i = 0; i < CKL_MAX; i++) if (ckl_table[i] == s) ckl_table[i] = NULL;
	if (s->mem) CVodeFree(&s->mem);
	if (s->LS) SUNLinSolFree(s->LS);
	if (s->A) SUNMatDestroy(s->A);
	if (s->y) N_VDestroy(s->y);
	if (s->ctx) SUNContext_Free(&s->ctx);
	free(s);
}

// ckl_new returns a CVODE solver with a CSC sparse matrix of nnz entries
// and SUNLinSol_KLU, or NULL.
static ckl_solver *ckl_new(int n, int nnz, uintptr_t handle) {
	ckl_solver *s = calloc(1, sizeof *s);
	if (!s) return NULL;
	int slot = -1;
	for (int i = 0; i < CKL_MAX; i++) if (!ckl_table[i]) { slot = i; break; }
	if (slot < 0) { free(s); return NULL; }
	ckl_table[slot] = s;
	s->n = n;
	s->user.handle = handle;
	if (SUNContext_Create(NULL, &s->ctx) != 0) goto fail;
	if (!(s->y = N_VNew_Serial(n, s->ctx))) goto fail;
	if (!(s->A = SUNSparseMatrix(n, n, nnz, CSC_MAT, s->ctx))) goto fail;
	if (!(s->LS = SUNLinSol_KLU(s->y, s->A, s->ctx))) goto fail;
	s->setup = s->LS->ops->setup;
	s->solve = s->LS->ops->solve;
	s->LS->ops->setup = ckl_setup;
	s->LS->ops->solve = ckl_solve;
	if (!(s->mem = CVodeCreate(CV_BDF, s->ctx))) goto fail;
	return s;
fail:
	ckl_free(s);
	return NULL;
}

typedef struct {
	long steps, errfails, solvefails, rhs, linrhs, jac, setups, nliters;
	int64_t wall;
	ckl_times tm;
} ckl_stats;

// ckl_solve_to integrates from (0, y0) to tend as cvc_solve does in
// cvode.go, with the KLU linear solver.
static int ckl_solve_to(ckl_solver *s, const double *y0, double tend, double rtol, double atol,
                        double *yout, double *tret, ckl_stats *st) {
	double *yy = N_VGetArrayPointer(s->y);
	int flag;
	memcpy(yy, y0, s->n * sizeof(double));
	if (!s->started) {
		if ((flag = CVodeInit(s->mem, ckl_f, 0.0, s->y)) != CV_SUCCESS) return flag;
		if ((flag = CVodeSetUserData(s->mem, &s->user)) != CV_SUCCESS) return flag;
		if ((flag = CVodeSetLinearSolver(s->mem, s->LS, s->A)) != CV_SUCCESS) return flag;
		if ((flag = CVodeSetJacFn(s->mem, ckl_jac)) != CV_SUCCESS) return flag;
		if ((flag = CVodeSetMaxNumSteps(s->mem, 1000000)) != CV_SUCCESS) return flag;
		s->started = 1;
	} else if ((flag = CVodeReInit(s->mem, 0.0, s->y)) != CV_SUCCESS) {
		return flag;
	}
	if ((flag = CVodeSStolerances(s->mem, rtol, atol)) != CV_SUCCESS) return flag;
	if ((flag = CVodeSetStopTime(s->mem, tend)) != CV_SUCCESS) return flag;
	memset(&s->user.tm, 0, sizeof s->user.tm);
	sunrealtype t = 0;
	int64_t t0 = ckl_now();
	flag = CVode(s->mem, tend, s->y, &t, CV_NORMAL);
	st->wall = ckl_now() - t0;
	st->tm = s->user.tm;
	*tret = t;
	memcpy(yout, yy, s->n * sizeof(double));
	CVodeGetNumSteps(s->mem, &st->steps);
	CVodeGetNumErrTestFails(s->mem, &st->errfails);
	CVodeGetNumStepSolveFails(s->mem, &st->solvefails);
	CVodeGetNumRhsEvals(s->mem, &st->rhs);
	CVodeGetNumLinRhsEvals(s->mem, &st->linrhs);
	CVodeGetNumJacEvals(s->mem, &st->jac);
	CVodeGetNumLinSolvSetups(s->mem, &st->setups);
	CVodeGetNumNonlinSolvIters(s->mem, &st->nliters);
	return flag;
}
*/
import "C"

import (
	"fmt"
	"runtime/cgo"
	"time"
	"unsafe"

	"kinetarium/network"
)

// Stages is where the time of one CVODE–KLU solve went, measured inside C
// around each call (clock_gettime, tens of nanoseconds a call).
type Stages struct {
	RHS, Jacobian       time.Duration // Go callbacks through cgo
	Factor, Solve       time.Duration // SUNLinSol_KLU setup (KLU factor or refactor) and solve
	Factors, Solves     int           // their counts
	Total               time.Duration // the whole CVode call
	NonlinearIterations int           // Newton iterations (one linear solve each)
}

// Other is the rest of Total: CVODE's step logic, the copy of J and the
// forming of I − γJ, vector operations.
func (s Stages) Other() time.Duration { return s.Total - s.RHS - s.Jacobian - s.Factor - s.Solve }

// KLU is CVODE with a compressed-sparse-column SUNMatrix and SUNLinSol_KLU
// (SuiteSparse), with f and the exact Jacobian from the compiled Go
// network.System through cgo. The Jacobian's pattern (every diagonal entry
// included, so that CVODE forms I − γJ in place) is the network's CSR
// pattern transposed once; each evaluation scatters the CSR values into
// CSC order. It is used by one goroutine at a time; Close frees it.
type KLU struct {
	p      Problem
	s      *C.ckl_solver
	handle cgo.Handle
	y      []float64
	last   Stages
}

// cscSystem is what the Go callbacks of the KLU variant see.
type cscSystem struct {
	goSystem
	colPtr, rowIdx []C.sunindextype
	perm           []int     // CSC position of each CSR entry
	vals           []float64 // CSR values
}

func newCSCSystem(sys *network.System) *cscSystem {
	n := sys.Dim()
	rowPtr, colIdx := sys.JacobianPattern()
	nnz := len(colIdx)
	c := &cscSystem{goSystem: goSystem{sys: sys, n: n}, colPtr: make([]C.sunindextype, n+1),
		rowIdx: make([]C.sunindextype, nnz), perm: make([]int, nnz), vals: make([]float64, nnz)}
	for _, j := range colIdx {
		c.colPtr[j+1]++
	}
	for j := 0; j < n; j++ {
		c.colPtr[j+1] += c.colPtr[j]
	}
	next := make([]C.sunindextype, n)
	copy(next, c.colPtr[:n])
	for i := 0; i < n; i++ {
		for k := rowPtr[i]; k < rowPtr[i+1]; k++ {
			j := colIdx[k]
			c.perm[k] = int(next[j])
			c.rowIdx[next[j]] = C.sunindextype(i)
			next[j]++
		}
	}
	return c
}

// NewKLU returns CVODE–KLU for p.
func NewKLU(p Problem) (*KLU, error) {
	sys := p.Sys.Clone()
	cs := newCSCSystem(sys)
	k := &KLU{p: p, y: make([]float64, sys.Dim())}
	k.handle = cgo.NewHandle(cs)
	k.s = C.ckl_new(C.int(sys.Dim()), C.int(len(cs.rowIdx)), C.uintptr_t(k.handle))
	if k.s == nil {
		k.Close()
		return nil, fmt.Errorf("cvodecmp: creating CVODE–KLU for %s failed", p.Name)
	}
	return k, nil
}

// Close frees the C memory of k.
func (k *KLU) Close() {
	if k.s != nil {
		C.ckl_free(k.s)
		k.s = nil
	}
	if k.handle != 0 {
		k.handle.Delete()
		k.handle = 0
	}
}

// Solve integrates k's problem from 0 to its end time at rtol and atol, as
// CVODE.Solve does.
func (k *KLU) Solve(rtol, atol float64) ([]float64, Work, time.Duration, error) {
	y0 := k.p.Sys.Initial()
	var st C.ckl_stats
	var t C.double
	start := time.Now()
	flag := C.ckl_solve_to(k.s, (*C.double)(unsafe.Pointer(&y0[0])), C.double(k.p.TEnd), C.double(rtol),
		C.double(atol), (*C.double)(unsafe.Pointer(&k.y[0])), &t, &st)
	wall := time.Since(start)
	w := Work{
		Steps:          int(st.steps),
		Rejected:       int(st.errfails + st.solvefails),
		RHSEvals:       int(st.rhs + st.linrhs),
		JacobianEvals:  int(st.jac),
		Factorizations: int(st.setups),
	}
	k.last = Stages{
		RHS: time.Duration(st.tm.rhs), Jacobian: time.Duration(st.tm.jac),
		Factor: time.Duration(st.tm.setup), Solve: time.Duration(st.tm.solve),
		Factors: int(st.tm.nsetup), Solves: int(st.tm.nsolve),
		Total: time.Duration(st.wall), NonlinearIterations: int(st.nliters),
	}
	if flag < 0 {
		return k.y, w, wall, fmt.Errorf("cvodecmp: CVODE–KLU failed on %s at t = %g with flag %d", k.p.Name, float64(t), int(flag))
	}
	if float64(t) != k.p.TEnd {
		return k.y, w, wall, fmt.Errorf("cvodecmp: CVODE–KLU stopped on %s at t = %g, not at %g", k.p.Name, float64(t), k.p.TEnd)
	}
	return k.y, w, wall, nil
}

// Stages returns where the time of the last Solve went.
func (k *KLU) Stages() Stages { return k.last }
