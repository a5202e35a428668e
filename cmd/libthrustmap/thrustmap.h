/*
 * thrustmap.h - the C interface of libthrustmap.
 *
 * SIMULATION ONLY. thrustmap is for simulated aircraft and training-device
 * development. It is not certified and must never be used to set thrust on a
 * real aircraft: real thrust settings come from the approved flight manual and
 * the engine control.
 *
 * Build (from the module root):
 *
 *     bash cmd/libthrustmap/build.sh OUTDIR
 *
 * writes OUTDIR/include/thrustmap.h (this file, the one header to include),
 * OUTDIR/lib/libthrustmap.so.N (soname libthrustmap.so.N, N the
 * THRUSTMAP_ABI_VERSION below) with the symlink libthrustmap.so, and
 * OUTDIR/lib/pkgconfig/thrustmap.pc. Compile and run a client with
 *
 *     cc -I OUTDIR/include -o plugin plugin.c -L OUTDIR/lib -lthrustmap -Wl,-rpath,OUTDIR/lib
 *
 * (or without the rpath and with LD_LIBRARY_PATH=OUTDIR/lib when running).
 * On Windows, cmd/libthrustmap/build-windows.sh cross-builds the same layout
 * with OUTDIR/bin/thrustmap.dll and its import libraries in OUTDIR/lib.
 *
 * The chain: raw lever counts -> calibrated thrust-lever angle (TLA) -> gate
 * -> rated engine target (N1 %, EPR or torque %, as the profile declares) at
 * the given pressure altitude, temperature, Mach and bleeds.
 *
 * One Go runtime per process. The library contains a Go runtime, which starts
 * when the library is loaded, runs its own threads and cannot be unloaded (do
 * not dlclose/FreeLibrary it). A process can hold only one Go runtime: two
 * Go-built plugins loaded into one simulator process conflict. For that case,
 * `thrustmap export c` writes a self-contained C99 source file of a profile and
 * calibration, with no runtime, to compile into the plugin instead.
 *
 * Threads. Every function may be called from any thread. Calls for one lever
 * of one handle are serialised; calls for different levers run in parallel.
 * Each lever keeps its own state (the deadband's held reading and the reported
 * gate, whose hysteresis depends on the previous calls), so feed each lever's
 * samples in order from one place.
 *
 * Memory. The library keeps no pointer given to it after a call returns, and
 * the caller frees nothing the library returns.
 *
 * Errors. Functions returning int return THRUSTMAP_OK (0) or one of the
 * negative THRUSTMAP_E* codes; thrustmap_error() then gives the message.
 */
#ifndef THRUSTMAP_H
#define THRUSTMAP_H

#include <stdint.h>

