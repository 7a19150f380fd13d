#!/usr/bin/env bash
# install-sundials.sh puts the C library SUNDIALS CVODE (headers and shared
# libraries), with its sparse matrix and its KLU sparse direct solver
# (SuiteSparse), where the comparison harness internal/cvodecmp expects them:
#
#	$PREFIX/include/   cvode/, sundials/, nvector/, sunmatrix/, sunlinsol/ ...
#	$PREFIX/include/suitesparse/   klu.h and the headers it includes
#	$PREFIX/lib/libsundials_cvode.so   (link-time name for -lsundials_cvode)
#	$PREFIX/lib/libsundials_sunmatrixsparse.so, libsundials_sunlinsolklu.so,
#	$PREFIX/lib/libklu.so
#
# PREFIX is /opt/sundials-dev unless given as the first argument; the cgo
# flags in internal/cvodecmp/cvode.go name /opt/sundials-dev, so another
# PREFIX needs CGO_CFLAGS/CGO_LDFLAGS set to match. The harness is built only
# with `go build -tags sundials`, so nothing else needs this.
#
# Why not `apt-get install libsundials-dev`: on Debian 12 (bookworm) that
# package depends on petsc-dev, libhypre-dev, mpi-default-dev, gfortran and
# cmake, hundreds of megabytes. What the harness really needs is small:
#
#   - runtime: the Debian package libsundials-cvode6 (about 150 kB; depends
#     only on libc6 and libgfortran5). Its libsundials_cvode.so.6 already
#     carries the serial N_Vector, the dense SUNMatrix, the dense SUNLinSol
#     and the Newton SUNNonlinSol, so none of libsundials-nvecserial6,
#     libsundials-sunmatrix4 or libsundials-sunlinsol3 is needed (the last
#     one would pull in petsc and MPI). The library itself links to libm and
#     libc only.
#   - headers: taken from libsundials-dev with `apt-get download` and
#     `dpkg -x` (unpacked, not installed, so its dependencies never come).
#   - the KLU variant: the sparse SUNMatrix from libsundials-sunmatrix4
#     (depends on libc6 and libgfortran5 only) and KLU from libklu1 (with
#     libamd2, libbtf1, libcolamd2 and libsuitesparseconfig5, together under
#     1 MB) are installed; SUNLinSol_KLU itself is in libsundials-sunlinsol3,
#     which depends on PETSc and MPI, so only its libsundials_sunlinsolklu
#     is unpacked from the .deb; klu.h comes unpacked from libsuitesparse-dev
#     (whose dependencies, CHOLMOD, BLAS and LAPACK among them, never come).
#
# As root (or with password-less sudo) the runtime package is installed with
# apt-get. Otherwise it too is unpacked into $PREFIX/lib, which the harness
# finds through the run path (-Wl,-rpath) baked in by its cgo flags.
# Running the script again is harmless; it rebuilds $PREFIX from scratch.
set -euo pipefail

PREFIX=${1:-/opt/sundials-dev}
# Installed with apt-get as root, unpacked into $PREFIX/lib otherwise.
RUNTIME_PKGS=(libsundials-cvode6 libsundials-sunmatrix4 libklu1 libamd2 libbtf1 libcolamd2 libsuitesparseconfig5)
# Never installed: headers, and the one library of libsundials-sunlinsol3.
UNPACK_PKGS=(libsundials-dev libsuitesparse-dev libsundials-sunlinsol3)
# Link-time names the harness asks for (-l...), with the package holding each.
LIBS=(sundials_cvode:libsundials-cvode6 sundials_sunmatrixsparse:libsundials-sunmatrix4
	klu:libklu1 sundials_sunlinsolklu:libsundials-sunlinsol3)

if ! command -v apt-get >/dev/null 2>&1 || ! command -v dpkg >/dev/null 2>&1; then
	echo "install-sundials.sh: needs a Debian-like system (apt-get, dpkg)." >&2
	exit 1
fi

as_root=()
if [[ $(id -u) -ne 0 ]]; then
	if command -v sudo >/dev/null 2>&1 && sudo -n true 2>/dev/null; then
		as_root=(sudo)
	else
		as_root=(none)
	fi
fi

work=$(mktemp -d)
chmod 755 "$work" # apt-get download runs as _apt where it can
trap 'rm -rf "$work"' EXIT

installed() { dpkg-query -W -f='${Status}' "$1" 2>/dev/null | grep -q "ok installed"; }

