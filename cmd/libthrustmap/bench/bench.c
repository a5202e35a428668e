/*
 * bench.c - the per-frame cost of libthrustmap as a simulator plugin sees it.
 *
 *     bash cmd/libthrustmap/bench/run.sh          (builds everything, runs this)
 *     bench LEVERS4.toml FLOOR.txt [REPEATS]
 *
 * The demo profile with a four-lever calibration (levers4.toml, written by
 * go run ./cmd/libthrustmap/bench/benchdata): every frame each lever moves (a sweep
 * from idle to the forward stop and back, the levers out of phase) and the
 * conditions drift (a climb: altitude, temperature and Mach change every
 * frame), so every frame works out every gate target again. Reports
 * nanoseconds per lever per frame, the best of five runs of REPEATS passes
 * over the frames, for:
 *
 *   - one crossing into the library (thrustmap_abi_version, which does
 *     nothing), the fixed cost of any call;
 *   - thrustmap_command, one lever a frame, and every lever a frame;
 *   - thrustmap_command_levers, every lever of a frame in one call;
 *   - the generated C of the same profile and levers (thrustmap export c);
 *   - a hand-written C floor that does only the necessary work: raw -> TLA
 *     by binary search over the calibration points, the two neighbouring
 *     gates' table look-ups (multilinear, binary search on each axis, as the
 *     tables have 1 to 3 axes) and the blend between their capture zones.
 *
 * Before timing, it checks that the batch call and the generated C give
 * exactly what single calls give, and that the floor computes what the library computes (to
 * 1e-9) wherever the library did not raise a gate to the one nearer idle (a
 * rule the floor leaves out): a floor that skipped work would not agree. It
 * exits 1 when a check fails. Figures are printed, never asserted: they
 * depend on the machine.
 *
 * Simulation only: not certified, never for setting thrust on a real
 * aircraft.
 */
#define _POSIX_C_SOURCE 200809L

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "thrustmap.h"

#define NLEVERS 4
#define FRAMES 4096 /* a power of two */
#define MAX_POINTS 32
#define MAX_GATES 16
#define MAX_AXIS 64
#define RUNS 5

/* ---------------------------------------------------------------- the floor */

typedef struct {
    int id;
    double deadband;
    int n;
    double raw[MAX_POINTS], tla[MAX_POINTS]; /* raw increasing */
    double held;
    int holding;
} floor_lever;

typedef struct {
    double tla, capture[NLEVERS];
    int basis; /* 0 OAT, 1 TAT, 2 ISA deviation */
    int dims;
    int axis[3], n[3], stride[3];
    double x[3][MAX_AXIS];
    double *v;
} floor_gate;

static floor_lever flevers[NLEVERS];
static floor_gate fgates[MAX_GATES];
static int nfgates;
static double stop_min, stop_max, redline = INFINITY;

/* segment returns i with xs[i] <= x <= xs[i+1] for x within the axis, by
 * binary search (as the library's grid does). */
static int segment(const double *xs, int n, double x)
{
    int lo = 0, hi = n - 2;
    while (lo < hi) {
        int mid = (lo + hi + 1) >> 1;
        if (xs[mid] <= x)
            lo = mid;
        else
            hi = mid - 1;
    }
    return lo;
}

static double lerp(double a, double b, double f) { return a * (1 - f) + b * f; }

/* lookup interpolates gate g's table at q (altitude, basis temperature,
 * Mach), each coordinate clamped to its axis, and cuts it to the redline. */
