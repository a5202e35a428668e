/*
 * thrustmap_test.c - tests libthrustmap through its C interface.
 *
 * Built and run by TestCABI (cmd/libthrustmap/lib_test.go), which writes the
 * expected values from the Go API into a text file:
 *
 *     thrustmap_test EXPECTED_FILE
 *
 * Lines of the file (whitespace-separated; '#' starts a comment line):
 *
 *     gate   I NAME
 *     cond   K ALT_FT OAT_C MACH BLEEDS ON_GROUND ASSUMED_SET ASSUMED_C
 *     target K RATING VALUE
 *     sweep  LEVER N        followed by N lines:
 *     K RAW TLA VALUE GATE REVERSE FLAG_NAMES CLAMPED_NAMES    (names: a,b or -)
 *     reset  LEVER K RAW_IN RAW_BAND GATE_BAND GATE_AFTER_RESET
 *     abi    VERSION
 *     profile P PROFILE_PATH CALIBRATION_PATH
 *     info   P PARAMETER UNIT RATINGS GATES BLEEDS LEVERS     (counts)
 *     rating P I NAME
 *     bleed  P I NAME
 *     lever  P I ID
 *     dcond  K P ALT_FT OAT_C MACH BLEEDS ON_GROUND ASSUMED_SET ASSUMED_C
 *     detail K RATING VALUE FLAG_NAMES CLAMPED_NAMES EVALUATED APPLIED REASON_NAMES
 *            ASSUMED_C EFFECTIVE_C VALUE_FULL THRUST_CHECKED THRUST_REDUCTION_PCT
 *
 * A sweep is one lever's samples in order, from a fresh state. Profile 0 is
 * the demo with its calibration ("demo", "demo"); profile 1 is the test
 * profile the profile line names. A detail line is a thrustmap.Result from
 * Profile.Target at detail conditions K, on the profile those name. Every
 * value is compared bit for bit. Prints the failures and "ok: N checks" and
 * exits 0 when all pass, 1 otherwise.
 */
#define _POSIX_C_SOURCE 200809L

#include <inttypes.h>
#include <limits.h>
#include <math.h>
#include <pthread.h>
#include <stdarg.h>
#include <stdatomic.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "thrustmap.h"

#define MAX_CONDS 16
#define MAX_GATES 16
#define MAX_TARGETS 256
#define MAX_LEVERS 4
#define MAX_RESETS 8
#define MAX_DCONDS 16
#define MAX_DETAILS 128
#define MAX_NAMES 64
#define NPROFILES 2
#define TOL 1e-9 /* for the ranges of shared levers only; values are compared exactly */

typedef struct {
    int cond, raw;
    double tla, value;
    int gate, reverse;
    uint32_t flags;
} row;

typedef struct {
    int lever, n;
    row *rows;
    double lo[MAX_CONDS], hi[MAX_CONDS]; /* value range per condition */
} sweep;

typedef struct {
    int cond;
    char rating[64];
    double value;
} target;

typedef struct {
    int lever, cond, raw_in, raw_band, gate_band, gate_after;
} reset_case;

/* What a handle holds (info, rating, bleed and lever lines). */
typedef struct {
    char parameter[16], unit[16];
    int nratings, ngates, nbleeds, nlevers;
    char ratings[MAX_NAMES][64], bleeds[MAX_NAMES][64];
    int levers[MAX_LEVERS];
    int seen; /* an info line was read */
} profile_info;

typedef struct {
    int profile;
    thrustmap_conditions c;
} dcond;

typedef struct {
    int cond;
    char rating[64];
    double value, assumed_c, effective_c, value_full, pct;
    uint32_t flags, reasons;
    int evaluated, applied, thrust_checked;
} detail;

static int ngates, nconds, ntargets, nsweeps, nresets;
static char gate_names[MAX_GATES][64];
static thrustmap_conditions conds[MAX_CONDS];
static target targets[MAX_TARGETS];
static sweep sweeps[MAX_LEVERS];
static reset_case resets[MAX_RESETS];
static int abi = -1, ndconds, ndetails;
static char profile1[512], calibration1[512];
static profile_info infos[NPROFILES];
static dcond dconds[MAX_DCONDS];
static detail details[MAX_DETAILS];

static atomic_long checks;
static atomic_long failures;
static pthread_mutex_t print_mu = PTHREAD_MUTEX_INITIALIZER;

/* check counts one check and reports it when it fails. */
#define check(ok, ...) check_at(__LINE__, (ok), __VA_ARGS__)

static int check_at(int line, int ok, const char *fmt, ...) __attribute__((format(printf, 3, 4)));

static int check_at(int line, int ok, const char *fmt, ...)
{
    atomic_fetch_add(&checks, 1);
    if (ok)
        return 1;
    long n = atomic_fetch_add(&failures, 1);
    if (n < 50) {
        va_list ap;
        pthread_mutex_lock(&print_mu);
        fprintf(stderr, "thrustmap_test.c:%d: FAIL: ", line);
        va_start(ap, fmt);
        vfprintf(stderr, fmt, ap);
        va_end(ap);
        fputc('\n', stderr);
        pthread_mutex_unlock(&print_mu);
    }
    return 0;
}

/* same: bit-equal values (NaN equals NaN); the library must give exactly what
 * the Go API gave. */
static int same(double a, double b) { return a == b || (isnan(a) && isnan(b)); }

/* The kinds of names in the expected file, mapped to the header's bits. */
enum { FLAGS, CLAMPED, REASONS };

typedef struct {
    const char *name;
    uint32_t bit;
} named_bit;

static const named_bit flag_bits[] = {
    {"raised", THRUSTMAP_FLAG_RAISED},
    {"limited", THRUSTMAP_FLAG_LIMITED},
    {"interlock", THRUSTMAP_FLAG_INTERLOCK},
    {"fallback", THRUSTMAP_FLAG_FALLBACK},
    {NULL, 0},
};
static const named_bit clamp_bits[] = {
    {"altitude", THRUSTMAP_CLAMPED_ALTITUDE},
    {"temperature", THRUSTMAP_CLAMPED_TEMPERATURE},
    {"mach", THRUSTMAP_CLAMPED_MACH},
    {"raw", THRUSTMAP_CLAMPED_RAW},
    {"device", THRUSTMAP_CLAMPED_DEVICE},
    {"lever", THRUSTMAP_CLAMPED_LEVER},
    {NULL, 0},
};
/* The reason codes as the Go API and the command line's JSON name them. */
static const named_bit reason_bits[] = {
    {"ta_not_above_oat", THRUSTMAP_REASON_TA_NOT_ABOVE_OAT},
    {"ta_below_corner", THRUSTMAP_REASON_TA_BELOW_CORNER},
    {"ta_above_max", THRUSTMAP_REASON_TA_ABOVE_MAX},
    {"reduction_limited", THRUSTMAP_REASON_REDUCTION_LIMITED},
    {"reduction_not_checked", THRUSTMAP_REASON_REDUCTION_NOT_CHECKED},
    {NULL, 0},
};

