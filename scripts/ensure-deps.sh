#!/usr/bin/env bash
# ensure-deps.sh installs the Debian/Ubuntu packages Kinetarium needs when
# they are missing: the C compiler and OpenGL/X11 headers that Fyne's cgo
# build uses, and (with --test) Xvfb for the window check, poppler-utils
# and Chromium for the checks of exported PDF and SVG figures, the
# DejaVu fonts those checks show missing fonts in, libSBML's Python
# binding (python3-sbml5) for the consistency check of SBML exports, and
# python3-numpy for the eigenvalue check against numpy (app/analyse).
# As root it uses apt-get, otherwise sudo; when neither works it prints the
# exact command to run and exits 1.
set -euo pipefail

pkgs=(gcc pkg-config libgl1-mesa-dev xorg-dev)
if [[ "${1:-}" == "--test" ]]; then
	pkgs+=(xvfb xauth poppler-utils chromium fonts-dejavu-core python3-sbml5 python3-numpy)
fi

missing=()
for p in "${pkgs[@]}"; do
	if ! dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "ok installed"; then
		missing+=("$p")
	fi
done
[[ ${#missing[@]} -eq 0 ]] && exit 0

if ! command -v apt-get >/dev/null 2>&1; then
	echo "Kinetarium needs these system packages: ${missing[*]}" >&2
	echo "This is not a Debian/Ubuntu system; see README.md (Set-up on other systems)." >&2
	exit 1
fi
cmd=(apt-get install -y --no-install-recommends "${missing[@]}")
if [[ $(id -u) -eq 0 ]]; then
	apt-get update -qq
	DEBIAN_FRONTEND=noninteractive "${cmd[@]}"
elif command -v sudo >/dev/null 2>&1 && sudo -n true 2>/dev/null; then
	sudo apt-get update -qq
	sudo DEBIAN_FRONTEND=noninteractive "${cmd[@]}"
else
	echo "Kinetarium needs these system packages, which are missing: ${missing[*]}" >&2
	echo "Install them with:" >&2
	echo "  sudo apt-get update && sudo ${cmd[*]}" >&2
	exit 1
fi
