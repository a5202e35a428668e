#!/usr/bin/env bash
# Cross-builds thrustmap's C ABI as a Windows DLL (amd64) with MinGW-w64,
# installing the Debian package gcc-mingw-w64-x86-64 when the compiler is
# missing, then proves the DLL links by building the C test program against it.
#
#   cmd/libthrustmap/build-windows.sh [OUTDIR]      (default: build/windows-amd64)
#
# OUTDIR receives:
#   thrustmap.dll        the library
#   libthrustmap.h       the header cgo generated (renamed: cgo names it after
#                        the DLL, thrustmap.h, which would hide the next file)
#   thrustmap.h          the documented interface; libthrustmap.h includes it
#   thrustmap.def        the export list
#   thrustmap.lib        an import library for MSVC and MinGW (from the .def)
#   thrustmap_test.exe   the C test linked against the DLL (a link check; it
#                        needs a Windows host and an expected-values file to run)
#
# Simulation only: not certified, never for setting thrust on a real aircraft.
set -euo pipefail

pkg_dir="$(cd "$(dirname "$0")" && pwd)"
root="$(cd "$pkg_dir/../.." && pwd)"
out="${1:-$root/build/windows-amd64}"
cc=x86_64-w64-mingw32-gcc
dlltool=x86_64-w64-mingw32-dlltool

if ! command -v "$cc" >/dev/null 2>&1; then
  echo "== $cc not found: installing gcc-mingw-w64-x86-64"
  sudo=""
  if [ "$(id -u)" -ne 0 ]; then sudo="sudo"; fi
  $sudo apt-get update -qq
  DEBIAN_FRONTEND=noninteractive $sudo apt-get install -y -qq gcc-mingw-w64-x86-64
fi

mkdir -p "$out"
out="$(cd "$out" && pwd)"
work="$(mktemp -d)"
trap 'rm -rf "$work"' EXIT

echo "== go build -buildmode=c-shared (windows/amd64)"
start=$(date +%s)
(cd "$root" && GOOS=windows GOARCH=amd64 CGO_ENABLED=1 CC="$cc" \
  go build -buildmode=c-shared -o "$work/thrustmap.dll" ./cmd/libthrustmap)
mv "$work/thrustmap.dll" "$out/thrustmap.dll"
mv "$work/thrustmap.h" "$out/libthrustmap.h"
cp "$pkg_dir/thrustmap.h" "$out/thrustmap.h"

echo "== export list and import library"
{
  echo "LIBRARY thrustmap.dll"
  echo "EXPORTS"
  sed -n 's/^extern [^(]*[ *]\(thrustmap_[a-z_]*\)(.*/    \1/p' "$out/libthrustmap.h"
} > "$out/thrustmap.def"
"$dlltool" -d "$out/thrustmap.def" -D thrustmap.dll -l "$out/thrustmap.lib"
exports="$(x86_64-w64-mingw32-objdump -p "$out/thrustmap.dll")"
missing=0
for fn in $(sed -n 's/^    \(thrustmap_[a-z_]*\)$/\1/p' "$out/thrustmap.def"); do
  if ! grep -qw "$fn" <<<"$exports"; then
    echo "thrustmap.dll does not export $fn"; missing=1
  fi
done
[ "$missing" -eq 0 ]

echo "== link check: the C test against the import library"
"$cc" -Wall -Wextra -Werror -std=c11 -pthread -I "$out" -o "$out/thrustmap_test.exe" \
  "$pkg_dir/ctest/thrustmap_test.c" -L "$out" -l:thrustmap.lib

echo "built in $(( $(date +%s) - start ))s:"
ls -l "$out"
