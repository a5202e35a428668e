#!/usr/bin/env python3
"""Builds and runs the examples against an installed libthrustmap and checks
every command they print against the command line's (thrustmap lever --json)
for the same levers, counts and conditions: the same TLA, value, gate and
flags, bit for bit. .ci/run runs it.

    python3 examples/check.py OUTDIR        (OUTDIR of bash cmd/libthrustmap/build.sh OUTDIR)

Simulation only: not certified, never for setting thrust on a real aircraft.
"""

import json
import os
import re
import subprocess
import sys
import tempfile

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))

# thrustmap.h's flag bits by the names the command line's JSON gives them.
FLAG_CLAMPED = 1 << 0
FLAGS = {"raised": 1 << 1, "limited": 1 << 2, "interlock": 1 << 3, "fallback": 1 << 4}
CLAMPED = {"altitude": 1 << 8, "temperature": 1 << 9, "mach": 1 << 10, "raw": 1 << 11, "device": 1 << 12,
           "lever": 1 << 13}

LINE = re.compile(r"^frame (\d+) lever (-?\d+) raw (-?\d+) tla (\S+) gate (\S+) value (\S+) flags (\S+)$")
CONDITIONS = re.compile(r"^conditions: alt_ft (\S+) oat_c (\S+) mach (\S+) on_ground ([01]) assumed_c (\S+) bleeds (\S+)$")


def run(args, **kw):
    p = subprocess.run(args, capture_output=True, text=True, **kw)
    if p.returncode != 0:
        sys.exit(f"{' '.join(args)}: exit {p.returncode}\n{p.stdout}{p.stderr}")
    return p.stdout


def parse(name, out):
    """The conditions line and the exact command lines of an example's -x output."""
    cond, rows = None, []
    for line in out.splitlines():
        if m := CONDITIONS.match(line):
            cond = m.groups()
        elif m := LINE.match(line):
            frame, lever, raw, tla, gate, value, flags = m.groups()
            rows.append((int(frame), int(lever), int(raw), float(tla), None if gate == "-" else gate, float(value),
                         int(flags, 0)))
    if cond is None or not rows:
        sys.exit(f"{name}: no conditions line or no commands in its output:\n{out}")
    return cond, rows


def cli_rows(thrustmap, cond, rows):
    """What thrustmap lever --json gives for the same levers, counts and conditions."""
    alt, oat, mach, ground, assumed, bleeds = cond
    levers = sorted({r[1] for r in rows})
    args = [thrustmap, "lever", "-p", "demo", "-c", "demo", "--alt", alt, "--oat", oat, "--mach", mach,
            "--assumed", assumed, "--json"]
    if ground == "1":
        args.append("--on-ground")
    if bleeds != "-":
        for b in bleeds.split(","):
            args += ["--bleed", b]
    for lever in levers:
        args += ["--lever", str(lever), "--raw", ",".join(str(r[2]) for r in rows if r[1] == lever)]
    got = json.loads(run(args))
    # The command line lists the levers of each sample together, in --lever order.
    want = sorted(rows, key=lambda r: (r[0], levers.index(r[1])))
    return want, got


def compare(name, want, got):
    if len(want) != len(got):
        sys.exit(f"{name}: {len(want)} commands, the command line gave {len(got)}")
    bad = 0
    for (frame, lever, raw, tla, gate, value, flags), j in zip(want, got):
        cli_flags = sum(FLAGS[f] for f in j["flags"]) | sum(CLAMPED[c] for c in j["clamped"])
        if j["clamped"]:
            cli_flags |= FLAG_CLAMPED
        if (j["lever"], j["raw"]) != (lever, raw) or j["tla_deg"] != tla or j["value"] != value \
                or j["gate"] != gate or cli_flags != flags:
            bad += 1
            print(f"{name}: frame {frame} lever {lever} raw {raw}: TLA {tla!r} gate {gate} value {value!r} "
                  f"flags {flags:#x}; command line: TLA {j['tla_deg']!r} gate {j['gate']} value {j['value']!r} "
                  f"flags {cli_flags:#x}", file=sys.stderr)
    if bad:
        sys.exit(f"{name}: {bad} of {len(want)} commands differ from the command line's")
    print(f"{name}: {len(want)} commands equal the command line's")


def main(argv):
    if len(argv) != 1:
        sys.exit("usage: python3 examples/check.py OUTDIR")
    lib = os.path.abspath(argv[0])
    with tempfile.TemporaryDirectory() as tmp:
        thrustmap = os.path.join(tmp, "thrustmap")
        run(["go", "build", "-o", thrustmap, "./cmd/thrustmap"], cwd=ROOT)
        run(["make", "-s", "-C", os.path.join(ROOT, "examples", "c"), f"THRUSTMAP={lib}", f"BUILD={tmp}"])
        examples = {
            "examples/c/frame_loop": [os.path.join(tmp, "frame_loop"), "-x"],
            "examples/python/rig.py": [sys.executable, os.path.join(ROOT, "examples", "python", "rig.py"), "-x", lib],
        }
        for name, args in examples.items():
            run([a for a in args if a != "-x"])  # the human-readable output works too
            cond, rows = parse(name, run(args))
            want, got = cli_rows(thrustmap, cond, rows)
            compare(name, want, got)


if __name__ == "__main__":
    main(sys.argv[1:])
