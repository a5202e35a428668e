#!/usr/bin/env bash
# Cross-builds thrustmap's C library as a Windows DLL (amd64) with MinGW-w64,
# installing the Debian package gcc-mingw-w64-x86-64 when the compiler is
# missing, into the same layout as build.sh, then proves a client links with
# the same compile line by building the C test program against it.
#
#   bash cmd/libthrustmap/build-windows.sh [OUTDIR]     (default: build/windows-amd64)
#   x86_64-w64-mingw32-gcc -I OUTDIR/include -o plugin.exe plugin.c -L OUTDIR/lib -lthrustmap
#
# OUTDIR receives:
#   include/thrustmap.h          the one header a client includes
#   bin/thrustmap.dll            the library: put it beside the program (or on
#                                PATH) to run it
#   lib/libthrustmap.dll.a       the import library MinGW's -lthrustmap finds
#   lib/thrustmap.lib            the same import library, named for MSVC
#   lib/thrustmap.def            the export list
#   lib/pkgconfig/thrustmap.pc   for pkg-config (paths relative to the file)
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

abi="$(sed -n 's/^#define THRUSTMAP_ABI_VERSION \([0-9][0-9]*\)$/\1/p' "$pkg_dir/thrustmap.h")"
if [ -z "$abi" ]; then
  echo "build-windows.sh: no '#define THRUSTMAP_ABI_VERSION N' line in $pkg_dir/thrustmap.h" >&2
  exit 1
fi

mkdir -p "$out"
out="$(cd "$out" && pwd)"
work="$(mktemp -d)"
trap 'rm -rf "$work"' EXIT

echo "== go build -buildmode=c-shared (windows/amd64)"
start=$(date +%s)
(cd "$root" && GOOS=windows GOARCH=amd64 CGO_ENABLED=1 CC="$cc" \
  go build -buildmode=c-shared -o "$work/thrustmap.dll" ./cmd/libthrustmap)
# cgo names its header after the DLL, thrustmap.h; it is not installed (it
# repeats the documented header's declarations). Renamed so that its
# #include "thrustmap.h" finds the documented one, it compiles only when the
# two agree.
mv "$work/thrustmap.h" "$work/cgo-exports.h"
"$cc" -fsyntax-only -std=c11 -Wall -Wextra -Werror -I "$pkg_dir" "$work/cgo-exports.h"

mkdir -p "$out/include" "$out/bin" "$out/lib/pkgconfig"
cp "$pkg_dir/thrustmap.h" "$out/include/thrustmap.h"
mv "$work/thrustmap.dll" "$out/bin/thrustmap.dll"

echo "== export list and import library"
{
  echo "LIBRARY thrustmap.dll"
  echo "EXPORTS"
  sed -n 's/^extern [^(]*[ *]\(thrustmap_[a-z_0-9]*\)(.*/    \1/p' "$work/cgo-exports.h"
} > "$out/lib/thrustmap.def"
"$dlltool" -d "$out/lib/thrustmap.def" -D thrustmap.dll -l "$out/lib/libthrustmap.dll.a"
cp "$out/lib/libthrustmap.dll.a" "$out/lib/thrustmap.lib"
exports="$(x86_64-w64-mingw32-objdump -p "$out/bin/thrustmap.dll")"
missing=0
for fn in $(sed -n 's/^    \(thrustmap_[a-z_0-9]*\)$/\1/p' "$out/lib/thrustmap.def"); do
  if ! grep -qw "$fn" <<<"$exports"; then
    echo "thrustmap.dll does not export $fn"; missing=1
  fi
done
[ "$missing" -eq 0 ]

. "$pkg_dir/pkgconfig.sh"
write_pkgconfig "$out" "$abi"

echo "== link check: the C test with only the installed include and lib folders"
"$cc" -Wall -Wextra -Werror -std=c11 -pthread -I "$out/include" -o "$work/thrustmap_test.exe" \
  "$pkg_dir/ctest/thrustmap_test.c" -L "$out/lib" -lthrustmap

echo "built in $(( $(date +%s) - start ))s (interface version $abi):"
(cd "$out" && ls -l include bin lib lib/pkgconfig)
