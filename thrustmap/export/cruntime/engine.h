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

#define ENGINE_NO_LEVER (-1) /* CommandAtTLA with the profile's own gate zones */

/* Return codes. */
#define ENGINE_OK 0
#define ENGINE_ERR_CONDITIONS (-1) /* not finite, outside the standard atmosphere, Mach outside 0-5, or below absolute zero */
#define ENGINE_ERR_RATING (-2)     /* no rating of that index */
#define ENGINE_ERR_LEVER (-3)      /* no lever of that id, or a lever without calibration */
#define ENGINE_ERR_INPUT (-4)      /* a raw count or lever angle that is not a finite number */
#define ENGINE_ERR_NO_GATE (-5)    /* no gate is active at these conditions */

/* engine_command.flags and engine_result.flags */
#define ENGINE_FLAG_RAISED 0x1u    /* raised to the effective target of the gate nearer idle */
#define ENGINE_FLAG_LIMITED 0x2u   /* cut to the redline */
#define ENGINE_FLAG_INTERLOCK 0x4u /* reverse selected in the air: holding idle */
#define ENGINE_FLAG_FALLBACK 0x8u  /* a gate expression failed: its rating or the last command was used */

/* .clamped: inputs held at the edge of a table or range */
#define ENGINE_CLAMP_ALTITUDE 0x1u
#define ENGINE_CLAMP_TEMPERATURE 0x2u
#define ENGINE_CLAMP_MACH 0x4u
#define ENGINE_CLAMP_RAW 0x8u     /* raw counts beyond the calibrated points */
#define ENGINE_CLAMP_DEVICE 0x10u /* raw counts beyond the device range */
#define ENGINE_CLAMP_LEVER 0x20u  /* lever angle beyond the end stops: held at the stop */

/* engine_result.reasons: the assumed-temperature rules that acted, in order */
#define ENGINE_REASON_TA_NOT_ABOVE_OAT 0x1u
#define ENGINE_REASON_TA_BELOW_CORNER 0x2u
#define ENGINE_REASON_TA_ABOVE_MAX 0x4u
#define ENGINE_REASON_REDUCTION_LIMITED 0x8u
#define ENGINE_REASON_REDUCTION_NOT_CHECKED 0x10u

typedef struct {
    double alt_ft;    /* pressure altitude, ft */
    double oat_c;     /* outside (static) air temperature, deg C */
    double mach;
    uint64_t bleeds;  /* bit i: bleed i is on (engine_bleed_index) */
    int on_ground;
    int assumed_set;  /* an assumed temperature is selected */
    double assumed_c; /* the assumed temperature, deg C, when assumed_set */
} engine_conditions;

typedef struct {
    double value;
    uint32_t flags;   /* ENGINE_FLAG_LIMITED */
    uint32_t clamped; /* ENGINE_CLAMP_* */
    /* The assumed-temperature method, when evaluated (assumed_set and an assumed-temperature rating). */
    int evaluated;
    int applied;           /* the value was reduced */
    uint32_t reasons;      /* ENGINE_REASON_* */
    double assumed_c;      /* as asked */
    double effective_c;    /* the temperature the value was taken at */
    double value_full;     /* the full rated value at the actual conditions */
    int thrust_checked;    /* the rating has a thrust grid */
    double thrust_reduction_pct;
} engine_result;

typedef struct {
    double tla_deg;
    double value;
    int gate;         /* reported gate (with hysteresis), or -1 */
    int lower, upper; /* gates interpolated between, or -1 inside a capture zone */
    double fraction;  /* between lower's and upper's zone edges, 0 to 1 */
    int reverse;
    uint32_t flags;   /* ENGINE_FLAG_* */
    uint32_t clamped; /* ENGINE_CLAMP_* */
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
/* The bit of the named bleed in engine_conditions.bleeds, or -1. */
int engine_bleed_index(const char *name);
/* The name of gate i, or "" when there is none (as for gate -1). */
const char *engine_gate_name(int gate);
/* The rating's target at c: table, reduction (when c->assumed_set and the
   rating is an assumed-temperature rating), bleed corrections, redline. */
int engine_target(int rating, const engine_conditions *c, engine_result *out);
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
/* Raw count -> lever angle; clamped gets ENGINE_CLAMP_RAW and ENGINE_CLAMP_DEVICE. */
int engine_raw_to_tla(int lever, double raw, double *tla_deg, uint32_t *clamped);
/* Lever angle -> raw count, for marking notches; clamped: beyond the calibration. */
int engine_tla_to_raw(int lever, double tla_deg, double *raw, int *clamped);
#endif

#endif /* ENGINE_DECLARED */
