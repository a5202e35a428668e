#!/usr/bin/env python3
"""A test rig's loop through libthrustmap with ctypes: the scripted takeoff of
examples/c/frame_loop.c (same conditions, same lever counts, same output),
then the takeoff target with the assumed-temperature method's work.

    python3 examples/python/rig.py [-x] LIBRARY

LIBRARY is the shared library (OUTDIR/lib/libthrustmap.so.2 from
bash cmd/libthrustmap/build.sh OUTDIR) or its OUTDIR. -x prints every command
with exact values (examples/check.py compares them with the command line's).

Simulation only: not certified, never for setting thrust on a real aircraft.
"""

import os
import sys

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import libthrustmap as tm  # noqa: E402

FRAMES = 30
IDLE, FULL = (1218, 3021), (3880, 225)  # the demo calibration's counts at TLA 0 and 55


def raws_at(frame, nlevers):
    """The quadrant's counts: every lever from idle to the forward stop, each two frames behind the one before."""
    out = []
    for i in range(nlevers):
        k, f = i % 2, min(max(frame - 2 * i, 0), FRAMES - 5)
        # C's integer division truncates toward zero
        out.append(IDLE[k] + int((FULL[k] - IDLE[k]) * f / (FRAMES - 5)))
    return out


def main(argv):
    exact = "-x" in argv
    args = [a for a in argv if a != "-x"]
    if len(args) != 1:
        print(__doc__.strip().splitlines()[3], file=sys.stderr)
        return 2
    path = args[0]
    if os.path.isdir(path):
        path = os.path.join(path, "lib", "libthrustmap.so.2")
    lib = tm.Library(path)
    with lib.open("demo", "demo") as h:
        levers = h.levers
        print(f"libthrustmap {tm.ABI_VERSION}: demo with demo: {h.parameter} ({h.unit}), levers "
              f"{' '.join(map(str, levers))}, gates {' '.join(h.gates)}")
        c = tm.Conditions(alt_ft=2000, oat_c=20, mach=0, on_ground=1, assumed_set=1, assumed_c=45)
        c.bleeds = h.bleed_mask("engine-anti-ice")
        print("conditions: alt_ft 2000 oat_c 20 mach 0 on_ground 1 assumed_c 45 bleeds engine-anti-ice")
        for frame in range(FRAMES):
            raws = raws_at(frame, len(levers))
            results = h.command_levers(levers, raws, c)
            if exact:
                for lever, raw, r in zip(levers, raws, results):
                    print(f"frame {frame} lever {lever} raw {raw} tla {r.tla_deg!r} gate {h.gate_name(r.gate) or '-'} "
                          f"value {r.value!r} flags {r.flags:#x}")
            else:
                print(f"frame {frame:2d}: " + " | ".join(
                    f"lever {lever} raw {raw:4d} TLA {r.tla_deg:6.2f} {h.gate_name(r.gate) or '(between gates)':15s} "
                    f"{h.parameter} {r.value:6.2f}" for lever, raw, r in zip(levers, raws, results)))
        d = h.target_detail("takeoff", c)
        reasons = [n for n, bit in (("ta_not_above_oat", tm.REASON_TA_NOT_ABOVE_OAT),
                                    ("ta_below_corner", tm.REASON_TA_BELOW_CORNER),
                                    ("ta_above_max", tm.REASON_TA_ABOVE_MAX),
                                    ("reduction_limited", tm.REASON_REDUCTION_LIMITED),
                                    ("reduction_not_checked", tm.REASON_REDUCTION_NOT_CHECKED)) if d.reasons & bit]
        pct = tm.nan_if_unset(d.thrust_reduction_pct)
        print(f"takeoff target {d.value:.2f} (full {d.value_full:.2f}), taken at {d.effective_c:g} °C: "
              f"{'reduced' if d.reduction_applied else 'not reduced'}"
              + (f", thrust {pct:.1f} % less" if pct is not None else "")
              + (f"; reasons {', '.join(reasons)}" if reasons else ""))
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