/* name_bits maps a list of names ("a,b" or "-") of a kind to bits of the
 * header's constants (clamped inputs with THRUSTMAP_FLAG_CLAMPED); unknown
 * names are a failure. */
static uint32_t name_bits(const char *list, int kind)
{
    const named_bit *table = kind == FLAGS ? flag_bits : kind == CLAMPED ? clamp_bits : reason_bits;
    uint32_t bits = 0;
    if (strcmp(list, "-") == 0)
        return 0;
    char buf[256];
    snprintf(buf, sizeof buf, "%s", list);
    for (char *name = buf, *next; name; name = next) {
        next = strchr(name, ',');
        if (next)
            *next++ = '\0';
        int found = 0;
        for (const named_bit *b = table; b->name; b++)
            if (strcmp(name, b->name) == 0) {
                bits |= b->bit | (kind == CLAMPED ? THRUSTMAP_FLAG_CLAMPED : 0);
                found = 1;
            }
        check(found, "expected file names unknown %s %s",
              kind == FLAGS ? "flag" : kind == CLAMPED ? "clamped input" : "reason", name);
    }
    return bits;
}

/* load reads the expected file; returns 0 on a malformed file. */
static int load(const char *path)
{
    FILE *f = fopen(path, "r");
    if (!f) {
        perror(path);
        return 0;
    }
    char line[512], word[32];
    int lineno = 0;
    while (fgets(line, sizeof line, f)) {
        lineno++;
        if (line[0] == '#' || line[0] == '\n' || sscanf(line, "%31s", word) != 1)
            continue;
        int ok = 0;
        if (strcmp(word, "gate") == 0 && ngates < MAX_GATES) {
            int i;
            ok = sscanf(line, "gate %d %63s", &i, gate_names[ngates]) == 2 && i == ngates;
            ngates++;
        } else if (strcmp(word, "cond") == 0 && nconds < MAX_CONDS) {
            thrustmap_conditions *c = &conds[nconds];
            int k;
            ok = sscanf(line, "cond %d %lf %lf %lf %" SCNu64 " %d %d %lf", &k, &c->alt_ft, &c->oat_c, &c->mach,
                        &c->bleeds, &c->on_ground, &c->assumed_set, &c->assumed_c) == 8 &&
                 k == nconds;
            nconds++;
        } else if (strcmp(word, "target") == 0 && ntargets < MAX_TARGETS) {
            target *t = &targets[ntargets++];
            ok = sscanf(line, "target %d %63s %lf", &t->cond, t->rating, &t->value) == 3 && t->cond < nconds;
        } else if (strcmp(word, "reset") == 0 && nresets < MAX_RESETS) {
            reset_case *r = &resets[nresets++];
            ok = sscanf(line, "reset %d %d %d %d %d %d", &r->lever, &r->cond, &r->raw_in, &r->raw_band, &r->gate_band,
                        &r->gate_after) == 6;
        } else if (strcmp(word, "sweep") == 0 && nsweeps < MAX_LEVERS) {
            sweep *s = &sweeps[nsweeps++];
            ok = sscanf(line, "sweep %d %d", &s->lever, &s->n) == 2 && s->n > 0;
            if (!ok)
                break;
            s->rows = calloc((size_t)s->n, sizeof(row));
            for (int k = 0; k < MAX_CONDS; k++)
                s->lo[k] = INFINITY, s->hi[k] = -INFINITY;
            for (int i = 0; ok && i < s->n; i++) {
                row *r = &s->rows[i];
                char fl[128], cl[128];
                ok = fgets(line, sizeof line, f) != NULL;
                lineno++;
                ok = ok && sscanf(line, "%d %d %lf %lf %d %d %127s %127s", &r->cond, &r->raw, &r->tla, &r->value,
                                  &r->gate, &r->reverse, fl, cl) == 8 &&
                     r->cond >= 0 && r->cond < nconds;
                if (ok) {
                    r->flags = name_bits(fl, FLAGS) | name_bits(cl, CLAMPED);
                    s->lo[r->cond] = fmin(s->lo[r->cond], r->value);
                    s->hi[r->cond] = fmax(s->hi[r->cond], r->value);
                }
            }
        } else if (strcmp(word, "abi") == 0) {
            ok = sscanf(line, "abi %d", &abi) == 1;
        } else if (strcmp(word, "profile") == 0) {
            ok = sscanf(line, "profile 1 %511s %511s", profile1, calibration1) == 2;
        } else if (strcmp(word, "info") == 0) {
            int p;
            ok = sscanf(line, "info %d", &p) == 1 && p >= 0 && p < NPROFILES;
            if (ok) {
                profile_info *in = &infos[p];
                ok = sscanf(line, "info %*d %15s %15s %d %d %d %d", in->parameter, in->unit, &in->nratings,
                            &in->ngates, &in->nbleeds, &in->nlevers) == 6 &&
                     in->nratings <= MAX_NAMES && in->nbleeds <= MAX_NAMES && in->nlevers <= MAX_LEVERS;
                in->seen = 1;
            }
        } else if (strcmp(word, "rating") == 0 || strcmp(word, "bleed") == 0) {
            int p, i;
            char name[64];
            ok = sscanf(line, "%*s %d %d %63s", &p, &i, name) == 3 && p >= 0 && p < NPROFILES && i >= 0 &&
                 i < MAX_NAMES;
            if (ok)
                strcpy(word[0] == 'r' ? infos[p].ratings[i] : infos[p].bleeds[i], name);
        } else if (strcmp(word, "lever") == 0) {
            int p, i, id;
            ok = sscanf(line, "lever %d %d %d", &p, &i, &id) == 3 && p >= 0 && p < NPROFILES && i >= 0 &&
                 i < MAX_LEVERS;
            if (ok)
                infos[p].levers[i] = id;
        } else if (strcmp(word, "dcond") == 0 && ndconds < MAX_DCONDS) {
            dcond *d = &dconds[ndconds];
            thrustmap_conditions *c = &d->c;
            int k;
            ok = sscanf(line, "dcond %d %d %lf %lf %lf %" SCNu64 " %d %d %lf", &k, &d->profile, &c->alt_ft, &c->oat_c,
                        &c->mach, &c->bleeds, &c->on_ground, &c->assumed_set, &c->assumed_c) == 9 &&
                 k == ndconds && d->profile >= 0 && d->profile < NPROFILES;
            ndconds++;
        } else if (strcmp(word, "detail") == 0 && ndetails < MAX_DETAILS) {
            detail *d = &details[ndetails++];
            char fl[128], cl[128], rs[256];
            ok = sscanf(line, "detail %d %63s %lf %127s %127s %d %d %255s %lf %lf %lf %d %lf", &d->cond, d->rating,
                        &d->value, fl, cl, &d->evaluated, &d->applied, rs, &d->assumed_c, &d->effective_c,
                        &d->value_full, &d->thrust_checked, &d->pct) == 13 &&
                 d->cond >= 0 && d->cond < ndconds;
            if (ok) {
                d->flags = name_bits(fl, FLAGS) | name_bits(cl, CLAMPED);
                d->reasons = name_bits(rs, REASONS);
            }
        }
        if (!ok) {
            fprintf(stderr, "%s:%d: malformed line: %s", path, lineno, line);
            fclose(f);
            return 0;
        }
    }
    fclose(f);
    return ngates > 0 && nconds > 0 && ntargets > 0 && nsweeps > 0 && nresets > 0 && abi > 0 && profile1[0] &&
           infos[0].seen && infos[1].seen && ndetails > 0;
}

