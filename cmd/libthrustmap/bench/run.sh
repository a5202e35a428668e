#!/usr/bin/env bash
# Measures libthrustmap per frame as a simulator plugin sees it: builds the
# library (build.sh) unless given an install tree, writes the benchmark's
# inputs (go run ./cmd/libthrustmap/bench/benchdata) and the generated C of
# the same profile and levers (thrustmap export c), compiles bench.c with
# -O2 against the installed layout and runs it once. Prints ns per lever per frame; the
# figures depend on the machine and are never asserted, but the run fails
# when the batch call, single calls and the C floor disagree.
#
#   bash cmd/libthrustmap/bench/run.sh [LIBDIR] [REPEATS]
#
# LIBDIR is an OUTDIR of build.sh (default: a fresh build in a temporary
# directory).
#
# Simulation only: not certified, never for setting thrust on a real aircraft.
set -euo pipefail

bench_dir="$(cd "$(dirname "$0")" && pwd)"
root="$(cd "$bench_dir/../../.." && pwd)"
cc="${CC:-cc}"
work="$(mktemp -d)"
trap 'rm -rf "$work"' EXIT

lib="${1:-}"
if [ -z "$lib" ]; then
  lib="$work/lib"
  bash "$root/cmd/libthrustmap/build.sh" "$lib" > /dev/null
fi
lib="$(cd "$lib" && pwd)"

(cd "$root" && go run ./cmd/libthrustmap/bench/benchdata -o "$work")

# The generated C of the same profile and levers, compiled on its own as a
# plugin would compile it, its declarations included by bench.c.
(cd "$root" && go run ./cmd/thrustmap export c -p demo -c "$work/levers4.toml" --prefix gen_ -o "$work/gen.c") > /dev/null
"$cc" -std=c99 -O2 -Wall -Wextra -Werror -c -o "$work/gen.o" "$work/gen.c"
"$cc" -std=c11 -O2 -Wall -Wextra -Werror -I "$lib/include" -I "$work" -o "$work/bench" "$bench_dir/bench.c" "$work/gen.o" \
  -L "$lib/lib" -lthrustmap -Wl,-rpath,"$lib/lib" -lm
"$work/bench" "$work/levers4.toml" "$work/floor.txt" ${2:+"$2"}