static double lookup(const floor_gate *g, const double q[3])
{
    int base = 0, s[3] = {0, 0, 0};
    double f[3] = {0, 0, 0};
    for (int d = 0; d < g->dims; d++) {
        const double *xs = g->x[d];
        int n = g->n[d];
        double x = q[g->axis[d]];
        if (x < xs[0])
            x = xs[0];
        else if (x > xs[n - 1])
            x = xs[n - 1];
        int i = segment(xs, n, x);
        base += i * g->stride[d];
        s[d] = g->stride[d];
        f[d] = (x - xs[i]) / (xs[i + 1] - xs[i]);
    }
    const double *v = g->v + base;
    double r;
    switch (g->dims) {
    case 0:
        r = v[0];
        break;
    case 1:
        r = lerp(v[0], v[s[0]], f[0]);
        break;
    case 2:
        r = lerp(lerp(v[0], v[s[1]], f[1]), lerp(v[s[0]], v[s[0] + s[1]], f[1]), f[0]);
        break;
    default: {
        double c00 = lerp(v[0], v[s[2]], f[2]), c01 = lerp(v[s[1]], v[s[1] + s[2]], f[2]);
        double c10 = lerp(v[s[0]], v[s[0] + s[2]], f[2]), c11 = lerp(v[s[0] + s[1]], v[s[0] + s[1] + s[2]], f[2]);
        r = lerp(lerp(c00, c01, f[1]), lerp(c10, c11, f[1]), f[0]);
    }
    }
    return r > redline ? redline : r;
}

/* The basis temperatures of one frame's conditions, worked out once a frame
 * for every lever. */
typedef struct {
    double q[3][3]; /* by basis: altitude, temperature, Mach */
} frame_air;

static void frame_air_at(frame_air *fa, const thrustmap_conditions *c)
{
    /* ISA temperature: 288.15 K falling 6.5 K/km to 11 km, then 216.65 K
     * (ICAO Doc 7488/3), the altitude in feet of 0.3048 m. */
    double hm = c->alt_ft * 0.3048;
    double isa = (hm < 11000 ? 288.15 + -0.0065 * (hm - 0) : 216.65) - 273.15;
    double tat = (c->oat_c + 273.15) * (1 + 0.2 * c->mach * c->mach) - 273.15;
    double t[3] = {c->oat_c, tat, c->oat_c - isa};
    for (int b = 0; b < 3; b++) {
        fa->q[b][0] = c->alt_ft;
        fa->q[b][1] = t[b];
        fa->q[b][2] = c->mach;
    }
}

/* floor_command is one lever's command: deadband, raw -> TLA, the gate
 * zone or the two gates either side, their look-ups, the blend. */
static double floor_command(floor_lever *l, int k, int raw, const frame_air *fa, double *tla_out)
{
    double r = raw;
    if (!l->holding || fabs(r - l->held) > l->deadband)
        l->held = r, l->holding = 1;
    r = l->held;
    double tla;
    if (r <= l->raw[0])
        tla = l->tla[0];
    else if (r >= l->raw[l->n - 1])
        tla = l->tla[l->n - 1];
    else {
        int i = segment(l->raw, l->n, r);
        tla = lerp(l->tla[i], l->tla[i + 1], (r - l->raw[i]) / (l->raw[i + 1] - l->raw[i]));
    }
    if (tla < stop_min)
        tla = stop_min;
    else if (tla > stop_max)
        tla = stop_max;
    *tla_out = tla;

    /* The gates either side: lo the last at or aft of tla. */
    int lo = -1, hi = nfgates;
    while (hi - lo > 1) {
        int mid = (lo + hi) >> 1;
        if (fgates[mid].tla <= tla)
            lo = mid;
        else
            hi = mid;
    }
    if (lo >= 0 && fabs(tla - fgates[lo].tla) <= fgates[lo].capture[k])
        return lookup(&fgates[lo], fa->q[fgates[lo].basis]);
    if (hi < nfgates && fabs(tla - fgates[hi].tla) <= fgates[hi].capture[k])
        return lookup(&fgates[hi], fa->q[fgates[hi].basis]);
    if (lo < 0)
        return lookup(&fgates[hi], fa->q[fgates[hi].basis]);
    if (hi >= nfgates)
        return lookup(&fgates[lo], fa->q[fgates[lo].basis]);
    double a = lookup(&fgates[lo], fa->q[fgates[lo].basis]);
    double b = lookup(&fgates[hi], fa->q[fgates[hi].basis]);
    double lo_edge = fgates[lo].tla + fgates[lo].capture[k], hi_edge = fgates[hi].tla - fgates[hi].capture[k];
    return a + (b - a) * ((tla - lo_edge) / (hi_edge - lo_edge));
}