/* last_error returns handle h's last error message in a static-size buffer. */
static const char *last_error(int64_t h, char *buf, int len)
{
    if (thrustmap_error(h, buf, len) < 0)
        snprintf(buf, (size_t)len, "(thrustmap_error failed)");
    return buf;
}

/* ---------------------------------------------------------------- sweeps */

typedef struct {
    int64_t h;
    const sweep *s;
    int exact; /* compare every sample; else (shared lever) only ranges */
    int batch; /* through thrustmap_command_levers, one lever a call */
} sweep_job;

/* run_sweep drives one lever through its expected samples. */
static void *run_sweep(void *arg)
{
    const sweep_job *job = arg;
    const sweep *s = job->s;
    for (int i = 0; i < s->n; i++) {
        const row *want = &s->rows[i];
        thrustmap_result got;
        memset(&got, 0xff, sizeof got);
        int rc = job->batch ? thrustmap_command_levers(job->h, 1, &s->lever, &want->raw, &conds[want->cond], &got)
                            : thrustmap_command(job->h, s->lever, want->raw, &conds[want->cond], &got);
        if (!check(rc == THRUSTMAP_OK, "lever %d raw %d cond %d: rc %d", s->lever, want->raw, want->cond, rc))
            continue;
        if (job->exact) {
            check(same(got.tla_deg, want->tla) && same(got.value, want->value) && got.gate == want->gate &&
                      got.reverse == want->reverse && got.flags == want->flags,
                  "lever %d raw %d cond %d (sample %d): got tla %.17g value %.17g gate %d reverse %d flags %#x; "
                  "want tla %.17g value %.17g gate %d reverse %d flags %#x",
                  s->lever, want->raw, want->cond, i, got.tla_deg, got.value, got.gate, got.reverse,
                  (unsigned)got.flags, want->tla, want->value, want->gate, want->reverse, (unsigned)want->flags);
        } else {
            /* Other threads move the same lever: the deadband and hysteresis
             * see their samples too, so check only what must hold anyway. */
            check(got.gate >= -1 && got.gate < ngates && (got.reverse == 0 || got.reverse == 1) &&
                      got.tla_deg >= -18 - TOL && got.tla_deg <= 55 + TOL &&
                      got.value >= s->lo[want->cond] - TOL && got.value <= s->hi[want->cond] + TOL,
                  "shared lever %d raw %d cond %d: tla %g value %g (range %g..%g) gate %d reverse %d", s->lever,
                  want->raw, want->cond, got.tla_deg, got.value, s->lo[want->cond], s->hi[want->cond], got.gate,
                  got.reverse);
        }
    }
    return NULL;
}

/* run_threads runs the jobs on one thread each and waits for them. */
static void run_threads(void *(*fn)(void *), void *jobs, size_t size, int n)
{
    pthread_t th[32];
    for (int i = 0; i < n; i++)
        if (pthread_create(&th[i], NULL, fn, (char *)jobs + (size_t)i * size) != 0) {
            fprintf(stderr, "pthread_create failed\n");
            exit(2);
        }
    for (int i = 0; i < n; i++)
        pthread_join(th[i], NULL);
}

/* reader calls the lever-free functions while the levers move. */
static void *reader(void *arg)
{
    int64_t h = *(const int64_t *)arg;
    char buf[256];
    for (int rep = 0; rep < 200; rep++) {
        for (int i = 0; i < ntargets; i++) {
            double v = NAN;
            int rc = thrustmap_target(h, targets[i].rating, &conds[targets[i].cond], &v);
            check(rc == THRUSTMAP_OK && same(v, targets[i].value), "concurrent target %s cond %d: rc %d value %.17g",
                  targets[i].rating, targets[i].cond, rc, v);
        }
        for (int g = 0; g < ngates; g++) {
            const char *name = thrustmap_gate_name(h, g);
            check(name && strcmp(name, gate_names[g]) == 0, "concurrent gate name %d", g);
        }
        check(thrustmap_error(h, buf, sizeof buf) >= 0, "concurrent thrustmap_error");
    }
    return NULL;
}

/* ---------------------------------------------------------------- close */

typedef struct {
    int64_t h;
    int lever;
    atomic_long *calls;
    int saw_closed;
} closer_job;

/* hammer commands until the handle is closed under it. */
static void *hammer(void *arg)
{
    closer_job *job = arg;
    for (long i = 0;; i++) {
        thrustmap_result out;
        int rc = thrustmap_command(job->h, job->lever, 200 + (int)(i % 3700), &conds[0], &out);
        if (rc == THRUSTMAP_EBADHANDLE) {
            job->saw_closed = 1;
            return NULL;
        }
        if (!check(rc == THRUSTMAP_OK, "command during close: rc %d", rc))
            return NULL;
        atomic_fetch_add(job->calls, 1);
    }
}

static void test_close_while_calling(void)
{
    int64_t h = thrustmap_open("demo", "demo");
    if (!check(h > 0, "open for the close test"))
        return;
    atomic_long calls = 0;
    closer_job jobs[3] = {{h, 1, &calls, 0}, {h, 2, &calls, 0}, {h, 1, &calls, 0}};
    pthread_t th[3];
    for (int i = 0; i < 3; i++)
        pthread_create(&th[i], NULL, hammer, &jobs[i]);
    while (atomic_load(&calls) < 3000 && atomic_load(&failures) == 0)
        ; /* let them run */
    thrustmap_close(h);
    for (int i = 0; i < 3; i++) {
        pthread_join(th[i], NULL);
        check(jobs[i].saw_closed, "thread %d saw its handle closed", i);
    }
}

/* ---------------------------------------------------------------- errors */

