#!/usr/bin/env bash
# Installs the system (Debian/Ubuntu) packages that poroplane's pictures and tests need, when
# they are missing. Called by `make demo` (pictures) and `make test` (pictures and the report
# test); .ci/run only calls `make test`.
#
#   tools/system-packages.sh pictures   Mesa's EGL and software OpenGL: pyvista (VTK) renders
#                                       the section pictures off screen, with no display
#   tools/system-packages.sh test       the above, and Chromium: tests/test_report.py opens the
#                                       HTML report in headless Chromium
#
# Uses apt-get as root, or through sudo when that works without a password prompt. When it
# cannot install, it stops with one message naming the packages and the command to run.
set -euo pipefail

want=(libegl1 libegl-mesa0 libgl1-mesa-dri)
case "${1:-test}" in
    pictures) ;;
    test) want+=(chromium) ;;
    *) echo "usage: $0 [pictures|test]" >&2; exit 2 ;;
esac

installed() {
    # A package counts as present when dpkg has it installed; Chromium also when a browser of
    # that name is already on PATH (installed some other way).
    if [ "$1" = chromium ] && command -v chromium >/dev/null 2>&1; then return 0; fi
    dpkg-query -W -f='${db:Status-Status}' "$1" 2>/dev/null | grep -qx installed
}

need=()
for pkg in "${want[@]}"; do
    installed "$pkg" || need+=("$pkg")
done
[ "${#need[@]}" -eq 0 ] && exit 0

cannot() {
    echo "poroplane needs these system packages: ${need[*]}" >&2
    echo "$1 Install them with:  sudo apt-get install -y ${need[*]}" >&2
    exit 1
}

command -v apt-get >/dev/null 2>&1 || cannot "This machine has no apt-get (not Debian/Ubuntu)."
sudo=()
if [ "$(id -u)" -ne 0 ]; then
    if command -v sudo >/dev/null 2>&1 && sudo -n true 2>/dev/null; then
        sudo=(sudo -n)
    else
        cannot "Installing them needs root, and sudo is not available without a password."
    fi
fi

echo "installing system packages: ${need[*]}"
"${sudo[@]}" apt-get update -qq || cannot "apt-get update failed."
DEBIAN_FRONTEND=noninteractive "${sudo[@]}" apt-get install -y -qq "${need[@]}" \
    || cannot "apt-get install failed."
