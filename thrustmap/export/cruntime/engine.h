/*
 * engine.h - the declarations of the C that `thrustmap export c` writes.
 *
 * This file and engine_runtime.c are the hand-written part of every
 * generated file: the generator copies them in, with engine_ and ENGINE_
 * replaced by the chosen prefix (--prefix), and writes only what depends on
 * the profile: its dimensions (in place of the engine_profile.h include
 * below), its features, tables and gate layout, and the gate expressions
 * translated to C (the other includes of engine_runtime.c). The result is
 * one self-contained C99 file.
 *
 * SIMULATION ONLY. NOT CERTIFIED. Never use this code or its results to set
 * thrust on a real aircraft: real thrust settings come from the approved
 * flight manual and the engine control.
 *
 * To compile the runtime on its own while editing it, run
 *     go test ./thrustmap/export -run Runtime
 * which generates the included parts for several test profiles and compiles
 * engine_runtime.c with them (gcc -std=c99 -Wall -Wextra -Werror -pedantic).
 */
#ifndef ENGINE_DECLARED
#define ENGINE_DECLARED

#include <math.h>
#include <stdint.h>
#include <string.h>

/* The profile's dimensions: ENGINE_NUM_RATINGS, ENGINE_NUM_GATES,
   ENGINE_NUM_LEVERS (calibrated levers), ENGINE_NUM_BLEEDS, ENGINE_PARAMETER
   and ENGINE_UNIT (strings), ENGINE_TLA_MIN_DEG and ENGINE_TLA_MAX_DEG (the
   lever's end stops). */
#include "engine_profile.h"

/* The version of this interface. Version 2 (thrustmap's C library has the
   same number) follows the library's types and meanings where the two
   overlap: 64-bit bleeds, engine_bleed_bit, engine_target_detail with
   engine_target_result, and the flag bits. Changed from version 1:
   engine_target gives the value alone (engine_target_detail the rest, as
   engine_result did), engine_bleed_bit replaces engine_bleed_index, the
   ENGINE_FLAG_* and ENGINE_CLAMPED_* (were ENGINE_CLAMP_*) bits are the
   library's, and bleed bits the profile does not declare are an error. */
#define ENGINE_API_VERSION 2

#define ENGINE_NO_LEVER (-1) /* engine_command_tla with the profile's own gate zones */

/* The most bleeds a profile declares: bits 0 to 63 of engine_conditions.bleeds. */
#define ENGINE_MAX_BLEEDS 64

/* Return codes. */
#define ENGINE_OK 0
#define ENGINE_ERR_CONDITIONS (-1) /* not finite, outside the standard atmosphere, Mach outside 0-5, below absolute
                                      zero, or a bleed bit the profile does not declare */
#define ENGINE_ERR_RATING (-2)     /* no rating of that index */
#define ENGINE_ERR_LEVER (-3)      /* no lever of that id, or a lever without calibration */
#define ENGINE_ERR_INPUT (-4)      /* a NULL pointer, or a raw count or lever angle that is not a finite number */
#define ENGINE_ERR_NO_GATE (-5)    /* no gate is active at these conditions */
#define ENGINE_ERR_BLEED (-6)      /* no bleed of that name */

/* engine_command.flags and engine_target_result.flags: how the value was
   shaped (the same bits as thrustmap.h's THRUSTMAP_FLAG_*). */
#define ENGINE_FLAG_CLAMPED (1u << 0)   /* some input was clamped: the ENGINE_CLAMPED_* bits say which */
#define ENGINE_FLAG_RAISED (1u << 1)    /* raised to the effective target of the gate nearer idle */
#define ENGINE_FLAG_LIMITED (1u << 2)   /* cut to the redline */
#define ENGINE_FLAG_INTERLOCK (1u << 3) /* reverse selected in the air: holding idle */
#define ENGINE_FLAG_FALLBACK (1u << 4)  /* a gate expression failed: its rating or the last command was used */

/* Inputs held at the edge of a table or range: set in .flags with
   ENGINE_FLAG_CLAMPED, and alone in engine_command.clamped (the same bits as
   thrustmap.h's THRUSTMAP_CLAMPED_*). A target has only the first three. */
#define ENGINE_CLAMPED_ALTITUDE (1u << 8)    /* pressure altitude beyond a table */
#define ENGINE_CLAMPED_TEMPERATURE (1u << 9) /* temperature beyond a table */
#define ENGINE_CLAMPED_MACH (1u << 10)       /* Mach beyond a table */
#define ENGINE_CLAMPED_RAW (1u << 11)        /* raw counts beyond the calibrated points */
#define ENGINE_CLAMPED_DEVICE (1u << 12)     /* raw counts beyond the device range */
#define ENGINE_CLAMPED_LEVER (1u << 13)      /* lever angle beyond the end stops: held at the stop */

/* engine_target_result.reasons: the rules of the assumed-temperature method
   (after FAA AC 25-13) that acted, one bit per reason code. */
#define ENGINE_REASON_TA_NOT_ABOVE_OAT (1u << 0)      /* at or below OAT: full rating */
#define ENGINE_REASON_TA_BELOW_CORNER (1u << 1)       /* at or below the flat-rating corner: full rating */
#define ENGINE_REASON_TA_ABOVE_MAX (1u << 2)          /* above the profile's maximum: cut to it */
#define ENGINE_REASON_REDUCTION_LIMITED (1u << 3)     /* the thrust reduction limit lowered it */
#define ENGINE_REASON_REDUCTION_NOT_CHECKED (1u << 4) /* no thrust grid: the limit was not checked */