static void test_errors(int64_t h)
{
    char buf[512], small[16];
    thrustmap_result out;
    double v;
    const int64_t bad = 987654321;

    /* Failed opens report through handle 0. */
    check(thrustmap_open("no-such-profile.toml", NULL) == 0, "open of a missing profile fails");
    check(thrustmap_error(0, buf, sizeof buf) > 0 && strstr(buf, "no-such-profile.toml"),
          "open error names the file: %s", buf);
    check(thrustmap_open(NULL, "demo") == 0, "open(NULL) fails");
    check(thrustmap_error(0, buf, sizeof buf) > 0 && strstr(buf, "NULL"), "open(NULL) message: %s", buf);
    check(thrustmap_open("demo", "no-such-calibration.toml") == 0, "open with a missing calibration fails");

    /* Bad handles. */
    check(thrustmap_command(bad, 1, 1000, &conds[0], &out) == THRUSTMAP_EBADHANDLE, "command on a bad handle");
    check(thrustmap_error(0, buf, sizeof buf) > 0 && strstr(buf, "987654321") && strstr(buf, "not open"),
          "bad handle message: %s", buf);
    check(thrustmap_command(0, 1, 1000, &conds[0], &out) == THRUSTMAP_EBADHANDLE, "command on handle 0");
    check(thrustmap_target(bad, "takeoff", &conds[0], &v) == THRUSTMAP_EBADHANDLE, "target on a bad handle");
    check(thrustmap_reset(bad, 1) == THRUSTMAP_EBADHANDLE, "reset on a bad handle");
    check(thrustmap_gate_name(bad, 0) == NULL, "gate name on a bad handle");
    check(thrustmap_error(bad, buf, sizeof buf) == THRUSTMAP_EBADHANDLE, "error of a bad handle");
    check(thrustmap_error(-3, buf, sizeof buf) == THRUSTMAP_EBADHANDLE, "error of a negative handle");
    thrustmap_close(bad); /* closing what is not open does nothing */

    /* Bad arguments, each with its message on the handle. */
    check(thrustmap_command(h, 1, 1000, NULL, &out) == THRUSTMAP_EINVAL, "command with NULL conditions");
    check(thrustmap_command(h, 1, 1000, &conds[0], NULL) == THRUSTMAP_EINVAL, "command with NULL result");
    check(thrustmap_command(h, 7, 1000, &conds[0], &out) == THRUSTMAP_EINVAL, "command on lever 7");
    check(strstr(last_error(h, buf, sizeof buf), "lever 7") != NULL, "lever 7 message: %s", buf);
    check(thrustmap_reset(h, 7) == THRUSTMAP_EINVAL, "reset of lever 7");
    thrustmap_conditions c = conds[0];
    c.bleeds = 1u << 20;
    check(thrustmap_command(h, 1, 1000, &c, &out) == THRUSTMAP_EINVAL, "unknown bleed bit");
    check(strstr(last_error(h, buf, sizeof buf), "bleed") != NULL, "bleed message: %s", buf);
    c = conds[0];
    c.alt_ft = 200000;
    check(thrustmap_command(h, 1, 1000, &c, &out) == THRUSTMAP_EINVAL, "altitude outside the atmosphere");
    c.alt_ft = NAN;
    check(thrustmap_target(h, "takeoff", &c, &v) == THRUSTMAP_EINVAL, "NaN altitude");
    check(thrustmap_target(h, NULL, &conds[0], &v) == THRUSTMAP_EINVAL, "NULL rating");
    check(thrustmap_target(h, "takeoff", &conds[0], NULL) == THRUSTMAP_EINVAL, "NULL target result");
    check(thrustmap_gate_name(h, -1) == NULL, "gate -1 has no name");
    check(thrustmap_gate_name(h, ngates) == NULL, "gate %d is out of range", ngates);
    check(strstr(last_error(h, buf, sizeof buf), "out of range") != NULL, "gate range message: %s", buf);
    check(thrustmap_error(h, NULL, 4) == THRUSTMAP_EINVAL, "error into NULL with len 4");
    check(thrustmap_error(h, buf, -1) == THRUSTMAP_EINVAL, "error with len -1");

    /* Unknown rating, then the message cut to every length. */
    v = 12345;
    check(thrustmap_target(h, "warp-speed", &conds[0], &v) == THRUSTMAP_EINVAL && v == 12345,
          "unknown rating fails and leaves *out");
    int n = thrustmap_error(h, NULL, 0);
    check(n > 0 && n < (int)sizeof buf, "message length %d", n);
    check(thrustmap_error(h, buf, sizeof buf) == n && (int)strlen(buf) == n, "full message has length %d", n);
    check(strstr(buf, "unknown rating") && strstr(buf, "warp-speed"), "unknown rating message: %s", buf);
    memset(small, 'x', sizeof small);
    check(thrustmap_error(h, small, 8) == n && strlen(small) <= 7 && strncmp(small, buf, strlen(small)) == 0 &&
              small[8] == 'x',
          "message cut to 8 bytes: \"%s\"", small);

    /* A message with multi-byte characters ("°C") is cut at character
     * boundaries: every prefix is whole UTF-8. */
    c = conds[0];
    c.oat_c = INFINITY;
    check(thrustmap_target(h, "takeoff", &c, &v) == THRUSTMAP_EINVAL, "infinite OAT");
    n = thrustmap_error(h, buf, sizeof buf);
    check(n > 0 && strstr(buf, "\xc2\xb0") != NULL, "conditions message has a degree sign: %s", buf);
    for (int len = 1; len <= n + 2; len++) {
        char cut[512];
        memset(cut, 'x', sizeof cut);
        int got = thrustmap_error(h, cut, len);
        size_t k = strlen(cut);
        int whole = 1; /* the cut does not end inside a character */
        if (k > 0) {
            size_t start = k - 1;
            while (start > 0 && ((unsigned char)cut[start] & 0xc0) == 0x80)
                start--;
            unsigned char lead = (unsigned char)cut[start];
            size_t need = lead < 0x80 ? 1 : lead >= 0xf0 ? 4 : lead >= 0xe0 ? 3 : 2;
            whole = k - start == need;
        }
        check(got == n && (int)k < len && strncmp(cut, buf, k) == 0 && whole && (int)k >= len - 4 &&
                  cut[len] == 'x',
              "message cut to %d bytes: got %d, %d bytes", len, got, (int)k);
    }
}

/* ---------------------------------------------------------------- version 2 */

/* test_info checks what handle h of profile p holds against the Go API. */
static void test_info(int64_t h, int p)
{
    const profile_info *in = &infos[p];
    const char *s = thrustmap_parameter(h);
    check(s && strcmp(s, in->parameter) == 0, "profile %d: parameter %s, want %s", p, s ? s : "NULL", in->parameter);
    s = thrustmap_unit(h);
    check(s && strcmp(s, in->unit) == 0, "profile %d: unit %s, want %s", p, s ? s : "NULL", in->unit);
    check(thrustmap_rating_count(h) == in->nratings, "profile %d: %d ratings, want %d", p, thrustmap_rating_count(h),
          in->nratings);
    for (int i = 0; i < in->nratings; i++) {
        s = thrustmap_rating_name(h, i);
        check(s && strcmp(s, in->ratings[i]) == 0, "profile %d: rating %d is %s, want %s", p, i, s ? s : "NULL",
              in->ratings[i]);
    }
    check(thrustmap_gate_count(h) == in->ngates, "profile %d: %d gates, want %d", p, thrustmap_gate_count(h),
          in->ngates);
    check(p != 0 || in->ngates == ngates, "the demo's gate lines and its gate count agree");
    check(thrustmap_bleed_count(h) == in->nbleeds, "profile %d: %d bleeds, want %d", p, thrustmap_bleed_count(h),
          in->nbleeds);
    for (int i = 0; i < in->nbleeds; i++) {
        s = thrustmap_bleed_name(h, i);
        check(s && strcmp(s, in->bleeds[i]) == 0, "profile %d: bleed %d is %s, want %s", p, i, s ? s : "NULL",
              in->bleeds[i]);
        check(thrustmap_bleed_bit(h, in->bleeds[i]) == i, "profile %d: bleed %s has bit %d, want %d", p,
              in->bleeds[i], thrustmap_bleed_bit(h, in->bleeds[i]), i);
    }
    check(thrustmap_lever_count(h) == in->nlevers, "profile %d: %d levers, want %d", p, thrustmap_lever_count(h),
          in->nlevers);
    check(thrustmap_lever_ids(h, NULL, 0) == in->nlevers, "profile %d: lever_ids(NULL, 0) gives the count", p);
    int ids[MAX_LEVERS + 1];
    for (int i = 0; i <= MAX_LEVERS; i++)
        ids[i] = INT_MIN;
    check(thrustmap_lever_ids(h, ids, MAX_LEVERS + 1) == in->nlevers, "profile %d: lever_ids", p);
    for (int i = 0; i < in->nlevers; i++)
        check(ids[i] == in->levers[i], "profile %d: lever %d has id %d, want %d", p, i, ids[i], in->levers[i]);
    check(ids[in->nlevers] == INT_MIN, "profile %d: lever_ids wrote past the levers", p);
    if (in->nlevers > 1) {
        int one[2] = {INT_MIN, INT_MIN};
        check(thrustmap_lever_ids(h, one, 1) == in->nlevers && one[0] == in->levers[0] && one[1] == INT_MIN,
              "profile %d: lever_ids into one slot writes one id and returns the count", p);
    }
}

