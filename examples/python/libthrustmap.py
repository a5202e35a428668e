"""libthrustmap through ctypes: the C library's interface (version 2) for test
rigs and scripts, with nothing to compile.

    import libthrustmap as tm
    lib = tm.Library("OUTDIR/lib/libthrustmap.so.2")   # OUTDIR of cmd/libthrustmap/build.sh
    with lib.open("demo", "demo") as h:
        c = tm.Conditions(alt_ft=2000, oat_c=20, on_ground=1)
        c.bleeds = h.bleed_mask("engine-anti-ice")
        for r in h.command_levers([1, 2], [2588, 1711], c):
            print(r.tla_deg, h.gate_name(r.gate), r.value)
        print(h.target_detail("takeoff", c).value)

Every failing call raises ThrustmapError with the library's code and message.
The structures and constants mirror thrustmap.h, which documents each.

Simulation only: not certified, never for setting thrust on a real aircraft.
"""

import ctypes
import math

ABI_VERSION = 2
MAX_BLEEDS = 64
MAX_BATCH = 64

OK, EBADHANDLE, EINVAL, ECOMPUTE, EINTERNAL = 0, -1, -2, -3, -4

FLAG_CLAMPED = 1 << 0
FLAG_RAISED = 1 << 1
FLAG_LIMITED = 1 << 2
FLAG_INTERLOCK = 1 << 3
FLAG_FALLBACK = 1 << 4
CLAMPED_ALTITUDE = 1 << 8
CLAMPED_TEMPERATURE = 1 << 9
CLAMPED_MACH = 1 << 10
CLAMPED_RAW = 1 << 11
CLAMPED_DEVICE = 1 << 12
CLAMPED_LEVER = 1 << 13

REASON_TA_NOT_ABOVE_OAT = 1 << 0
REASON_TA_BELOW_CORNER = 1 << 1
REASON_TA_ABOVE_MAX = 1 << 2
REASON_REDUCTION_LIMITED = 1 << 3
REASON_REDUCTION_NOT_CHECKED = 1 << 4

# The names the command line's JSON gives each bit.
FLAG_NAMES = {"raised": FLAG_RAISED, "limited": FLAG_LIMITED, "interlock": FLAG_INTERLOCK,
              "fallback": FLAG_FALLBACK}
CLAMPED_NAMES = {"altitude": CLAMPED_ALTITUDE, "temperature": CLAMPED_TEMPERATURE, "mach": CLAMPED_MACH,
                 "raw": CLAMPED_RAW, "device": CLAMPED_DEVICE, "lever": CLAMPED_LEVER}


class Conditions(ctypes.Structure):
    """thrustmap_conditions: air data and configuration."""
    _fields_ = [("alt_ft", ctypes.c_double), ("oat_c", ctypes.c_double), ("mach", ctypes.c_double),
                ("bleeds", ctypes.c_uint64), ("on_ground", ctypes.c_int), ("assumed_set", ctypes.c_int),
                ("assumed_c", ctypes.c_double)]


class Result(ctypes.Structure):
    """thrustmap_result: one lever command."""
    _fields_ = [("tla_deg", ctypes.c_double), ("value", ctypes.c_double), ("gate", ctypes.c_int),
                ("reverse", ctypes.c_int), ("flags", ctypes.c_uint32)]


class TargetResult(ctypes.Structure):
    """thrustmap_target_result: a rating target with what shaped it."""
    _fields_ = [("value", ctypes.c_double), ("flags", ctypes.c_uint32), ("reduction_evaluated", ctypes.c_int),
                ("reduction_applied", ctypes.c_int), ("reasons", ctypes.c_uint32), ("assumed_c", ctypes.c_double),
                ("effective_c", ctypes.c_double), ("value_full", ctypes.c_double),
                ("thrust_reduction_pct", ctypes.c_double)]


class ThrustmapError(Exception):
    """A call failed: code is a THRUSTMAP_E* value, message the library's."""

    def __init__(self, code, message):
        super().__init__(f"{message} (code {code})")
        self.code, self.message = code, message


_I64, _INT, _STR = ctypes.c_int64, ctypes.c_int, ctypes.c_char_p
_PROTOTYPES = {
    "thrustmap_abi_version": (_INT, []),
    "thrustmap_open": (_I64, [_STR, _STR]),
    "thrustmap_close": (None, [_I64]),
    "thrustmap_command": (_INT, [_I64, _INT, _INT, ctypes.POINTER(Conditions), ctypes.POINTER(Result)]),
    "thrustmap_command_levers": (_INT, [_I64, _INT, ctypes.POINTER(_INT), ctypes.POINTER(_INT),
                                        ctypes.POINTER(Conditions), ctypes.POINTER(Result)]),
    "thrustmap_reset": (_INT, [_I64, _INT]),
    "thrustmap_target": (_INT, [_I64, _STR, ctypes.POINTER(Conditions), ctypes.POINTER(ctypes.c_double)]),
    "thrustmap_target_detail": (_INT, [_I64, _STR, ctypes.POINTER(Conditions), ctypes.POINTER(TargetResult)]),
    "thrustmap_bleed_bit": (_INT, [_I64, _STR]),
    "thrustmap_bleed_count": (_INT, [_I64]),
    "thrustmap_bleed_name": (_STR, [_I64, _INT]),
    "thrustmap_parameter": (_STR, [_I64]),
    "thrustmap_unit": (_STR, [_I64]),
    "thrustmap_rating_count": (_INT, [_I64]),
    "thrustmap_rating_name": (_STR, [_I64, _INT]),
    "thrustmap_gate_count": (_INT, [_I64]),
    "thrustmap_gate_name": (_STR, [_I64, _INT]),
    "thrustmap_lever_count": (_INT, [_I64]),
    "thrustmap_lever_ids": (_INT, [_I64, ctypes.POINTER(_INT), _INT]),
    "thrustmap_error": (_INT, [_I64, ctypes.c_char_p, _INT]),
}