/* load_floor reads floor.txt (see benchdata/main.go). */
static int load_floor(const char *path)
{
    FILE *f = fopen(path, "r");
    if (!f) {
        perror(path);
        return 0;
    }
    char word[64];
    int nl = 0, ok = 1;
    while (ok && fscanf(f, "%63s", word) == 1) {
        if (word[0] == '#') {
            int ch;
            while ((ch = fgetc(f)) != EOF && ch != '\n')
                ;
        } else if (strcmp(word, "stops") == 0) {
            ok = fscanf(f, "%lf %lf", &stop_min, &stop_max) == 2;
        } else if (strcmp(word, "redline") == 0) {
            ok = fscanf(f, "%lf", &redline) == 1;
        } else if (strcmp(word, "lever") == 0 && nl < NLEVERS) {
            floor_lever *l = &flevers[nl++];
            ok = fscanf(f, "%d %lf %d", &l->id, &l->deadband, &l->n) == 3 && l->n >= 2 && l->n <= MAX_POINTS;
            for (int i = 0; ok && i < l->n; i++)
                ok = fscanf(f, "%lf %lf", &l->raw[i], &l->tla[i]) == 2;
        } else if (strcmp(word, "gate") == 0 && nfgates < MAX_GATES) {
            floor_gate *g = &fgates[nfgates++];
            char name[64];
            int nv;
            ok = fscanf(f, "%63s %lf", name, &g->tla) == 2;
            for (int k = 0; ok && k < NLEVERS; k++)
                ok = fscanf(f, "%lf", &g->capture[k]) == 1;
            ok = ok && fscanf(f, "%d %d", &g->basis, &g->dims) == 2 && g->basis >= 0 && g->basis < 3 &&
                 g->dims >= 0 && g->dims <= 3;
            for (int d = 0; ok && d < g->dims; d++) {
                ok = fscanf(f, "%d %d", &g->axis[d], &g->n[d]) == 2 && g->axis[d] >= 0 && g->axis[d] < 3 &&
                     g->n[d] >= 2 && g->n[d] <= MAX_AXIS;
                for (int i = 0; ok && i < g->n[d]; i++)
                    ok = fscanf(f, "%lf", &g->x[d][i]) == 1;
            }
            ok = ok && fscanf(f, "%d", &nv) == 1 && nv > 0;
            int want = 1;
            for (int d = g->dims - 1; ok && d >= 0; d--) {
                g->stride[d] = want;
                want *= g->n[d];
            }
            ok = ok && nv == want && (g->v = malloc(sizeof(double) * (size_t)nv)) != NULL;
            for (int i = 0; ok && i < nv; i++)
                ok = fscanf(f, "%lf", &g->v[i]) == 1;
        } else {
            ok = 0;
        }
    }
    fclose(f);
    if (!ok || nl != NLEVERS || nfgates < 2)
        fprintf(stderr, "%s: malformed floor data near \"%s\"\n", path, word);
    return ok && nl == NLEVERS && nfgates >= 2;
}

/* ---------------------------------------------------------------- the generated C
 *
 * run.sh writes gen.c, the demo profile with levers4.toml through
 * `thrustmap export c --prefix gen_`, compiles it on its own (-std=c99 -O2,
 * as a plugin would) and links it in; its declarations are included here.
 * gen_frame commands the four levers of a frame through it, one lever state
 * each. It is checked against the library like the floor (here bit for bit,
 * with the flags: the generated C uses the library's bits) and timed in main.
 */
#define GEN_HEADER_ONLY
#include "gen.c"