/* test_details checks every target detail against Profile.Target, and
 * thrustmap_target against its value. hs[p] is a handle of profile p. */
static void test_details(const int64_t hs[NPROFILES])
{
    char buf[512];
    for (int i = 0; i < ndetails; i++) {
        const detail *d = &details[i];
        const dcond *dc = &dconds[d->cond];
        int64_t h = hs[dc->profile];
        thrustmap_target_result got;
        memset(&got, 0xab, sizeof got);
        int rc = thrustmap_target_detail(h, d->rating, &dc->c, &got);
        if (!check(rc == THRUSTMAP_OK, "detail %s at %d: rc %d (%s)", d->rating, d->cond, rc,
                   last_error(h, buf, sizeof buf)))
            continue;
        /* What the header gives where the method did not run or had no
         * thrust grid. */
        double assumed = d->evaluated ? d->assumed_c : NAN, effective = d->evaluated ? d->effective_c : NAN;
        double full = d->evaluated ? d->value_full : d->value;
        double pct = d->evaluated && d->thrust_checked ? d->pct : NAN;
        check(same(got.value, d->value) && got.flags == d->flags && got.reduction_evaluated == d->evaluated &&
                  got.reduction_applied == d->applied && got.reasons == d->reasons && same(got.assumed_c, assumed) &&
                  same(got.effective_c, effective) && same(got.value_full, full) &&
                  same(got.thrust_reduction_pct, pct),
              "detail %s at %d: got value %.17g flags %#x evaluated %d applied %d reasons %#x assumed %.17g "
              "effective %.17g full %.17g pct %.17g; want %.17g %#x %d %d %#x %.17g %.17g %.17g %.17g",
              d->rating, d->cond, got.value, (unsigned)got.flags, got.reduction_evaluated, got.reduction_applied,
              (unsigned)got.reasons, got.assumed_c, got.effective_c, got.value_full, got.thrust_reduction_pct,
              d->value, (unsigned)d->flags, d->evaluated, d->applied, (unsigned)d->reasons, assumed, effective, full,
              pct);
        double v = NAN;
        check(thrustmap_target(h, d->rating, &dc->c, &v) == THRUSTMAP_OK && same(v, d->value),
              "target %s at %d: %.17g, want %.17g", d->rating, d->cond, v, d->value);
    }
}

/* same_result compares two commands field by field, bit for bit. */
static int same_result(const thrustmap_result *a, const thrustmap_result *b)
{
    return same(a->tla_deg, b->tla_deg) && same(a->value, b->value) && a->gate == b->gate &&
           a->reverse == b->reverse && a->flags == b->flags;
}

/* test_batch: thrustmap_command_levers with every lever of a frame gives
 * what the Go API gives each lever (the sweeps, side by side), and exactly
 * what single calls give in the same order, also with a lever twice and
 * with the most levers a call takes. */
static void test_batch(void)
{
    char buf[512];
    int64_t h = thrustmap_open("demo", "demo");
    if (!check(h > 0, "open for the batch test: %s", last_error(0, buf, sizeof buf)))
        return;
    int ok = nsweeps > 1;
    for (int k = 1; k < nsweeps; k++) {
        ok = ok && sweeps[k].n == sweeps[0].n;
        for (int i = 0; ok && i < sweeps[0].n; i++)
            ok = sweeps[k].rows[i].cond == sweeps[0].rows[i].cond;
    }
    if (check(ok, "the sweeps have the same frames, so they run side by side")) {
        int levers[MAX_LEVERS], raws[MAX_LEVERS];
        thrustmap_result out[MAX_LEVERS];
        for (int i = 0; i < sweeps[0].n; i++) {
            for (int k = 0; k < nsweeps; k++)
                levers[k] = sweeps[k].lever, raws[k] = sweeps[k].rows[i].raw;
            int rc = thrustmap_command_levers(h, nsweeps, levers, raws, &conds[sweeps[0].rows[i].cond], out);
            if (!check(rc == THRUSTMAP_OK, "batch frame %d: rc %d (%s)", i, rc, last_error(h, buf, sizeof buf)))
                break;
            for (int k = 0; k < nsweeps; k++) {
                const row *want = &sweeps[k].rows[i];
                thrustmap_result w = {want->tla, want->value, want->gate, want->reverse, want->flags};
                check(same_result(&out[k], &w),
                      "batch frame %d lever %d raw %d: got tla %.17g value %.17g gate %d flags %#x; want tla %.17g "
                      "value %.17g gate %d flags %#x",
                      i, levers[k], raws[k], out[k].tla_deg, out[k].value, out[k].gate, (unsigned)out[k].flags,
                      w.tla_deg, w.value, w.gate, (unsigned)w.flags);
            }
        }
    }
    thrustmap_close(h);

    int64_t a = thrustmap_open("demo", "demo"), b = thrustmap_open("demo", "demo");
    if (!check(a > 0 && b > 0, "open two handles for the batch test"))
        return;
    uint32_t rnd = 12345;
    int levers[THRUSTMAP_MAX_BATCH], raws[THRUSTMAP_MAX_BATCH];
    thrustmap_result out[THRUSTMAP_MAX_BATCH];
    for (int frame = 0; frame < 3000; frame++) {
        int n = frame % 50 == 0 ? THRUSTMAP_MAX_BATCH : 1 + frame % 4;
        const thrustmap_conditions *c = &conds[(frame / 100) % nconds];
        for (int k = 0; k < n; k++) {
            rnd = rnd * 1664525u + 1013904223u; /* a linear congruential generator (Numerical Recipes) */
            levers[k] = 1 + (int)(rnd >> 31);
            raws[k] = 200 + (int)((rnd >> 8) % 3700);
        }
        int rc = thrustmap_command_levers(a, n, levers, raws, c, out);
        if (!check(rc == THRUSTMAP_OK, "frame %d: batch of %d: rc %d (%s)", frame, n, rc,
                   last_error(a, buf, sizeof buf)))
            break;
        for (int k = 0; k < n; k++) {
            thrustmap_result one;
            rc = thrustmap_command(b, levers[k], raws[k], c, &one);
            check(rc == THRUSTMAP_OK && same_result(&out[k], &one),
                  "frame %d: batch lever %d (%d of %d) raw %d: tla %.17g value %.17g gate %d; single: tla %.17g value "
                  "%.17g gate %d",
                  frame, levers[k], k, n, raws[k], out[k].tla_deg, out[k].value, out[k].gate, one.tla_deg, one.value,
                  one.gate);
        }
    }
    thrustmap_close(a);
    thrustmap_close(b);
}

