#!/usr/bin/env bash
# Builds thrustmap's C library into an install tree that a client compiles
# against with nothing but its own folders:
#
#   bash cmd/libthrustmap/build.sh [OUTDIR]        (default: build/libthrustmap)
#   cc -I OUTDIR/include -o plugin plugin.c -L OUTDIR/lib -lthrustmap -Wl,-rpath,OUTDIR/lib
#
# OUTDIR receives:
#   include/thrustmap.h          the one header a client includes (the
#                                interface, documented in it)
#   lib/libthrustmap.so.2        the library; its soname is libthrustmap.so.N,
#                                N = THRUSTMAP_ABI_VERSION, so a program linked
#                                against it loads this file at run time
#   lib/libthrustmap.so          a symlink to libthrustmap.so.2: what
#                                -lthrustmap finds when linking
#   lib/pkgconfig/thrustmap.pc   for pkg-config; its paths are relative to the
#                                .pc file, so the tree can be moved
#
# At run time the loader must find libthrustmap.so.2: link with
# -Wl,-rpath,OUTDIR/lib, copy it beside the plugin with an rpath of $ORIGIN,
# or set LD_LIBRARY_PATH=OUTDIR/lib.
#
# For ELF systems (Linux, the BSDs); build-windows.sh builds the same layout
# with the Windows DLL. Uses go and a C compiler (CC, default cc).
#
# Simulation only: not certified, never for setting thrust on a real aircraft.
set -euo pipefail

pkg_dir="$(cd "$(dirname "$0")" && pwd)"
root="$(cd "$pkg_dir/../.." && pwd)"
out="${1:-$root/build/libthrustmap}"
cc="${CC:-cc}"

case "$(uname -s)" in
  Darwin | MINGW* | MSYS* | CYGWIN*)
    echo "build.sh builds an ELF shared library (Linux, BSD); on Windows use build-windows.sh" >&2
    exit 2 ;;
esac

abi="$(sed -n 's/^#define THRUSTMAP_ABI_VERSION \([0-9][0-9]*\)$/\1/p' "$pkg_dir/thrustmap.h")"
if [ -z "$abi" ]; then
  echo "build.sh: no '#define THRUSTMAP_ABI_VERSION N' line in $pkg_dir/thrustmap.h" >&2
  exit 1
fi
soname="libthrustmap.so.$abi"

mkdir -p "$out"
out="$(cd "$out" && pwd)"
work="$(mktemp -d)"
trap 'rm -rf "$work"' EXIT

# cgo writes a header of its own beside the library (libthrustmap.h, named
# after it). It is not installed: it only repeats thrustmap.h's declarations.
(cd "$root" && CGO_ENABLED=1 CC="$cc" go build -buildmode=c-shared \
  -ldflags "-extldflags -Wl,-soname,$soname" -o "$work/libthrustmap.so" ./cmd/libthrustmap)

# The generated header includes thrustmap.h (from the package's cgo preamble)
# and then declares every exported function again: it compiles only when the
# two sets of declarations agree.
"$cc" -fsyntax-only -std=c11 -Wall -Wextra -Werror -I "$pkg_dir" "$work/libthrustmap.h"

mkdir -p "$out/include" "$out/lib/pkgconfig"
cp "$pkg_dir/thrustmap.h" "$out/include/thrustmap.h"
rm -f "$out/lib/$soname" "$out/lib/libthrustmap.so"
mv "$work/libthrustmap.so" "$out/lib/$soname"
ln -s "$soname" "$out/lib/libthrustmap.so"
. "$pkg_dir/pkgconfig.sh"
write_pkgconfig "$out" "$abi"

echo "libthrustmap (interface version $abi) in $out:"
(cd "$out" && ls -l include/thrustmap.h lib/libthrustmap.so lib/"$soname" lib/pkgconfig/thrustmap.pc)
