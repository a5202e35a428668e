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
 *
 * A sweep is one lever's samples in order, from a fresh state. Prints the
 * failures and "ok: N checks" and exits 0 when all pass, 1 otherwise.
 */
#define _POSIX_C_SOURCE 200809L

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
#define TOL 1e-9

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

static int ngates, nconds, ntargets, nsweeps, nresets;
static char gate_names[MAX_GATES][64];
static thrustmap_conditions conds[MAX_CONDS];
static target targets[MAX_TARGETS];
static sweep sweeps[MAX_LEVERS];
static reset_case resets[MAX_RESETS];

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

static int near(double a, double b) { return fabs(a - b) <= TOL; }

/* name_bits maps a list of names ("a,b" or "-") to bits of the header's
 * constants; unknown names are a failure. */
static uint32_t name_bits(const char *list, int clamped)
{
    static const struct {
        const char *name;
        uint32_t bit;
    } flag_bits[] = {
        {"raised", THRUSTMAP_FLAG_RAISED},
        {"limited", THRUSTMAP_FLAG_LIMITED},
        {"interlock", THRUSTMAP_FLAG_INTERLOCK},
        {"fallback", THRUSTMAP_FLAG_FALLBACK},
    },
      clamp_bits[] = {
          {"altitude", THRUSTMAP_CLAMPED_ALTITUDE},
          {"temperature", THRUSTMAP_CLAMPED_TEMPERATURE},
          {"mach", THRUSTMAP_CLAMPED_MACH},
          {"raw", THRUSTMAP_CLAMPED_RAW},
          {"device", THRUSTMAP_CLAMPED_DEVICE},
      };
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
        if (clamped) {
            for (size_t i = 0; i < sizeof clamp_bits / sizeof clamp_bits[0]; i++)
                if (strcmp(name, clamp_bits[i].name) == 0)
                    bits |= clamp_bits[i].bit | THRUSTMAP_FLAG_CLAMPED, found = 1;
        } else {
            for (size_t i = 0; i < sizeof flag_bits / sizeof flag_bits[0]; i++)
                if (strcmp(name, flag_bits[i].name) == 0)
                    bits |= flag_bits[i].bit, found = 1;
        }
        check(found, "expected file names unknown %s %s", clamped ? "clamped input" : "flag", name);
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
            unsigned bleeds;
            ok = sscanf(line, "cond %d %lf %lf %lf %u %d %d %lf", &k, &c->alt_ft, &c->oat_c, &c->mach, &bleeds,
                        &c->on_ground, &c->assumed_set, &c->assumed_c) == 8 &&
                 k == nconds;
            c->bleeds = bleeds;
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
                    r->flags = name_bits(fl, 0) | name_bits(cl, 1);
                    s->lo[r->cond] = fmin(s->lo[r->cond], r->value);
                    s->hi[r->cond] = fmax(s->hi[r->cond], r->value);
                }
            }
        }
        if (!ok) {
            fprintf(stderr, "%s:%d: malformed line: %s", path, lineno, line);
            fclose(f);
            return 0;
        }
    }
    fclose(f);
    return ngates > 0 && nconds > 0 && ntargets > 0 && nsweeps > 0 && nresets > 0;
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
        int rc = thrustmap_command(job->h, s->lever, want->raw, &conds[want->cond], &got);
        if (!check(rc == THRUSTMAP_OK, "lever %d raw %d cond %d: rc %d", s->lever, want->raw, want->cond, rc))
            continue;
        if (job->exact) {
            check(near(got.tla_deg, want->tla) && near(got.value, want->value) && got.gate == want->gate &&
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
            check(rc == THRUSTMAP_OK && near(v, targets[i].value), "concurrent target %s cond %d: rc %d value %.17g",
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
        check(rc == THRUSTMAP_OK && near(v, targets[i].value), "target %s cond %d: rc %d value %.17g want %.17g (%s)",
              targets[i].rating, targets[i].cond, rc, v, targets[i].value, rc ? last_error(h, buf, sizeof buf) : "");
    }

    /* 1. Each lever on its own thread, in parallel: exact values. */
    sweep_job exact[MAX_LEVERS];
    for (int i = 0; i < nsweeps; i++)
        exact[i] = (sweep_job){h, &sweeps[i], 1};
    run_threads(run_sweep, exact, sizeof exact[0], nsweeps);

    /* 2. Several threads on the same levers at once, plus a reader. */
    sweep_job shared[8];
    int nshared = 0;
    for (int i = 0; i < nsweeps; i++)
        for (int k = 0; k < (i == 0 ? 4 : 2); k++)
            shared[nshared++] = (sweep_job){h, &sweeps[i], 0};
    pthread_t rd;
    pthread_create(&rd, NULL, reader, &h);
    run_threads(run_sweep, shared, sizeof shared[0], nshared);
    pthread_join(rd, NULL);

    /* 3. After a reset, each lever gives the exact values again. */
    for (int i = 0; i < nsweeps; i++)
        check(thrustmap_reset(h, sweeps[i].lever) == THRUSTMAP_OK, "reset lever %d", sweeps[i].lever);
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

    /* 6. Without a calibration only targets work. */
    int64_t t = thrustmap_open("demo", NULL);
    if (check(t > 0 && t != h, "open without a calibration")) {
        thrustmap_result out;
        double v = NAN;
        check(thrustmap_command(t, 1, 1000, &conds[0], &out) == THRUSTMAP_EINVAL, "command without a calibration");
        check(thrustmap_target(t, targets[0].rating, &conds[targets[0].cond], &v) == THRUSTMAP_OK &&
                  near(v, targets[0].value),
              "target without a calibration");
        thrustmap_close(t);
    }

    /* 7. Close: later calls see a bad handle; closing twice is harmless. */
    thrustmap_close(h);
    thrustmap_result out;
    check(thrustmap_command(h, 1, 1000, &conds[0], &out) == THRUSTMAP_EBADHANDLE, "command after close");
    check(thrustmap_gate_name(h, 0) == NULL, "gate name after close");
    check(thrustmap_error(h, buf, sizeof buf) == THRUSTMAP_EBADHANDLE, "error after close");
    thrustmap_close(h);

    /* 8. Close while other threads are calling. */
    test_close_while_calling();

    long nfail = atomic_load(&failures);
    if (nfail) {
        printf("FAIL: %ld of %ld checks failed\n", nfail, atomic_load(&checks));
        return 1;
    }
    printf("ok: %ld checks\n", atomic_load(&checks));
    return 0;
}