/* test_compute_error: on the test profile no gate is active in the air, a
 * computation error on valid arguments. */
static void test_compute_error(void)
{
    char buf[512];
    int64_t h = thrustmap_open(profile1, calibration1);
    if (!check(h > 0, "open %s with %s: %s", profile1, calibration1, last_error(0, buf, sizeof buf)))
        return;
    thrustmap_conditions air = {.alt_ft = 5000, .oat_c = 5}, ground = {.oat_c = 15, .on_ground = 1};
    thrustmap_result out;
    int lever = 5, raw = 500;
    check(thrustmap_command(h, 5, 500, &ground, &out) == THRUSTMAP_OK, "lever 5 on the ground");
    check(thrustmap_command(h, 5, 500, &air, &out) == THRUSTMAP_ECOMPUTE, "lever 5 in the air: ECOMPUTE");
    check(strstr(last_error(h, buf, sizeof buf), "no gate is active") != NULL, "ECOMPUTE message: %s", buf);
    check(thrustmap_command_levers(h, 1, &lever, &raw, &air, &out) == THRUSTMAP_ECOMPUTE, "batch in the air");
    check(strstr(last_error(h, buf, sizeof buf), "levers[0] = 5") && strstr(buf, "no gate is active"),
          "batch ECOMPUTE message names the lever: %s", buf);
    check(thrustmap_command(h, 1, 500, &ground, &out) == THRUSTMAP_EINVAL, "lever 1 is not in this calibration");
    test_info(h, 1);
    thrustmap_close(h);
}

/* check_not_open calls every function with handle h, which is not open: each
 * says so, and nothing crashes. */
static void check_not_open(int64_t h, const char *what)
{
    char buf[256];
    thrustmap_result out;
    thrustmap_target_result tr;
    double v;
    int ids[4], lever = 1, raw = 1000;
    check(thrustmap_command(h, 1, 1000, &conds[0], &out) == THRUSTMAP_EBADHANDLE, "%s: command", what);
    check(thrustmap_error(0, buf, sizeof buf) > 0 && strstr(buf, "not open"), "%s: message %s", what, buf);
    check(thrustmap_command_levers(h, 1, &lever, &raw, &conds[0], &out) == THRUSTMAP_EBADHANDLE,
          "%s: command_levers", what);
    check(thrustmap_reset(h, 1) == THRUSTMAP_EBADHANDLE, "%s: reset", what);
    check(thrustmap_target(h, "takeoff", &conds[0], &v) == THRUSTMAP_EBADHANDLE, "%s: target", what);
    check(thrustmap_target_detail(h, "takeoff", &conds[0], &tr) == THRUSTMAP_EBADHANDLE, "%s: target_detail", what);
    check(thrustmap_bleed_bit(h, "wing-anti-ice") == THRUSTMAP_EBADHANDLE, "%s: bleed_bit", what);
    check(thrustmap_bleed_count(h) == THRUSTMAP_EBADHANDLE, "%s: bleed_count", what);
    check(thrustmap_bleed_name(h, 0) == NULL, "%s: bleed_name", what);
    check(thrustmap_parameter(h) == NULL, "%s: parameter", what);
    check(thrustmap_unit(h) == NULL, "%s: unit", what);
    check(thrustmap_rating_count(h) == THRUSTMAP_EBADHANDLE, "%s: rating_count", what);
    check(thrustmap_rating_name(h, 0) == NULL, "%s: rating_name", what);
    check(thrustmap_gate_count(h) == THRUSTMAP_EBADHANDLE, "%s: gate_count", what);
    check(thrustmap_gate_name(h, 0) == NULL, "%s: gate_name", what);
    check(thrustmap_lever_count(h) == THRUSTMAP_EBADHANDLE, "%s: lever_count", what);
    check(thrustmap_lever_ids(h, ids, 4) == THRUSTMAP_EBADHANDLE, "%s: lever_ids", what);
    if (h != 0)
        check(thrustmap_error(h, buf, sizeof buf) == THRUSTMAP_EBADHANDLE, "%s: error", what);
    thrustmap_close(h); /* closing what is not open does nothing */
}

/* expect_einval checks that a call returned THRUSTMAP_EINVAL with a message
 * on handle h containing want. */
#define expect_einval(h, rc, want, ...) expect_einval_at(__LINE__, (h), (rc), (want), __VA_ARGS__)

static void expect_einval_at(int line, int64_t h, int rc, const char *want, const char *what)
{
    char buf[512];
    last_error(h, buf, sizeof buf);
    check_at(line, rc == THRUSTMAP_EINVAL && strstr(buf, want) != NULL, "%s: rc %d, message \"%s\", want EINVAL and \"%s\"",
             what, rc, buf, want);
}

/* test_faults drives every entry point with what a plugin may get wrong:
 * NULL pointers, unknown names, out-of-range counts and indexes, non-finite
 * numbers, bleed bits the profile lacks. Each gives THRUSTMAP_EINVAL and a
 * message, and leaves the outputs alone. */
