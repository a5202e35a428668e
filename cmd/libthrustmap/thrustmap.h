/*
 * thrustmap.h - the C interface of libthrustmap, version 2.
 *
 * SIMULATION ONLY. thrustmap is for simulated aircraft and training-device
 * development. It is not certified and must never be used to set thrust on a
 * real aircraft: real thrust settings come from the approved flight manual and
 * the engine control.
 *
 * Version 2 replaces version 1, which nothing outside the project depended
 * on; a program written for version 1 must be recompiled. Changed:
 * thrustmap_conditions.bleeds is uint64_t (bit i = the profile's bleeds[i],
 * up to 64 bleeds; it was uint32_t). New: thrustmap_abi_version,
 * thrustmap_command_levers (every lever of a frame in one call),
 * thrustmap_target_detail with thrustmap_target_result (clamping, the
 * assumed-temperature reduction and its reasons), thrustmap_bleed_bit, and the
 * queries of what a handle holds (thrustmap_parameter, thrustmap_unit,
 * thrustmap_rating_count/_name, thrustmap_gate_count, thrustmap_bleed_count/
 * _name, thrustmap_lever_count/_ids). The other functions are unchanged.
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
 * At load, check thrustmap_abi_version() == THRUSTMAP_ABI_VERSION: a library
 * of another version has other types.
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
 * Cost. Each call from C into the library crosses into the Go runtime, a
 * fixed cost on top of the work (cmd/libthrustmap/bench/run.sh measures it):
 * command every lever of a frame with one thrustmap_command_levers call. The
 * lever functions allocate nothing.
 *
 * Threads. Every function may be called from any thread. Calls for one lever
 * of one handle are serialised; calls for different levers run in parallel
 * (thrustmap_command_levers takes its levers one at a time, in the order
 * given). Each lever keeps its own state (the deadband's held reading and the
 * reported gate, whose hysteresis depends on the previous calls), so feed
 * each lever's samples in order from one place.
 *
 * Memory. The library keeps no pointer given to it after a call returns, and
 * the caller frees nothing the library returns. Names it returns are owned by
 * the handle and valid until thrustmap_close.
 *
 * Errors. Functions returning int return THRUSTMAP_OK (0), a count (>= 0) or
 * one of the negative THRUSTMAP_E* codes; functions returning a name return
 * NULL on error. thrustmap_error() then gives the message. A NULL pointer, an
 * unknown name or lever, a handle that is not open, a count out of range or a
 * non-finite number is such an error, never a crash.
 */
#ifndef THRUSTMAP_H
#define THRUSTMAP_H

#include <stdint.h>