static gen_lever_state gstates[NLEVERS];
static gen_conditions gconds[FRAMES]; /* conds[] in the generated C's type, made once */

/* ---------------------------------------------------------------- frames */

static int ids[NLEVERS];
static int raws[FRAMES][NLEVERS];
static thrustmap_conditions conds[FRAMES];

/* make_frames: a climb from sea level to 30 000 ft at ISA+10 from Mach 0.3
 * to 0.78, every lever swept from idle (TLA 0) to the forward stop (55) and
 * back every 2048 frames, each a quarter period after the one before. */
static void make_frames(void)
{
    for (int f = 0; f < FRAMES; f++) {
        double alt = 30000.0 * f / FRAMES;
        conds[f] = (thrustmap_conditions){.alt_ft = alt, .oat_c = 25 - 0.0019812 * alt, .mach = 0.3 + 0.48 * f / FRAMES};
        for (int k = 0; k < NLEVERS; k++) {
            const floor_lever *l = &flevers[k];
            double r0 = 0, r55 = 0; /* the raw counts at TLA 0 and 55: calibration points */
            for (int i = 0; i < l->n; i++) {
                if (l->tla[i] == 0)
                    r0 = l->raw[i];
                if (l->tla[i] == 55)
                    r55 = l->raw[i];
            }
            int t = (f + k * 512) % 2048;
            double phase = t < 1024 ? t / 1024.0 : (2048 - t) / 1024.0;
            raws[f][k] = (int)lround(r0 + (r55 - r0) * phase);
        }
    }
}

static double now_ns(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return ts.tv_sec * 1e9 + ts.tv_nsec;
}

static volatile double sink;

/* The timed bodies: each runs repeats passes over the frames and returns
 * the nanoseconds per lever per frame. */
typedef double (*body)(int64_t h, int repeats);

static double time_crossing(int64_t h, int repeats)
{
    (void)h;
    long sum = 0;
    double t0 = now_ns();
    for (int r = 0; r < repeats; r++)
        for (int f = 0; f < FRAMES; f++)
            sum += thrustmap_abi_version();
    double t = now_ns() - t0;
    sink = (double)sum;
    return t / ((double)repeats * FRAMES);
}

static double time_single(int64_t h, int repeats, int nlevers)
{
    double sum = 0;
    thrustmap_result out;
    double t0 = now_ns();
    for (int r = 0; r < repeats; r++)
        for (int f = 0; f < FRAMES; f++)
            for (int k = 0; k < nlevers; k++) {
                if (thrustmap_command(h, ids[k], raws[f][k], &conds[f], &out) != THRUSTMAP_OK)
                    exit(1);
                sum += out.value;
            }
    double t = now_ns() - t0;
    sink = sum;
    return t / ((double)repeats * FRAMES * nlevers);
}

static double time_single1(int64_t h, int repeats) { return time_single(h, repeats, 1); }
static double time_single4(int64_t h, int repeats) { return time_single(h, repeats, NLEVERS); }

static double time_batch(int64_t h, int repeats)
{
    double sum = 0;
    thrustmap_result out[NLEVERS];
    double t0 = now_ns();
    for (int r = 0; r < repeats; r++)
        for (int f = 0; f < FRAMES; f++) {
            if (thrustmap_command_levers(h, NLEVERS, ids, raws[f], &conds[f], out) != THRUSTMAP_OK)
                exit(1);
            for (int k = 0; k < NLEVERS; k++)
                sum += out[k].value;
        }
    double t = now_ns() - t0;
    sink = sum;
    return t / ((double)repeats * FRAMES * NLEVERS);
}

/* gen_frame commands every lever of frame f through the generated C. */
static void gen_frame(int f, gen_command out[NLEVERS])
{
    for (int k = 0; k < NLEVERS; k++)
        if (gen_command_raw(ids[k], &gstates[k], raws[f][k], &gconds[f], &out[k]) != GEN_OK)
            exit(1);
}