static void test_faults(int64_t h)
{
    char buf[512];
    thrustmap_result out[THRUSTMAP_MAX_BATCH + 1], saved[THRUSTMAP_MAX_BATCH + 1];
    thrustmap_target_result tr, tr_saved;
    double v;
    int levers[THRUSTMAP_MAX_BATCH + 1], raws[THRUSTMAP_MAX_BATCH + 1];
    for (int i = 0; i <= THRUSTMAP_MAX_BATCH; i++)
        levers[i] = 1 + i % 2, raws[i] = 1000 + 10 * i;
    memset(out, 0x5a, sizeof out);
    memcpy(saved, out, sizeof out);
    memset(&tr, 0x5a, sizeof tr);
    tr_saved = tr;
    const thrustmap_conditions *c0 = &conds[0];

    /* Handles that are not open. */
    check_not_open(0, "handle 0");
    check_not_open(-3, "handle -3");
    check_not_open(987654321, "handle 987654321");
    check_not_open(INT64_MAX, "handle INT64_MAX");
    int64_t closed = thrustmap_open("demo", "demo");
    thrustmap_close(closed);
    check_not_open(closed, "a closed handle");

    /* NULL pointers. */
    check(thrustmap_open(NULL, NULL) == 0, "open(NULL, NULL)");
    expect_einval(h, thrustmap_command_levers(h, 2, NULL, raws, c0, out), "NULL", "command_levers levers NULL");
    expect_einval(h, thrustmap_command_levers(h, 2, levers, NULL, c0, out), "NULL", "command_levers raws NULL");
    expect_einval(h, thrustmap_command_levers(h, 2, levers, raws, NULL, out), "NULL", "command_levers conditions NULL");
    expect_einval(h, thrustmap_command_levers(h, 2, levers, raws, c0, NULL), "NULL", "command_levers out NULL");
    expect_einval(h, thrustmap_target(h, "takeoff", NULL, &v), "NULL", "target conditions NULL");
    expect_einval(h, thrustmap_target_detail(h, NULL, c0, &tr), "NULL", "target_detail rating NULL");
    expect_einval(h, thrustmap_target_detail(h, "takeoff", NULL, &tr), "NULL", "target_detail conditions NULL");
    expect_einval(h, thrustmap_target_detail(h, "takeoff", c0, NULL), "NULL", "target_detail out NULL");
    expect_einval(h, thrustmap_bleed_bit(h, NULL), "NULL", "bleed_bit NULL");
    expect_einval(h, thrustmap_lever_ids(h, NULL, 1), "NULL", "lever_ids NULL with len 1");
    expect_einval(h, thrustmap_lever_ids(h, levers, -1), "len < 0", "lever_ids len -1");

    /* Unknown names. */
    expect_einval(h, thrustmap_target_detail(h, "warp-speed", c0, &tr), "unknown rating", "target_detail warp-speed");
    check(memcmp(&tr, &tr_saved, sizeof tr) == 0, "a failed target_detail leaves *out");
    expect_einval(h, thrustmap_target_detail(h, "", c0, &tr), "unknown rating", "target_detail \"\"");
    expect_einval(h, thrustmap_bleed_bit(h, "no-such-bleed"), "wing-anti-ice", "bleed_bit of an unknown name lists the bleeds");
    expect_einval(h, thrustmap_bleed_bit(h, ""), "unknown bleed", "bleed_bit \"\"");
    expect_einval(h, thrustmap_bleed_bit(h, "Wing-Anti-Ice"), "unknown bleed", "bleed names are case-sensitive");

    /* Indexes out of range. */
    int nr = thrustmap_rating_count(h), nb = thrustmap_bleed_count(h), ng = thrustmap_gate_count(h);
    check(thrustmap_rating_name(h, -1) == NULL, "rating -1");
    check(thrustmap_rating_name(h, nr) == NULL, "rating %d", nr);
    check(strstr(last_error(h, buf, sizeof buf), "out of range") != NULL, "rating index message: %s", buf);
    check(thrustmap_bleed_name(h, -1) == NULL && thrustmap_bleed_name(h, nb) == NULL &&
              thrustmap_bleed_name(h, THRUSTMAP_MAX_BLEEDS) == NULL && thrustmap_bleed_name(h, INT_MAX) == NULL,
          "bleed bits out of range");
    check(strstr(last_error(h, buf, sizeof buf), "bleed bit") != NULL, "bleed index message: %s", buf);
    check(thrustmap_gate_name(h, -2) == NULL && thrustmap_gate_name(h, ng) == NULL &&
              thrustmap_gate_name(h, INT_MIN) == NULL,
          "gates out of range");

    /* Batch counts: n <= 0 or above THRUSTMAP_MAX_BATCH, before any array is
     * read. */
    const int bad_n[] = {0, -1, INT_MIN, THRUSTMAP_MAX_BATCH + 1, INT_MAX};
    for (size_t i = 0; i < sizeof bad_n / sizeof bad_n[0]; i++) {
        expect_einval(h, thrustmap_command_levers(h, bad_n[i], levers, raws, c0, out), "THRUSTMAP_MAX_BATCH",
                      "command_levers with a bad n");
        expect_einval(h, thrustmap_command_levers(h, bad_n[i], NULL, NULL, NULL, NULL), "THRUSTMAP_MAX_BATCH",
                      "command_levers with a bad n and NULL arrays");
    }
    check(memcmp(out, saved, sizeof out) == 0, "failed batches leave out alone");
    check(thrustmap_command_levers(h, THRUSTMAP_MAX_BATCH, levers, raws, c0, out) == THRUSTMAP_OK,
          "a batch of THRUSTMAP_MAX_BATCH: %s", last_error(h, buf, sizeof buf));
    check(memcmp(&out[THRUSTMAP_MAX_BATCH], &saved[THRUSTMAP_MAX_BATCH], sizeof out[0]) == 0,
          "a full batch writes no more than n results");

    /* An unknown lever anywhere in a batch: found before any lever moves.
     * Lever 1 is held at raw 2000 by its deadband (2 counts); had the failed
     * batch moved it to 3000, raw 2001 would be taken as a new reading. */
    int64_t ref = thrustmap_open("demo", "demo");
    thrustmap_result mine, theirs;
    thrustmap_command(h, 1, 2000, c0, &mine);
    thrustmap_command(ref, 1, 2000, c0, &theirs);
    int bad_levers[3] = {1, 7, 2}, bad_raws[3] = {3000, 1000, 1000};
    memcpy(out, saved, sizeof out);
    expect_einval(h, thrustmap_command_levers(h, 3, bad_levers, bad_raws, c0, out), "levers[1]: bad argument: lever 7",
                  "command_levers with lever 7");
    check(memcmp(out, saved, sizeof out) == 0, "a batch with an unknown lever writes nothing");
    thrustmap_command(h, 1, 2001, c0, &mine);
    thrustmap_command(ref, 1, 2001, c0, &theirs);
    check(same_result(&mine, &theirs), "a batch with an unknown lever moved none: tla %.17g, want %.17g",
          mine.tla_deg, theirs.tla_deg);
    thrustmap_close(ref);
    int all_bad = INT_MIN;
    expect_einval(h, thrustmap_command_levers(h, 1, &all_bad, raws, c0, out), "not in calibration",
                  "command_levers with lever INT_MIN");
    expect_einval(h, thrustmap_reset(h, INT_MAX), "not in calibration", "reset of lever INT_MAX");

    /* Non-finite numbers in each field of the conditions, through every
     * function that takes them. An assumed temperature is read only when
     * assumed_set. */
    const double bad_x[] = {NAN, INFINITY, -INFINITY};
    for (int field = 0; field < 4; field++)
        for (size_t i = 0; i < sizeof bad_x / sizeof bad_x[0]; i++) {
            thrustmap_conditions c = *c0;
            double *x = field == 0 ? &c.alt_ft : field == 1 ? &c.oat_c : field == 2 ? &c.mach : &c.assumed_c;
            *x = bad_x[i];
            c.assumed_set = field == 3;
            char what[64];
            snprintf(what, sizeof what, "field %d = %g", field, bad_x[i]);
            expect_einval(h, thrustmap_command(h, 1, 1000, &c, &out[0]), "finite", what);
            expect_einval(h, thrustmap_command_levers(h, 2, levers, raws, &c, out), "finite", what);
            expect_einval(h, thrustmap_target(h, "takeoff", &c, &v), "finite", what);
            expect_einval(h, thrustmap_target_detail(h, "takeoff", &c, &tr), "finite", what);
        }
    thrustmap_conditions c = *c0;
    c.assumed_c = NAN; /* not set: not read */
    check(thrustmap_target_detail(h, "takeoff", &c, &tr) == THRUSTMAP_OK && tr.reduction_evaluated == 0,
          "an assumed temperature that is not set is not read");

    /* Bleed bits the profile does not declare (the demo has three). */
    const uint64_t bad_bleeds[] = {(uint64_t)1 << 3, (uint64_t)1 << 31, (uint64_t)1 << 32, (uint64_t)1 << 63,
                                   UINT64_MAX};
    for (size_t i = 0; i < sizeof bad_bleeds / sizeof bad_bleeds[0]; i++) {
        c = *c0;
        c.bleeds = bad_bleeds[i];
        expect_einval(h, thrustmap_command_levers(h, 2, levers, raws, &c, out), "bleed bits", "unknown bleed bits");
        expect_einval(h, thrustmap_target_detail(h, "takeoff", &c, &tr), "bleed bits", "unknown bleed bits");
    }
}

