#!/usr/bin/env bash
# install-sundials.sh puts the C library SUNDIALS CVODE (headers and shared
# library) where the comparison harness internal/cvodecmp expects it:
#
#	$PREFIX/include/   cvode/, sundials/, nvector/, sunmatrix/, sunlinsol/ ...
#	$PREFIX/lib/libsundials_cvode.so   (link-time name for -lsundials_cvode)
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
#
# As root (or with password-less sudo) the runtime package is installed with
# apt-get. Otherwise it too is unpacked into $PREFIX/lib, which the harness
# finds through the run path (-Wl,-rpath) baked in by its cgo flags.
# Running the script again is harmless; it rebuilds $PREFIX from scratch.
set -euo pipefail

PREFIX=${1:-/opt/sundials-dev}
RUNTIME_PKG=libsundials-cvode6
DEV_PKG=libsundials-dev

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

# 1. Runtime library.
runtime_so=""
if dpkg-query -W -f='${Status}' "$RUNTIME_PKG" 2>/dev/null | grep -q "ok installed"; then
	echo "$RUNTIME_PKG is already installed."
elif [[ ${as_root[*]:-} != none ]]; then
	"${as_root[@]}" apt-get update -qq
	"${as_root[@]}" env DEBIAN_FRONTEND=noninteractive \
		apt-get install -y --no-install-recommends "$RUNTIME_PKG"
fi
if dpkg-query -W -f='${Status}' "$RUNTIME_PKG" 2>/dev/null | grep -q "ok installed"; then
	runtime_so=$(dpkg -L "$RUNTIME_PKG" | grep '/libsundials_cvode\.so\.[0-9]*$' | head -n1)
fi

# 2. Headers (and, without root, the runtime too) unpacked from the .deb files.
(cd "$work" && apt-get download "$DEV_PKG" 2>&1 | grep -v '^W: Download is performed unsandboxed' || true)
[[ -n $runtime_so ]] || (cd "$work" && apt-get download "$RUNTIME_PKG" 2>&1 | grep -v '^W: Download is performed unsandboxed' || true)
shopt -s nullglob
debs=("$work"/*.deb)
if [[ ${#debs[@]} -eq 0 ]]; then
	echo "install-sundials.sh: apt-get download $DEV_PKG failed (try apt-get update first)." >&2
	exit 1
fi
for deb in "${debs[@]}"; do
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
if [[ -n $runtime_so ]]; then
	ln -s "$runtime_so" "$stage/lib/libsundials_cvode.so"
else
	real=$(find "$work/root" -name 'libsundials_cvode.so.*.*' -type f | head -n1)
	if [[ -z $real ]]; then
		echo "install-sundials.sh: no libsundials_cvode.so in the downloaded $RUNTIME_PKG." >&2
		exit 1
	fi
	cp "$real" "$stage/lib/"
	base=$(basename "$real")        # libsundials_cvode.so.6.4.1
	soname=${base%.*.*}             # libsundials_cvode.so.6
	ln -s "$base" "$stage/lib/$soname"
	ln -s "$soname" "$stage/lib/libsundials_cvode.so"
fi
cp -a "$work/root/usr/share/doc/$DEV_PKG/copyright" "$stage/COPYRIGHT" 2>/dev/null || true

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
#include <sunlinsol/sunlinsol_dense.h>
int main(void) {
	SUNContext ctx;
	if (SUNContext_Create(NULL, &ctx) != 0) return 1;
	N_Vector y = N_VNew_Serial(3, ctx);
	SUNMatrix A = SUNDenseMatrix(3, 3, ctx);
	SUNLinearSolver LS = SUNLinSol_Dense(y, A, ctx);
	void *mem = CVodeCreate(CV_BDF, ctx);
	int ok = y && A && LS && mem;
	printf("SUNDIALS %s (double precision %d): CVODE, dense matrix and solver %s\n",
	       SUNDIALS_VERSION, SUNDIALS_DOUBLE_PRECISION, ok ? "ok" : "FAILED");
	CVodeFree(&mem); SUNLinSolFree(LS); SUNMatDestroy(A); N_VDestroy(y);
	SUNContext_Free(&ctx);
	return ok ? 0 : 1;
}
EOF
	cc -o "$work/check" "$work/check.c" -I"$PREFIX/include" -L"$PREFIX/lib" \
		-Wl,-rpath,"$PREFIX/lib" -lsundials_cvode -lm
	"$work/check"
fi
echo "CVODE headers in $PREFIX/include, library in $PREFIX/lib."
echo "Run the comparison with: go run -tags sundials ./internal/cvodecmp/cmd"