typedef struct {
    double alt_ft;    /* pressure altitude, ft */
    double oat_c;     /* outside (static) air temperature, deg C */
    double mach;
    uint64_t bleeds;  /* bit i = the profile's bleeds[i] is on (engine_bleed_bit) */
    int on_ground;
    int assumed_set;  /* an assumed temperature is selected */
    double assumed_c; /* the assumed temperature, deg C, when assumed_set */
} engine_conditions;

/* One rating target with what shaped it (as thrustmap_target_result). */
typedef struct {
    double value;                /* the target, as engine_target gives it */
    uint32_t flags;              /* ENGINE_FLAG_CLAMPED and _LIMITED, ENGINE_CLAMPED_ALTITUDE/_TEMPERATURE/_MACH */
    int reduction_evaluated;     /* 1: c->assumed_set and the rating has the assumed-temperature method; else 0 */
    int reduction_applied;       /* 1: the value was reduced (effective_c above the OAT); else 0 */
    uint32_t reasons;            /* ENGINE_REASON_* bits; 0 when not evaluated */
    double assumed_c;            /* the assumed temperature as asked, deg C; NaN when not evaluated */
    double effective_c;          /* the temperature the value was taken at, deg C; NaN when not evaluated */
    double value_full;           /* the full (unreduced) target at the actual conditions; = value when not evaluated */
    double thrust_reduction_pct; /* rated-thrust reduction at effective_c, percent; NaN when not evaluated or
                                    the rating has no thrust grid */
} engine_target_result;

typedef struct {
    double tla_deg;
    double value;
    int gate;         /* reported gate (with hysteresis), or -1 */
    int lower, upper; /* gates interpolated between, or -1 inside a capture zone */
    double fraction;  /* between lower's and upper's zone edges, 0 to 1 */
    int reverse;
    uint32_t flags;   /* ENGINE_FLAG_* and ENGINE_CLAMPED_* */
    uint32_t clamped; /* ENGINE_CLAMPED_* alone */
} engine_command;

/* Private: one gate's values at the state's conditions. */
typedef struct {
    int has_own;
    double own;
    uint32_t own_flags, own_clamp;
    double eff;
    uint32_t flags, clamp;
} engine__gate_eval;

/* One lever's state: zero it (or engine_lever_reset) before first use. The
   fields after has_last are a cache of gate values at cond. */
typedef struct {
    double held;
    int holding;
    int gate_plus1;
    double last;
    int has_last;
    int geom_plus1;
    engine_conditions cond;
    int when_failed;
    uint32_t when_known, when_true, own_known, eff_known;
    engine__gate_eval gates[ENGINE_NUM_GATES];
} engine_lever_state;

/* The index of the named rating, or -1. */
int engine_rating_index(const char *name);
/* The name of rating i, or "" when there is none. */
const char *engine_rating_name(int rating);
/* The bit of the named bleed in engine_conditions.bleeds (0 to 63: its index
   in the profile's bleeds), or ENGINE_ERR_BLEED for a name the profile does
   not declare, or ENGINE_ERR_INPUT for NULL. Look bleeds up once, at load:
   c.bleeds |= (uint64_t)1 << bit. */
int engine_bleed_bit(const char *name);
/* The name of bleed bit i, or "" when there is none. */
const char *engine_bleed_name(int bit);
/* The name of gate i, or "" when there is none (as for gate -1). */
const char *engine_gate_name(int gate);
/* The rating's target at c: the table value (reduced by the
   assumed-temperature method when c->assumed_set and the rating has it),
   plus the corrections of the bleeds that are on, cut to the redline.
   *value is written only on success. Returns ENGINE_OK, ENGINE_ERR_RATING,
   ENGINE_ERR_CONDITIONS or ENGINE_ERR_INPUT. */
int engine_target(int rating, const engine_conditions *c, double *value);
/* engine_target with what shaped the value (see engine_target_result).
   *out is written only on success. Returns as engine_target. */
int engine_target_detail(int rating, const engine_conditions *c, engine_target_result *out);
/* Returns a lever state to uncaptured with no held reading. */
void engine_lever_reset(engine_lever_state *s);
/* The command for lever angle tla_deg, with the gate zones of lever id
   (ENGINE_NO_LEVER: the profile's own). */
int engine_command_tla(int lever, engine_lever_state *s, double tla_deg, const engine_conditions *c, engine_command *out);
#if ENGINE_NUM_LEVERS > 0
/* The calibration id of calibrated lever i (0 to ENGINE_NUM_LEVERS-1). */
int engine_lever_id(int i);
/* The command for a raw count of lever id: deadband, calibration, gates. */
int engine_command_raw(int lever, engine_lever_state *s, double raw, const engine_conditions *c, engine_command *out);
/* Raw count -> lever angle; clamped (may be NULL) gets ENGINE_CLAMPED_RAW and ENGINE_CLAMPED_DEVICE. */
int engine_raw_to_tla(int lever, double raw, double *tla_deg, uint32_t *clamped);
/* Lever angle -> raw count, for marking notches; clamped (may be NULL): beyond the calibration. */
int engine_tla_to_raw(int lever, double tla_deg, double *raw, int *clamped);
#endif

#endif /* ENGINE_DECLARED */