/* ---------------------------------------------------------------- main */

int main(int argc, char **argv)
{
    if (argc != 2) {
        fprintf(stderr, "usage: thrustmap_test EXPECTED_FILE\n");
        return 2;
    }
    if (!load(argv[1])) {
        fprintf(stderr, "%s: incomplete expected file\n", argv[1]);
        return 2;
    }
    char buf[512];

    check(thrustmap_abi_version() == THRUSTMAP_ABI_VERSION && abi == THRUSTMAP_ABI_VERSION,
          "library version %d, header %d, Go %d", thrustmap_abi_version(), THRUSTMAP_ABI_VERSION, abi);
    int64_t h = thrustmap_open("demo", "demo");
    if (h <= 0) {
        fprintf(stderr, "thrustmap_open(demo, demo): %s\n", last_error(0, buf, sizeof buf));
        return 1;
    }

    /* Gate names: the expected ones, the same pointer each time. */
    for (int g = 0; g < ngates; g++) {
        const char *name = thrustmap_gate_name(h, g);
        check(name && strcmp(name, gate_names[g]) == 0, "gate %d is %s, want %s", g, name ? name : "NULL",
              gate_names[g]);
        check(name == thrustmap_gate_name(h, g), "gate %d name is stable", g);
    }

    /* Targets. */
    for (int i = 0; i < ntargets; i++) {
        double v = NAN;
        int rc = thrustmap_target(h, targets[i].rating, &conds[targets[i].cond], &v);
        check(rc == THRUSTMAP_OK && same(v, targets[i].value), "target %s cond %d: rc %d value %.17g want %.17g (%s)",
              targets[i].rating, targets[i].cond, rc, v, targets[i].value, rc ? last_error(h, buf, sizeof buf) : "");
    }

    /* 1. Each lever on its own thread, in parallel: exact values. */
    sweep_job exact[MAX_LEVERS];
    for (int i = 0; i < nsweeps; i++)
        exact[i] = (sweep_job){h, &sweeps[i], 1, 0};
    run_threads(run_sweep, exact, sizeof exact[0], nsweeps);

    /* 2. Several threads on the same levers at once, plus a reader. */
    sweep_job shared[8];
    int nshared = 0;
    for (int i = 0; i < nsweeps; i++)
        for (int k = 0; k < (i == 0 ? 4 : 2); k++)
            shared[nshared++] = (sweep_job){h, &sweeps[i], 0, i == 1};
    pthread_t rd;
    pthread_create(&rd, NULL, reader, &h);
    run_threads(run_sweep, shared, sizeof shared[0], nshared);
    pthread_join(rd, NULL);

    /* 3. After a reset, each lever gives the exact values again, also through
     * thrustmap_command_levers. */
    for (int i = 0; i < nsweeps; i++) {
        check(thrustmap_reset(h, sweeps[i].lever) == THRUSTMAP_OK, "reset lever %d", sweeps[i].lever);
        exact[i].batch = 1;
    }
    run_threads(run_sweep, exact, sizeof exact[0], nsweeps);

    /* 4. Reset forgets the reported gate: in the hysteresis band a captured
     * lever keeps its gate, a reset one is uncaptured. */
    for (int i = 0; i < nresets; i++) {
        const reset_case *r = &resets[i];
        thrustmap_result out;
        thrustmap_reset(h, r->lever);
        thrustmap_command(h, r->lever, r->raw_in, &conds[r->cond], &out);
        thrustmap_command(h, r->lever, r->raw_band, &conds[r->cond], &out);
        check(out.gate == r->gate_band, "lever %d raw %d in the band: gate %d want %d", r->lever, r->raw_band, out.gate,
              r->gate_band);
        check(thrustmap_reset(h, r->lever) == THRUSTMAP_OK, "reset");
        thrustmap_command(h, r->lever, r->raw_band, &conds[r->cond], &out);
        check(out.gate == r->gate_after, "lever %d raw %d after reset: gate %d want %d", r->lever, r->raw_band,
              out.gate, r->gate_after);
    }

    /* 5. Error paths. */
    test_errors(h);
    test_faults(h);

    /* 6. Version 2: what a handle holds, target details (on the demo and the
     * test profile), every lever of a frame in one call, a computation
     * error. */
    test_info(h, 0);
    int64_t hs[NPROFILES] = {h, thrustmap_open(profile1, NULL)};
    if (check(hs[1] > 0, "open %s: %s", profile1, last_error(0, buf, sizeof buf))) {
        test_details(hs);
        thrustmap_close(hs[1]);
    }
    test_batch();
    test_compute_error();

    /* 7. Without a calibration only targets work. */
    int64_t t = thrustmap_open("demo", NULL);
    if (check(t > 0 && t != h, "open without a calibration")) {
        thrustmap_result out;
        double v = NAN;
        check(thrustmap_command(t, 1, 1000, &conds[0], &out) == THRUSTMAP_EINVAL, "command without a calibration");
        check(thrustmap_target(t, targets[0].rating, &conds[targets[0].cond], &v) == THRUSTMAP_OK &&
                  same(v, targets[0].value),
              "target without a calibration");
        thrustmap_close(t);
    }

    /* 8. Close: later calls see a bad handle; closing twice is harmless. */
    thrustmap_close(h);
    thrustmap_result out;
    check(thrustmap_command(h, 1, 1000, &conds[0], &out) == THRUSTMAP_EBADHANDLE, "command after close");
    check(thrustmap_gate_name(h, 0) == NULL, "gate name after close");
    check(thrustmap_error(h, buf, sizeof buf) == THRUSTMAP_EBADHANDLE, "error after close");
    thrustmap_close(h);

    /* 9. Close while other threads are calling. */
    test_close_while_calling();

    long nfail = atomic_load(&failures);
    if (nfail) {
        printf("FAIL: %ld of %ld checks failed\n", nfail, atomic_load(&checks));
        return 1;
    }
    printf("ok: %ld checks\n", atomic_load(&checks));
    return 0;
}