static double time_generated(int64_t h, int repeats)
{
    (void)h;
    double sum = 0;
    gen_command out[NLEVERS];
    for (int k = 0; k < NLEVERS; k++)
        gen_lever_reset(&gstates[k]);
    double t0 = now_ns();
    for (int r = 0; r < repeats; r++)
        for (int f = 0; f < FRAMES; f++) {
            gen_frame(f, out);
            for (int k = 0; k < NLEVERS; k++)
                sum += out[k].value;
        }
    double t = now_ns() - t0;
    sink = sum;
    return t / ((double)repeats * FRAMES * NLEVERS);
}

/* floor_frame commands every lever of frame f through the floor. */
static void floor_frame(int f, double value[NLEVERS], double tla[NLEVERS])
{
    frame_air fa;
    frame_air_at(&fa, &conds[f]);
    for (int k = 0; k < NLEVERS; k++)
        value[k] = floor_command(&flevers[k], k, raws[f][k], &fa, &tla[k]);
}

static double time_floor(int64_t h, int repeats)
{
    (void)h;
    double sum = 0, value[NLEVERS], tla[NLEVERS];
    double t0 = now_ns();
    for (int r = 0; r < repeats; r++)
        for (int f = 0; f < FRAMES; f++) {
            floor_frame(f, value, tla);
            for (int k = 0; k < NLEVERS; k++)
                sum += value[k];
        }
    double t = now_ns() - t0;
    sink = sum;
    return t / ((double)repeats * FRAMES * NLEVERS);
}

/* best runs a body RUNS times on a fresh handle and returns the fastest. */
static double best(body b, const char *cal, int repeats)
{
    double min = INFINITY;
    for (int run = 0; run < RUNS; run++) {
        int64_t h = thrustmap_open("demo", cal);
        for (int k = 0; k < NLEVERS; k++)
            flevers[k].holding = 0;
        double t = b(h, repeats);
        thrustmap_close(h);
        if (t < min)
            min = t;
    }
    return min;
}

/* check runs the frames once through single calls, the batch call and the
 * floor, and compares them. */
static int check(const char *cal)
{
    char msg[512];
    int64_t a = thrustmap_open("demo", cal), b = thrustmap_open("demo", cal);
    if (a <= 0 || b <= 0) {
        thrustmap_error(0, msg, sizeof msg);
        fprintf(stderr, "thrustmap_open(demo, %s): %s\n", cal, msg);
        return 0;
    }
    int ok = 1, compared = 0, raised = 0;
    double worst = 0;
    for (int f = 0; f < FRAMES && ok; f++) {
        thrustmap_result one[NLEVERS], all[NLEVERS];
        double value[NLEVERS], tla[NLEVERS];
        for (int k = 0; k < NLEVERS; k++)
            ok = ok && thrustmap_command(a, ids[k], raws[f][k], &conds[f], &one[k]) == THRUSTMAP_OK;
        ok = ok && thrustmap_command_levers(b, NLEVERS, ids, raws[f], &conds[f], all) == THRUSTMAP_OK;
        if (!ok) {
            thrustmap_error(a, msg, sizeof msg);
            fprintf(stderr, "frame %d: %s\n", f, msg);
            break;
        }
        floor_frame(f, value, tla);
        gen_command gen[NLEVERS];
        gen_frame(f, gen);
        for (int k = 0; k < NLEVERS; k++) {
            if (gen[k].tla_deg != one[k].tla_deg || gen[k].value != one[k].value || gen[k].gate != one[k].gate ||
                gen[k].reverse != one[k].reverse || gen[k].flags != one[k].flags) {
                fprintf(stderr, "frame %d lever %d: generated C %.17g (gate %d, flags %#x), library %.17g (%d, %#x)\n",
                        f, ids[k], gen[k].value, gen[k].gate, (unsigned)gen[k].flags, one[k].value, one[k].gate,
                        (unsigned)one[k].flags);
                ok = 0;
            }
            if (one[k].tla_deg != all[k].tla_deg || one[k].value != all[k].value ||
                one[k].gate != all[k].gate || one[k].flags != all[k].flags) {
                fprintf(stderr, "frame %d lever %d: batch %.17g, single %.17g\n", f, ids[k], all[k].value,
                        one[k].value);
                ok = 0;
            }
            if (one[k].flags & (THRUSTMAP_FLAG_RAISED | THRUSTMAP_FLAG_INTERLOCK)) {
                raised++;
                continue;
            }
            double d = fmax(fabs(value[k] - one[k].value), fabs(tla[k] - one[k].tla_deg));
            worst = fmax(worst, d);
            compared++;
            if (!(d <= 1e-9)) {
                fprintf(stderr, "frame %d lever %d raw %d: floor TLA %.17g value %.17g, library %.17g %.17g\n", f,
                        ids[k], raws[f][k], tla[k], value[k], one[k].tla_deg, one[k].value);
                ok = 0;
            }
        }
    }
    thrustmap_close(a);
    thrustmap_close(b);
    if (ok && compared < FRAMES * NLEVERS / 2) {
        fprintf(stderr, "the floor was compared on only %d of %d samples\n", compared, FRAMES * NLEVERS);
        ok = 0;
    }
    printf("checks: batch = single calls = generated C on all %d samples; floor = library on %d (largest "
           "difference %.3g; %d raised samples, a rule the floor leaves out, not compared)\n",
           FRAMES * NLEVERS, compared, worst, raised);
    for (int k = 0; k < NLEVERS; k++) {
        flevers[k].holding = 0;
        gen_lever_reset(&gstates[k]);
    }
    return ok;
}