#ifdef __cplusplus
extern "C" {
#endif

/* The version of this interface; raised when a type or function changes. */
#define THRUSTMAP_ABI_VERSION 1

/* Return codes. */
#define THRUSTMAP_OK 0
/* The handle is not open (never opened, closed, or 0). */
#define THRUSTMAP_EBADHANDLE (-1)
/* An argument is NULL, out of range or unknown: a lever id not in the
 * calibration (or no calibration), an unknown rating, a bleed bit beyond the
 * profile's bleeds, non-finite conditions or conditions outside the standard
 * atmosphere, a negative buffer length. */
#define THRUSTMAP_EINVAL (-2)
/* The computation failed on valid arguments (for example, no gate is active
 * at these conditions). */
#define THRUSTMAP_ECOMPUTE (-3)
/* An internal fault in the library (a bug: please report it with the message).
 * The handle stays usable. */
#define THRUSTMAP_EINTERNAL (-4)

/* thrustmap_result.flags: how the command was shaped. */
/* Some input was clamped: a table axis (altitude, temperature, Mach), the
 * raw count beyond the calibrated points, or beyond the device range. The
 * THRUSTMAP_CLAMPED_* bits say which. */
#define THRUSTMAP_FLAG_CLAMPED (1u << 0)
/* The gate's target was raised to that of the gate nearer idle, so a lever
 * pushed forward never commands less (monotone command). */
#define THRUSTMAP_FLAG_RAISED (1u << 1)
/* The value was cut to the profile's redline. */
#define THRUSTMAP_FLAG_LIMITED (1u << 2)
/* Reverse selected in the air on a profile that allows it only on the
 * ground: the command holds idle. */
#define THRUSTMAP_FLAG_INTERLOCK (1u << 3)
/* A gate expression failed to evaluate; the gate used its rating or the last
 * good command instead. */
#define THRUSTMAP_FLAG_FALLBACK (1u << 4)

/* thrustmap_result.flags: which input was clamped (set with
 * THRUSTMAP_FLAG_CLAMPED). */
#define THRUSTMAP_CLAMPED_ALTITUDE (1u << 8)    /* pressure altitude beyond a table */
#define THRUSTMAP_CLAMPED_TEMPERATURE (1u << 9) /* temperature beyond a table */
#define THRUSTMAP_CLAMPED_MACH (1u << 10)       /* Mach beyond a table */
#define THRUSTMAP_CLAMPED_RAW (1u << 11)        /* raw count beyond the calibrated points */
#define THRUSTMAP_CLAMPED_DEVICE (1u << 12)     /* raw count beyond the device range */
#define THRUSTMAP_CLAMPED_LEVER (1u << 13)      /* lever angle beyond the end stops: held at the stop */

/* The air data and configuration a command or target is computed at. */
typedef struct {
    double alt_ft;    /* pressure altitude, ft (-16404 to 104987: -5 to 32 km) */
    double oat_c;     /* outside (static) air temperature, degrees C */
    double mach;      /* Mach number, 0 to 5 */
    uint32_t bleeds;  /* bit i = the profile's bleeds[i] is on */
    int on_ground;    /* non-zero: on the ground */
    int assumed_set;  /* non-zero: an assumed temperature is selected */
    double assumed_c; /* the assumed temperature, degrees C, when assumed_set */
} thrustmap_conditions;

/* One lever command. */
typedef struct {
    double tla_deg; /* the calibrated lever angle, degrees */
    double value;   /* the commanded parameter (N1 %, EPR or torque %) */
    int gate;       /* the reported gate, 0-based in TLA order; -1 none */
    int reverse;    /* 1: the lever is in the reverse range; else 0 */
    uint32_t flags; /* THRUSTMAP_FLAG_* and THRUSTMAP_CLAMPED_* bits */
} thrustmap_result;

/* Spellings of const parameters that the Go side can name; use the plain
 * const types in your code. */
typedef const char thrustmap_const_char;
typedef const thrustmap_conditions thrustmap_const_conditions;

/*
 * thrustmap_open loads a profile and a calibration and returns a handle (> 0),
 * or 0 on error, with the message in thrustmap_error(0, ...).
 *
 * profile is a profile file (TOML) or the name of an embedded profile ("demo",
 * "demo-epr", "demo-turboprop"). calibration is a calibration file or the name
 * of an embedded calibration (the demo profiles have calibrations of the same
 * names), or NULL or "" for none: then only thrustmap_target works. Handles
 * are never reused within a process.
 */
int64_t thrustmap_open(thrustmap_const_char *profile, thrustmap_const_char *calibration);

/*
 * thrustmap_command maps a raw count of a lever to the engine command at
 * conditions *c and writes it to *out. lever is the lever's id in the
 * calibration. The lever's state (deadband, reported gate) advances with each
 * call; *out is written only on success.
 *
 * Returns THRUSTMAP_OK, THRUSTMAP_EBADHANDLE, THRUSTMAP_EINVAL (c or out NULL,
 * unknown lever, bad conditions, unknown bleed bit), THRUSTMAP_ECOMPUTE or
 * THRUSTMAP_EINTERNAL.
 */
int thrustmap_command(int64_t h, int lever, int raw, thrustmap_const_conditions *c, thrustmap_result *out);

/*
 * thrustmap_target writes the named rating's target at conditions *c to *out:
 * the table value (reduced by the assumed-temperature method when
 * c->assumed_set and the rating is one of the profile's assumed-temperature
 * ratings), plus the corrections of the bleeds that are on, cut to the
 * redline. *out is written only on success.
 *
 * Returns THRUSTMAP_OK, THRUSTMAP_EBADHANDLE, THRUSTMAP_EINVAL (an argument
 * NULL, unknown rating, bad conditions, unknown bleed bit), THRUSTMAP_ECOMPUTE
 * or THRUSTMAP_EINTERNAL.
 */
int thrustmap_target(int64_t h, thrustmap_const_char *rating, thrustmap_const_conditions *c, double *out);

/*
 * thrustmap_reset forgets a lever's state: the held reading and the reported
 * gate (the next command starts uncaptured), as after thrustmap_open.
 *
 * Returns THRUSTMAP_OK, THRUSTMAP_EBADHANDLE, THRUSTMAP_EINVAL (unknown lever)
 * or THRUSTMAP_EINTERNAL.
 */
int thrustmap_reset(int64_t h, int lever);

/*
 * thrustmap_gate_name returns the name of gate `gate` (0-based in TLA order)
 * as a NUL-terminated UTF-8 string owned by the library, valid until
 * thrustmap_close(h). Returns NULL for gate -1, for a gate out of range
 * (with a THRUSTMAP_EINVAL message) and for a bad handle.
 */
thrustmap_const_char *thrustmap_gate_name(int64_t h, int gate);

/*
 * thrustmap_error copies the message of the last failed call on handle h
 * (h = 0: of the last failed thrustmap_open, or the last call with a bad
 * handle) into buf, like snprintf: at most len - 1 bytes, cut at a UTF-8
 * character boundary, then a NUL (nothing is written when len is 0; buf may
 * then be NULL). Calls that succeed leave the message in place; with several
 * threads on one handle it is the message of whichever call failed last.
 *
 * Returns the full length of the message in bytes, without the NUL (0 when
 * there is none); a result >= len means it was truncated. Returns
 * THRUSTMAP_EBADHANDLE for a handle that is not open, THRUSTMAP_EINVAL for
 * len < 0 or buf NULL with len > 0.
 */
int thrustmap_error(int64_t h, char *buf, int len);

/*
 * thrustmap_close closes handle h and frees its gate names. It waits for calls
 * on h in progress on other threads; later calls on h return
 * THRUSTMAP_EBADHANDLE. Closing a handle that is not open does nothing.
 */
void thrustmap_close(int64_t h);

#ifdef __cplusplus
}
#endif

#endif /* THRUSTMAP_H */