# 1. Runtime libraries.
missing=()
for p in "${RUNTIME_PKGS[@]}"; do installed "$p" || missing+=("$p"); done
if [[ ${#missing[@]} -gt 0 && ${as_root[*]:-} != none ]]; then
	"${as_root[@]}" apt-get update -qq
	"${as_root[@]}" env DEBIAN_FRONTEND=noninteractive \
		apt-get install -y --no-install-recommends "${missing[@]}"
	missing=()
	for p in "${RUNTIME_PKGS[@]}"; do installed "$p" || missing+=("$p"); done
fi

# 2. Headers, SUNLinSol_KLU and (without root) the runtime libraries,
# unpacked from the .deb files.
(cd "$work" && apt-get download "${UNPACK_PKGS[@]}" ${missing[@]+"${missing[@]}"} 2>&1 |
	grep -v '^W: Download is performed unsandboxed' || true)
for p in "${UNPACK_PKGS[@]}" ${missing[@]+"${missing[@]}"}; do
	deb=$(ls "$work/${p}"_*.deb 2>/dev/null | head -n1 || true)
	if [[ -z $deb ]]; then
		echo "install-sundials.sh: apt-get download $p failed (try apt-get update first)." >&2
		exit 1
	fi
	dpkg -x "$deb" "$work/root"
done

if ! mkdir -p "$PREFIX" 2>/dev/null || [[ ! -w $PREFIX ]]; then
	if [[ ${as_root[*]:-} == none ]]; then
		echo "install-sundials.sh: cannot write $PREFIX; run as root or give a writable folder as the first argument." >&2
		exit 1
	fi
	"${as_root[@]}" mkdir -p "$PREFIX"
fi
stage="$work/stage"
mkdir -p "$stage/lib"
cp -a "$work/root/usr/include" "$stage/include"
# Of SuiteSparse, only KLU's header and the ones it includes.
rm -rf "$stage/include/suitesparse"
mkdir -p "$stage/include/suitesparse"
for h in klu.h amd.h btf.h colamd.h SuiteSparse_config.h; do
	cp "$work/root/usr/include/suitesparse/$h" "$stage/include/suitesparse/"
done

# link NAME PKG makes $stage/lib/libNAME.so point at the installed library
# of PKG, or at a copy of the one unpacked from PKG's .deb (with its soname).
link() {
	local name=$1 pkg=$2 real="" base soname
	if installed "$pkg"; then
		real=$(dpkg -L "$pkg" | grep "/lib$name\.so\.[0-9.]*$" | sort | head -n1 || true)
	fi
	if [[ -n $real ]]; then
		ln -s "$real" "$stage/lib/lib$name.so"
		return
	fi
	real=$(find "$work/root" -name "lib$name.so.*" -type f | sort | head -n1)
	if [[ -z $real ]]; then
		echo "install-sundials.sh: no lib$name.so in the downloaded $pkg." >&2
		exit 1
	fi
	cp "$real" "$stage/lib/"
	base=$(basename "$real")
	soname=$(objdump -p "$real" 2>/dev/null | awk '/SONAME/ {print $2}' || true)
	if [[ -n $soname && $soname != "$base" ]]; then ln -s "$base" "$stage/lib/$soname"; fi
	ln -s "$base" "$stage/lib/lib$name.so"
}
for l in "${LIBS[@]}"; do link "${l%%:*}" "${l#*:}"; done
# Without root, KLU's own dependencies were unpacked too: put them beside it
# with their sonames, so that the run path finds them.
for p in ${missing[@]+"${missing[@]}"}; do
	case $p in libamd2 | libbtf1 | libcolamd2 | libsuitesparseconfig5)
		while IFS= read -r f; do
			cp "$f" "$stage/lib/"
			so=$(objdump -p "$f" 2>/dev/null | awk '/SONAME/ {print $2}' || true)
			if [[ -n $so && ! -e $stage/lib/$so ]]; then ln -s "$(basename "$f")" "$stage/lib/$so"; fi
		done < <(find "$work/root" -name "${p%[0-9]}.so.*" -type f)
		;;
	esac
done
cp -a "$work/root/usr/share/doc/libsundials-dev/copyright" "$stage/COPYRIGHT" 2>/dev/null || true
cp -a "$work/root/usr/share/doc/libsuitesparse-dev/copyright" "$stage/COPYRIGHT-SuiteSparse" 2>/dev/null || true

install_dir() {
	rm -rf "$PREFIX/include" "$PREFIX/lib"
	cp -a "$stage/." "$PREFIX/"
}
if [[ -w $PREFIX ]]; then install_dir; else
	"${as_root[@]}" bash -c "$(declare -f install_dir); PREFIX='$PREFIX' stage='$stage' install_dir"
fi

# 3. Check: compile and run a program against what was put in place.
if command -v cc >/dev/null 2>&1; then
	cat >"$work/check.c" <<'EOF'
#include <stdio.h>
#include <sundials/sundials_config.h>
#include <sundials/sundials_context.h>
#include <cvode/cvode.h>
#include <nvector/nvector_serial.h>
#include <sunmatrix/sunmatrix_dense.h>
#include <sunmatrix/sunmatrix_sparse.h>
#include <sunlinsol/sunlinsol_dense.h>
#include <sunlinsol/sunlinsol_klu.h>
int main(void) {
	SUNContext ctx;
	if (SUNContext_Create(NULL, &ctx) != 0) return 1;
	N_Vector y = N_VNew_Serial(3, ctx);
	SUNMatrix A = SUNDenseMatrix(3, 3, ctx);
	SUNLinearSolver LS = SUNLinSol_Dense(y, A, ctx);
	SUNMatrix S = SUNSparseMatrix(3, 3, 3, CSC_MAT, ctx);
	SUNLinearSolver K = SUNLinSol_KLU(y, S, ctx);
	void *mem = CVodeCreate(CV_BDF, ctx);
	int ok = y && A && LS && S && K && mem;
	printf("SUNDIALS %s (double precision %d): CVODE, dense and sparse (KLU) solvers %s\n",
	       SUNDIALS_VERSION, SUNDIALS_DOUBLE_PRECISION, ok ? "ok" : "FAILED");
	CVodeFree(&mem); SUNLinSolFree(K); SUNMatDestroy(S); SUNLinSolFree(LS); SUNMatDestroy(A);
	N_VDestroy(y); SUNContext_Free(&ctx);
	return ok ? 0 : 1;
}
EOF
	cc -o "$work/check" "$work/check.c" -I"$PREFIX/include" -I"$PREFIX/include/suitesparse" \
		-L"$PREFIX/lib" -Wl,--disable-new-dtags -Wl,-rpath,"$PREFIX/lib" \
		-lsundials_cvode -lsundials_sunlinsolklu -lsundials_sunmatrixsparse -lklu -lm
	"$work/check"
fi
echo "CVODE (dense and KLU) headers in $PREFIX/include, libraries in $PREFIX/lib."
echo "Run the comparison with: make cvode-compare"