int main(int argc, char **argv)
{
    if (argc < 3 || argc > 4) {
        fprintf(stderr, "usage: bench LEVERS4.toml FLOOR.txt [REPEATS]\n");
        return 2;
    }
    int repeats = argc == 4 ? atoi(argv[3]) : 20;
    if (thrustmap_abi_version() != THRUSTMAP_ABI_VERSION) {
        fprintf(stderr, "libthrustmap is version %d, this program was built for %d\n", thrustmap_abi_version(),
                THRUSTMAP_ABI_VERSION);
        return 2;
    }
    if (repeats < 1 || !load_floor(argv[2]))
        return 2;
    for (int k = 0; k < NLEVERS; k++)
        ids[k] = flevers[k].id;
    make_frames();
    for (int f = 0; f < FRAMES; f++)
        gconds[f] = (gen_conditions){.alt_ft = conds[f].alt_ft, .oat_c = conds[f].oat_c, .mach = conds[f].mach,
                                     .bleeds = conds[f].bleeds, .on_ground = conds[f].on_ground,
                                     .assumed_set = conds[f].assumed_set, .assumed_c = conds[f].assumed_c};
    if (!check(argv[1]))
        return 1;

    printf("demo profile, %d levers, %d frames x %d, conditions drifting every frame; ns per lever per frame, best "
           "of %d:\n",
           NLEVERS, FRAMES, repeats, RUNS);
    printf("  %-52s %7.1f  (per call)\n", "crossing into the library (thrustmap_abi_version)",
           best(time_crossing, argv[1], repeats));
    printf("  %-52s %7.1f\n", "library, thrustmap_command, 1 lever a frame", best(time_single1, argv[1], repeats));
    printf("  %-52s %7.1f\n", "library, thrustmap_command, 4 levers a frame", best(time_single4, argv[1], repeats));
    printf("  %-52s %7.1f\n", "library, thrustmap_command_levers, 4 levers", best(time_batch, argv[1], repeats));
    printf("  %-52s %7.1f\n", "generated C (thrustmap export c), 4 levers", best(time_generated, argv[1], repeats));
    printf("  %-52s %7.1f\n", "C floor: only the necessary work, 4 levers", best(time_floor, argv[1], repeats));
    return 0;
}