#ifdef __cplusplus
extern "C" {
#endif

/* The version of this interface; raised when a type or function changes. */
#define THRUSTMAP_ABI_VERSION 2

/* The most bleeds a profile declares: bits 0 to 63 of
 * thrustmap_conditions.bleeds. */
#define THRUSTMAP_MAX_BLEEDS 64

/* The most levers one thrustmap_command_levers call takes. */
#define THRUSTMAP_MAX_BATCH 64

/* Return codes. */
#define THRUSTMAP_OK 0
/* The handle is not open (never opened, closed, or 0). */
#define THRUSTMAP_EBADHANDLE (-1)
/* An argument is NULL, out of range or unknown: a lever id not in the
 * calibration (or no calibration), an unknown rating or bleed name, a bleed
 * bit beyond the profile's bleeds, non-finite conditions or conditions
 * outside the standard atmosphere, an index or count out of range. */
#define THRUSTMAP_EINVAL (-2)
/* The computation failed on valid arguments (for example, no gate is active
 * at these conditions). */
#define THRUSTMAP_ECOMPUTE (-3)
/* An internal fault in the library (a bug: please report it with the message).
 * The handle stays usable. */
#define THRUSTMAP_EINTERNAL (-4)

/* thrustmap_result.flags and thrustmap_target_result.flags: how the value was
 * shaped. */
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

/* Which input was clamped (set with THRUSTMAP_FLAG_CLAMPED). A target
 * (thrustmap_target_detail) has only the first three. */
#define THRUSTMAP_CLAMPED_ALTITUDE (1u << 8)    /* pressure altitude beyond a table */
#define THRUSTMAP_CLAMPED_TEMPERATURE (1u << 9) /* temperature beyond a table */
#define THRUSTMAP_CLAMPED_MACH (1u << 10)       /* Mach beyond a table */
#define THRUSTMAP_CLAMPED_RAW (1u << 11)        /* raw count beyond the calibrated points */
#define THRUSTMAP_CLAMPED_DEVICE (1u << 12)     /* raw count beyond the device range */
#define THRUSTMAP_CLAMPED_LEVER (1u << 13)      /* lever angle beyond the end stops: held at the stop */

/* thrustmap_target_result.reasons: the rules of the assumed-temperature
 * method (after FAA AC 25-13) that acted, one bit per reason code, named as
 * in the command line's JSON. */
#define THRUSTMAP_REASON_TA_NOT_ABOVE_OAT (1u << 0)      /* ta_not_above_oat: assumed temperature at or below OAT: full rating */
#define THRUSTMAP_REASON_TA_BELOW_CORNER (1u << 1)       /* ta_below_corner: at or below the corner, where rated thrust is flat: full rating */
#define THRUSTMAP_REASON_TA_ABOVE_MAX (1u << 2)          /* ta_above_max: above the profile's maximum: cut to it */
#define THRUSTMAP_REASON_REDUCTION_LIMITED (1u << 3)     /* reduction_limited: the thrust reduction limit lowered it */
#define THRUSTMAP_REASON_REDUCTION_NOT_CHECKED (1u << 4) /* reduction_not_checked: no thrust grid, the limit was not checked */

/* The air data and configuration a command or target is computed at. */
typedef struct {
    double alt_ft;    /* pressure altitude, ft (-16404 to 104987: -5 to 32 km) */
    double oat_c;     /* outside (static) air temperature, degrees C */
    double mach;      /* Mach number, 0 to 5 */
    uint64_t bleeds;  /* bit i = the profile's bleeds[i] is on (thrustmap_bleed_bit) */
    int on_ground;    /* non-zero: on the ground */
    int assumed_set;  /* non-zero: an assumed temperature is selected */
    double assumed_c; /* the assumed temperature, degrees C, when assumed_set (else ignored) */
} thrustmap_conditions;

/* One lever command. */
typedef struct {
    double tla_deg; /* the calibrated lever angle, degrees */
    double value;   /* the commanded parameter (N1 %, EPR or torque %) */
    int gate;       /* the reported gate, 0-based in TLA order; -1 none */
    int reverse;    /* 1: the lever is in the reverse range; else 0 */
    uint32_t flags; /* THRUSTMAP_FLAG_* and THRUSTMAP_CLAMPED_* bits */
} thrustmap_result;

/* One rating target with what shaped it. */
typedef struct {
    double value;             /* the target, as thrustmap_target gives it */
    uint32_t flags;           /* THRUSTMAP_FLAG_CLAMPED and _LIMITED, THRUSTMAP_CLAMPED_ALTITUDE/_TEMPERATURE/_MACH */
    int reduction_evaluated;  /* 1: an assumed temperature was set and the rating is the
                                 profile's assumed-temperature rating; else 0 */
    int reduction_applied;    /* 1: the value was reduced (effective_c above the OAT); else 0 */
    uint32_t reasons;         /* THRUSTMAP_REASON_* bits, one per rule that acted; 0 when not evaluated */
    double assumed_c;         /* the assumed temperature as asked, degrees C; NaN when not evaluated */
    double effective_c;       /* the temperature the value was taken at, degrees C; NaN when not evaluated */
    double value_full;        /* the full (unreduced) target at the actual conditions; = value when not evaluated */
    double thrust_reduction_pct; /* rated-thrust reduction at effective_c, percent; NaN when not
                                    evaluated or the rating has no thrust grid */
} thrustmap_target_result;

/* Spellings of const parameters that the library's Go side can name; the
 * declarations below use the plain const types, which are the same. */
typedef const char thrustmap_const_char;
typedef const int thrustmap_const_int;
typedef const thrustmap_conditions thrustmap_const_conditions;

/* ------------------------------------------------------------ handles */

/*
 * thrustmap_abi_version returns the THRUSTMAP_ABI_VERSION the library was
 * built with. Compare it with the header's at load.
 */
int thrustmap_abi_version(void);

/*
 * thrustmap_open loads a profile and a calibration and returns a handle (> 0),
 * or 0 on error, with the message in thrustmap_error(0, ...).
 *
 * profile is a profile file (TOML) or the name of an embedded profile ("demo",
 * "demo-epr", "demo-turboprop"); the profile must declare gates. calibration
 * is a calibration file or the name of an embedded calibration (the demo
 * profiles have calibrations of the same names), or NULL or "" for none: then
 * the lever functions fail and the rest work. Handles are never reused within
 * a process.
 */
int64_t thrustmap_open(const char *profile, const char *calibration);

/*
 * thrustmap_close closes handle h and frees the names it returned. It waits
 * for calls on h in progress on other threads; later calls on h return
 * THRUSTMAP_EBADHANDLE (or NULL). Closing a handle that is not open does
 * nothing.
 */
void thrustmap_close(int64_t h);

/* ------------------------------------------------------------ levers */

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
int thrustmap_command(int64_t h, int lever, int raw, const thrustmap_conditions *c, thrustmap_result *out);

/*
 * thrustmap_command_levers commands n levers at the same conditions in one
 * call: out[i] is lever levers[i] at raw count raws[i], exactly as n calls of
 * thrustmap_command in that order would give. Use it once per frame with every
 * lever: it crosses into the library once.
 *
 * The arguments are checked before any lever moves: 1 <= n <=
 * THRUSTMAP_MAX_BATCH, no pointer NULL, every lever in the calibration, the
 * bleed bits known. A lever may appear twice (its state then advances twice).
 * If a command then fails (bad conditions, no gate active), the call returns
 * its code and the message names the lever; out[0..i-1] hold the levers
 * before it, the rest of out is unchanged.
 *
 * Returns THRUSTMAP_OK, THRUSTMAP_EBADHANDLE, THRUSTMAP_EINVAL,
 * THRUSTMAP_ECOMPUTE or THRUSTMAP_EINTERNAL.
 */
int thrustmap_command_levers(int64_t h, int n, const int *levers, const int *raws, const thrustmap_conditions *c,
                             thrustmap_result *out);

/*
 * thrustmap_reset forgets a lever's state: the held reading and the reported
 * gate (the next command starts uncaptured), as after thrustmap_open.
 *
 * Returns THRUSTMAP_OK, THRUSTMAP_EBADHANDLE, THRUSTMAP_EINVAL (unknown lever)
 * or THRUSTMAP_EINTERNAL.
 */
int thrustmap_reset(int64_t h, int lever);

/* ------------------------------------------------------------ targets */

/*
 * thrustmap_target writes the named rating's target at conditions *c to *out:
 * the table value (reduced by the assumed-temperature method when
 * c->assumed_set and the rating is the profile's assumed-temperature rating),
 * plus the corrections of the bleeds that are on, cut to the redline. *out is
 * written only on success.
 *
 * Returns THRUSTMAP_OK, THRUSTMAP_EBADHANDLE, THRUSTMAP_EINVAL (an argument
 * NULL, unknown rating, bad conditions, unknown bleed bit), THRUSTMAP_ECOMPUTE
 * or THRUSTMAP_EINTERNAL.
 */
int thrustmap_target(int64_t h, const char *rating, const thrustmap_conditions *c, double *out);

/*
 * thrustmap_target_detail is thrustmap_target with what shaped the value:
 * which table axes were clamped, whether it was cut to the redline, and the
 * assumed-temperature method's work (see thrustmap_target_result). *out is
 * written only on success. Returns as thrustmap_target.
 */
int thrustmap_target_detail(int64_t h, const char *rating, const thrustmap_conditions *c,
                            thrustmap_target_result *out);

/* ------------------------------------------------------------ what a handle holds */

/*
 * thrustmap_bleed_bit returns the bit of the named bleed in
 * thrustmap_conditions.bleeds (0 to 63: its index in the profile's bleeds),
 * or THRUSTMAP_EBADHANDLE, or THRUSTMAP_EINVAL for NULL or a name the profile
 * does not declare (the message lists those it does). Look bleeds up by name
 * once, at load: c.bleeds |= (uint64_t)1 << bit.
 */
int thrustmap_bleed_bit(int64_t h, const char *name);

/*
 * thrustmap_bleed_count returns how many bleeds the profile declares (0 to
 * THRUSTMAP_MAX_BLEEDS), or THRUSTMAP_EBADHANDLE.
 */
int thrustmap_bleed_count(int64_t h);

/*
 * thrustmap_bleed_name returns the name of bleed bit `bit` (0 to
 * thrustmap_bleed_count - 1), or NULL for a bit out of range (with a
 * THRUSTMAP_EINVAL message) or a bad handle.
 */
const char *thrustmap_bleed_name(int64_t h, int bit);

/*
 * thrustmap_parameter returns the parameter the profile's values are in:
 * "N1", "EPR" or "TORQUE" (as spelled in the profile); NULL for a bad handle.
 */
const char *thrustmap_parameter(int64_t h);

/*
 * thrustmap_unit returns the unit of the values: "percent" (N1, TORQUE) or
 * "ratio" (EPR); NULL for a bad handle.
 */
const char *thrustmap_unit(int64_t h);

/*
 * thrustmap_rating_count returns how many ratings the profile declares, or
 * THRUSTMAP_EBADHANDLE.
 */
int thrustmap_rating_count(int64_t h);

/*
 * thrustmap_rating_name returns the name of rating i (0 to
 * thrustmap_rating_count - 1, in the profile's order), as thrustmap_target
 * takes it; NULL for an index out of range (with a THRUSTMAP_EINVAL message)
 * or a bad handle.
 */
const char *thrustmap_rating_name(int64_t h, int i);

/*
 * thrustmap_gate_count returns how many gates the profile declares (the
 * values thrustmap_result.gate takes are -1 to this - 1), or
 * THRUSTMAP_EBADHANDLE.
 */
int thrustmap_gate_count(int64_t h);

/*
 * thrustmap_gate_name returns the name of gate `gate` (0-based in TLA order).
 * Returns NULL for gate -1, for a gate out of range (with a THRUSTMAP_EINVAL
 * message) and for a bad handle.
 */
const char *thrustmap_gate_name(int64_t h, int gate);

/*
 * thrustmap_lever_count returns how many levers the calibration holds (0
 * when the handle was opened without one), or THRUSTMAP_EBADHANDLE.
 */
int thrustmap_lever_count(int64_t h);

/*
 * thrustmap_lever_ids writes the calibrated levers' ids, in the calibration's
 * order, to ids[0] .. ids[min(len, count) - 1] and returns count, the number
 * of levers (ids may be NULL when len is 0). Returns THRUSTMAP_EBADHANDLE, or
 * THRUSTMAP_EINVAL for len < 0 or ids NULL with len > 0.
 */
int thrustmap_lever_ids(int64_t h, int *ids, int len);

/* ------------------------------------------------------------ errors */

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

#ifdef __cplusplus
}
#endif

#endif /* THRUSTMAP_H */