class Library:
    """The loaded shared library (libthrustmap.so.2, or thrustmap.dll)."""

    def __init__(self, path):
        self.dll = ctypes.CDLL(path)
        for name, (restype, argtypes) in _PROTOTYPES.items():
            fn = getattr(self.dll, name)
            fn.restype, fn.argtypes = restype, argtypes
        version = self.dll.thrustmap_abi_version()
        if version != ABI_VERSION:
            raise ThrustmapError(EINVAL, f"{path} has interface version {version}, these bindings are for {ABI_VERSION}")

    def error(self, h):
        """The message of the last failed call on handle h (0: of opens and bad handles)."""
        n = self.dll.thrustmap_error(h, None, 0)
        if n < 0:
            return f"(no message: thrustmap_error gave {n})"
        buf = ctypes.create_string_buffer(n + 1)
        self.dll.thrustmap_error(h, buf, n + 1)
        return buf.value.decode("utf-8")

    def open(self, profile, calibration=None):
        """Opens a profile (file or embedded name) with a calibration (or None): a Handle."""
        h = self.dll.thrustmap_open(profile.encode(), calibration.encode() if calibration else None)
        if h == 0:
            raise ThrustmapError(EINVAL, self.error(0))
        return Handle(self, h)


class Handle:
    """One open profile and calibration, with the state of each lever."""

    def __init__(self, lib, h):
        self.lib, self.dll, self.h = lib, lib.dll, h

    def close(self):
        self.dll.thrustmap_close(self.h)

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.close()

    def _check(self, rc):
        if rc < 0:
            raise ThrustmapError(rc, self.lib.error(self.h if rc != EBADHANDLE else 0))
        return rc

    def _name(self, s):
        if s is None:
            raise ThrustmapError(EINVAL, self.lib.error(self.h))
        return s.decode("utf-8")

    def command(self, lever, raw, c):
        """thrustmap_command: one lever's command (Result)."""
        out = Result()
        self._check(self.dll.thrustmap_command(self.h, lever, raw, ctypes.byref(c), ctypes.byref(out)))
        return out

    def command_levers(self, levers, raws, c):
        """thrustmap_command_levers: every lever of a frame in one call; a list of Result."""
        n = len(levers)
        if len(raws) != n:
            raise ThrustmapError(EINVAL, f"{n} levers, {len(raws)} raw counts")
        ids, counts, out = (_INT * n)(*levers), (_INT * n)(*raws), (Result * n)()
        self._check(self.dll.thrustmap_command_levers(self.h, n, ids, counts, ctypes.byref(c), out))
        return list(out)

    def reset(self, lever):
        self._check(self.dll.thrustmap_reset(self.h, lever))

    def target(self, rating, c):
        """thrustmap_target: the rating's target."""
        out = ctypes.c_double()
        self._check(self.dll.thrustmap_target(self.h, rating.encode(), ctypes.byref(c), ctypes.byref(out)))
        return out.value

    def target_detail(self, rating, c):
        """thrustmap_target_detail: the target with what shaped it (TargetResult)."""
        out = TargetResult()
        self._check(self.dll.thrustmap_target_detail(self.h, rating.encode(), ctypes.byref(c), ctypes.byref(out)))
        return out

    def bleed_bit(self, name):
        return self._check(self.dll.thrustmap_bleed_bit(self.h, name.encode()))

    def bleed_mask(self, *names):
        """The thrustmap_conditions.bleeds value with the named bleeds on."""
        mask = 0
        for n in names:
            mask |= 1 << self.bleed_bit(n)
        return mask

    @property
    def parameter(self):
        return self._name(self.dll.thrustmap_parameter(self.h))

    @property
    def unit(self):
        return self._name(self.dll.thrustmap_unit(self.h))

    @property
    def ratings(self):
        n = self._check(self.dll.thrustmap_rating_count(self.h))
        return [self._name(self.dll.thrustmap_rating_name(self.h, i)) for i in range(n)]

    @property
    def gates(self):
        n = self._check(self.dll.thrustmap_gate_count(self.h))
        return [self._name(self.dll.thrustmap_gate_name(self.h, i)) for i in range(n)]

    def gate_name(self, gate):
        """The gate's name, or None for -1 (no gate)."""
        return None if gate == -1 else self._name(self.dll.thrustmap_gate_name(self.h, gate))

    @property
    def bleeds(self):
        n = self._check(self.dll.thrustmap_bleed_count(self.h))
        return [self._name(self.dll.thrustmap_bleed_name(self.h, i)) for i in range(n)]

    @property
    def levers(self):
        n = self._check(self.dll.thrustmap_lever_count(self.h))
        ids = (_INT * max(n, 1))()
        self._check(self.dll.thrustmap_lever_ids(self.h, ids, n))
        return list(ids[:n])


def nan_if_unset(x):
    """None for the NaN the library gives for what was not worked out."""
    return None if math.isnan(x) else x
