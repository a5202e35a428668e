/*
 * engine_runtime.c - the hand-written part of the C that `thrustmap export c`
 * writes, after the declarations of engine.h: table interpolation, the
 * standard atmosphere, ratings with their corrections, redline and
 * assumed-temperature reduction, gate expressions' helpers, the gate logic
 * and lever calibration, and the functions engine.h declares. Each follows
 * the Go library's code named in its section heading, operation for
 * operation, so that the answers agree to the last bit (docs/methods.md
 * describes the methods).
 *
 * The generator copies this file in with engine_ and ENGINE_ replaced by the
 * chosen prefix, and writes the parts included below in their place:
 * engine_features.h (which parts of this runtime the profile needs, as 0/1
 * macros, and its constants), engine_tables.h (the tables) and
 * engine_gates.h (the gate expressions translated to C, and the gate
 * layout). Names with two underscores after the prefix are private.
 *
 * SIMULATION ONLY. NOT CERTIFIED. Never use this code or its results to set
 * thrust on a real aircraft.
 */
#include "engine.h"

/* What the profile uses, each 0 or 1, and its constants:
   - ENGINE__MONOTONE: a monotone (Fritsch-Butland) table.
   - ENGINE__REDLINE: a redline, ENGINE__REDLINE_VALUE.
   - ENGINE__ASSUMED: a rating with the assumed-temperature method, and its
     ENGINE__TEMP_TOL, ENGINE__ASSUMED_MAX_C, ENGINE__MAX_REDUCTION_PCT.
   - ENGINE__CORNER_ROWS: a flat-rating corner given per altitude row.
   - ENGINE__CORRECTED: the reduction keeps corrected N1 (method corrected).
   - ENGINE__EXPR: gate expressions; ENGINE__EXPR_TARGET and
     ENGINE__EXPR_WHEN: of which kinds; ENGINE__EXPR_TLA: one reads tla.
   - ENGINE__USE_*: the expression functions the expressions call.
   - ENGINE__IDLE: the idle gate's index (-1: none, so no reverse range).
   - ENGINE__INTERLOCK: reverse in the air holds idle.
   - ENGINE__ALWAYS: a bit for each gate that is always active.
   - ENGINE__BLEED_MASK: a bit for each bleed the profile declares.
   - The atmosphere's ENGINE__FT_TO_M, ENGINE__KELVIN, ENGINE__MIN_ALT_FT
     and ENGINE__MAX_ALT_FT. */
#include "engine_features.h"

typedef struct {
    int method;           /* 0 linear, 1 monotone */
    int dims;             /* axes present */
    int order[3];         /* the present axes, outermost first */
    const double *axis[3];
    int len[3];           /* 0: axis absent */
    int stride[3];
    const double *values; /* altitude outermost, Mach innermost */
} engine__grid;

typedef struct {
    const char *name;
    int basis;            /* 0 OAT, 1 TAT, 2 ISA_DEV */
    int table, thrust;    /* grid indexes; thrust -1 when none */
    int corner;           /* 0 none, 1 ISA deviation, 2 one OAT per altitude row */
    double corner_isa_dev;
    const double *corner_alts, *corner_oats;
    int corner_n;
    int assumed, needs_isa;
    int corr_first, corr_n;
} engine__rating;

typedef struct {
    int bleed;
    double delta;
    int grid;
} engine__correction;

/* The gate zones one lever sees, and its calibration. */
typedef struct {
    int id;                       /* calibration id, ENGINE_NO_LEVER for the profile's own zones */
    int calibrated;
    int forward, inverse;         /* grids raw -> TLA and TLA -> raw */
    int inverted, monotone;       /* TLA falls as raw rises; monotone fit */
    double raw_min, raw_max;      /* the device range */
    double raw_lo, raw_hi;        /* the calibrated raw range */
    double deadband;              /* counts */
    double capture[ENGINE_NUM_GATES]; /* the profile's, floored by the calibration's */
    double hysteresis[ENGINE_NUM_GATES];
} engine__geom;

/* ---- tables ---- */
#include "engine_tables.h"

/* ---- interpolation (thrustmap/grid) ---- */

static double engine__lerp(double a, double b, double f)
{
    return a * (1 - f) + b * f;
}

static int engine__segment(const double *xs, int n, double x)
{
    int lo = 0, hi = n - 2;
    while (lo < hi) {
        int mid = (int)((unsigned)(lo + hi + 1) >> 1);
        if (xs[mid] <= x)
            lo = mid;
        else
            hi = mid - 1;
    }
    return lo;
}
#if ENGINE__MONOTONE

/* Edge derivative of a Fritsch-Butland (gonum interp) monotone cubic. */
static double engine__fb_edge(double de, double di, double he, double h, double f)
{
    double g = (f * de - he * di) / h;
    if (g * de <= 0)
        return 0;
    if (de * di <= 0 && fabs(g) > 3 * fabs(de))
        return 3 * de;
    return g;
}

static double engine__fb_sec(const double *xs, const double *ys, int lo, int j)
{
    return (ys[j + 1 - lo] - ys[j - lo]) / (xs[j + 1] - xs[j]);
}

/* The derivative at node k of xs (n points); ys holds nodes lo.. on. */
static double engine__fb_slope(const double *xs, int n, const double *ys, int lo, int k)
{
    double sp, sn;
    if (n == 2)
        return engine__fb_sec(xs, ys, lo, 0);
    if (k == 0)
        return engine__fb_edge(engine__fb_sec(xs, ys, lo, 0), engine__fb_sec(xs, ys, lo, 1), xs[1] - xs[0], xs[2] - xs[0], xs[1] + xs[2] - 2 * xs[0]);
    if (k == n - 1)
        return engine__fb_edge(engine__fb_sec(xs, ys, lo, n - 2), engine__fb_sec(xs, ys, lo, n - 3), xs[n - 1] - xs[n - 2], xs[n - 1] - xs[n - 3], 2 * xs[n - 1] - xs[n - 3] - xs[n - 2]);
    sp = engine__fb_sec(xs, ys, lo, k - 1);
    sn = engine__fb_sec(xs, ys, lo, k);
    if (sp * sn <= 0)
        return 0;
    return 3 * (xs[k + 1] - xs[k - 1]) /
           ((2 * xs[k + 1] - xs[k - 1] - xs[k]) / sp + (xs[k + 1] + xs[k] - 2 * xs[k - 1]) / sn);
}

static double engine__hermite(const double *xs, int n, const double *ys, int lo, int i, double x)
{
    double y0 = ys[i - lo], y1 = ys[i + 1 - lo], d0, d1, h, dy, a2, a3, dx;
    if (x == xs[i])
        return y0;
    if (x == xs[i + 1])
        return y1;
    d0 = engine__fb_slope(xs, n, ys, lo, i);
    d1 = engine__fb_slope(xs, n, ys, lo, i + 1);
    h = xs[i + 1] - xs[i];
    dy = y1 - y0;
    a2 = (3 * dy - (2 * d0 + d1) * h) / h / h;
    a3 = (-2 * dy + (d0 + d1) * h) / h / h / h;
    dx = x - xs[i];
    return ((a3 * dx + a2) * dx + d0) * dx + y0;
}

/* The monotone interpolant along axis a and the axes inside it. */
static double engine__cubic(const engine__grid *g, int a, int off, const double *q, const int *seg)
{
    const double *xs;
    double ys[4];
    int i, lo, hi, k;
    while (a < 3 && g->len[a] == 0)
        a++;
    if (a == 3)
        return g->values[off];
    xs = g->axis[a];
    i = seg[a];
    lo = i - 1 > 0 ? i - 1 : 0;
    hi = i + 2 < g->len[a] - 1 ? i + 2 : g->len[a] - 1;
    for (k = lo; k <= hi; k++)
        ys[k - lo] = engine__cubic(g, a + 1, off + k * g->stride[a], q, seg);
    return engine__hermite(xs, g->len[a], ys, lo, i, q[a]);
}
#endif

/* The grid at (altitude, temperature, Mach), clamped to its edges; the
   clamped axes are stored in *clamped. */
static double engine__grid_at(const engine__grid *g, double q0, double q1, double q2, uint32_t *clamped)
{
    double q[3], f[3] = {0, 0, 0};
    int seg[3] = {0, 0, 0}, s[3] = {0, 0, 0};
    int base = 0, d;
    uint32_t cl = 0;
    const double *v;
    q[0] = q0;
    q[1] = q1;
    q[2] = q2;
    for (d = 0; d < g->dims; d++) {
        int a = g->order[d], last = g->len[a] - 1, i;
        const double *xs = g->axis[a];
        double x = q[a];
        if (x < xs[0]) {
            x = xs[0];
            cl |= ENGINE_CLAMPED_ALTITUDE << a;
        } else if (x > xs[last]) {
            x = xs[last];
            cl |= ENGINE_CLAMPED_ALTITUDE << a;
        }
        i = engine__segment(xs, g->len[a], x);
        seg[a] = i;
        q[a] = x;
        base += i * g->stride[a];
        s[d] = g->stride[a];
        f[d] = (x - xs[i]) / (xs[i + 1] - xs[i]);
    }
    *clamped = cl;
#if ENGINE__MONOTONE
    if (g->method == 1)
        return engine__cubic(g, 0, 0, q, seg);
#else
    (void)seg; /* no monotone table */
#endif
    v = g->values + base;
    switch (g->dims) {
    case 0:
        return v[0];
    case 1:
        return engine__lerp(v[0], v[s[0]], f[0]);
    case 2:
        return engine__lerp(engine__lerp(v[0], v[s[1]], f[1]), engine__lerp(v[s[0]], v[s[0] + s[1]], f[1]), f[0]);
    }
    return engine__lerp(engine__lerp(engine__lerp(v[0], v[s[2]], f[2]), engine__lerp(v[s[1]], v[s[1] + s[2]], f[2]), f[1]),
                    engine__lerp(engine__lerp(v[s[0]], v[s[0] + s[2]], f[2]), engine__lerp(v[s[0] + s[1]], v[s[0] + s[1] + s[2]], f[2]), f[1]),
                    f[0]);
}

/* ---- standard atmosphere (thrustmap/atmos) and conditions ---- */

/* ISA temperature, deg C, at a pressure altitude inside the model. */
static double engine__isa_c(double alt_ft)
{
    double h = alt_ft * ENGINE__FT_TO_M;
    if (h >= 20000.0)
        return 216.65 + 0.001 * (h - 20000.0) - ENGINE__KELVIN;
    if (h >= 11000.0)
        return 216.65 + 0.0 * (h - 11000.0) - ENGINE__KELVIN;
    return 288.15 + -0.0065 * (h - 0.0) - ENGINE__KELVIN;
}

static int engine__check(const engine_conditions *c)
{
    if (!isfinite(c->alt_ft) || !isfinite(c->oat_c) || !isfinite(c->mach) || (c->assumed_set && !isfinite(c->assumed_c)))
        return ENGINE_ERR_CONDITIONS;
    if (c->alt_ft < ENGINE__MIN_ALT_FT || c->alt_ft > ENGINE__MAX_ALT_FT)
        return ENGINE_ERR_CONDITIONS;
    if (c->mach < 0 || c->mach > 5)
        return ENGINE_ERR_CONDITIONS;
    if (c->oat_c <= -ENGINE__KELVIN || (c->assumed_set && c->assumed_c <= -ENGINE__KELVIN))
        return ENGINE_ERR_CONDITIONS;
    if ((c->bleeds & ~ENGINE__BLEED_MASK) != 0) /* a bleed the profile does not declare, as the C library refuses */
        return ENGINE_ERR_CONDITIONS;
    return ENGINE_OK;
}

/* ---- ratings (thrustmap/target.go) ---- */

/* An OAT in the rating's temperature basis. */
static double engine__basis_temp(int basis, double oat, double mach, double isa)
{
    switch (basis) {
    case 1:
        return (oat + ENGINE__KELVIN) * (1 + 0.2 * mach * mach) - ENGINE__KELVIN;
    case 2:
        return oat - isa;
    }
    return oat;
}

static double engine__base(const engine__rating *r, double alt, double oat, double mach, double isa, uint32_t *clamped)
{
    return engine__grid_at(&engine__grids[r->table], alt, engine__basis_temp(r->basis, oat, mach, isa), mach, clamped);
}

/* The corrections of the bleeds on in c, adding clamped axes to *cl. */
static double engine__bleed_correction(const engine__rating *r, const engine_conditions *c, double isa, uint32_t *cl)
{
    double sum = 0.0;
    int i;
    if (c->bleeds == 0)
        return 0;
    for (i = 0; i < r->corr_n; i++) {
        const engine__correction *k = &engine__corrections[r->corr_first + i];
        uint32_t gc = 0;
        if (((c->bleeds >> k->bleed) & 1u) == 0)
            continue;
        if (k->grid < 0) {
            sum += k->delta;
            continue;
        }
        sum += engine__grid_at(&engine__grids[k->grid], c->alt_ft, engine__basis_temp(r->basis, c->oat_c, c->mach, isa), c->mach, &gc);
        *cl |= gc;
    }
    return sum;
}

/* The redline ([limits] max), when the profile sets one. */
static double engine__limit(double v, uint32_t *flags)
{
#if ENGINE__REDLINE
    if (v > ENGINE__REDLINE_VALUE) {
        *flags = ENGINE_FLAG_LIMITED;
        return ENGINE__REDLINE_VALUE;
    }
#endif
    *flags = 0;
    return v;
}

/* The rating at checked conditions with corrections and redline, no reduction. */
static double engine__plain(const engine__rating *r, const engine_conditions *c, uint32_t *flags, uint32_t *clamped)
{
    double isa = NAN, v;
    uint32_t cl = 0;
    if (r->needs_isa)
        isa = engine__isa_c(c->alt_ft);
    v = engine__base(r, c->alt_ft, c->oat_c, c->mach, isa, &cl);
    if (c->bleeds != 0)
        v += engine__bleed_correction(r, c, isa, &cl);
    *clamped = cl;
    return engine__limit(v, flags);
}

#if ENGINE__ASSUMED
#if ENGINE__CORNER_ROWS

static double engine__interp1(const double *xs, const double *ys, int n, double x)
{
    int i = 0;
    double f;
    if (x <= xs[0])
        return ys[0];
    if (x >= xs[n - 1])
        return ys[n - 1];
    while (i < n - 2 && xs[i + 1] <= x)
        i++;
    f = (x - xs[i]) / (xs[i + 1] - xs[i]);
    return ys[i] * (1 - f) + ys[i + 1] * f;
}
#endif

/* The flat-rating corner as an OAT; 0 when the rating declares none. */
static int engine__corner(const engine__rating *r, double alt, double isa, double *out)
{
    switch (r->corner) {
    case 1:
        *out = isa + r->corner_isa_dev;
        return 1;
#if ENGINE__CORNER_ROWS
    case 2:
        *out = engine__interp1(r->corner_alts, r->corner_oats, r->corner_n, alt);
        return 1;
#endif
    }
    (void)alt;
    return 0;
}

static double engine__thrust_at(const engine__rating *r, double alt, double oat, double mach, double isa)
{
    uint32_t cl = 0;
    return engine__grid_at(&engine__grids[r->thrust], alt, engine__basis_temp(r->basis, oat, mach, isa), mach, &cl);
}

/* An OAT from a temperature in the rating's basis. */
static double engine__oat_of(int basis, double t, double mach, double isa)
{
    switch (basis) {
    case 1:
        return (t + ENGINE__KELVIN) / (1 + 0.2 * mach * mach) - ENGINE__KELVIN;
    case 2:
        return t + isa;
    }
    return t;
}

/* The largest temperature in [lo, hi] whose rated thrust is at least lim,
   given thrust(lo) >= lim > thrust(hi): the thrust grid's temperature nodes
   are walked down from hi to the last crossing, which is solved exactly in
   a linear grid and by bisection in a monotone one. */
static double engine__largest_meeting(const engine__rating *r, double lim, double alt, double lo, double hi, double mach, double isa)
{
    const engine__grid *g = &engine__grids[r->thrust];
    double top = hi, f_lo, f_top;
    int i;
    for (i = g->len[1] - 1; i >= 0; i--) {
        double t = engine__oat_of(r->basis, g->axis[1][i], mach, isa);
        if (t >= top)
            continue;
        if (t <= lo)
            break;
        if (engine__thrust_at(r, alt, t, mach, isa) >= lim) {
            lo = t;
            break;
        }
        top = t;
    }
    f_lo = engine__thrust_at(r, alt, lo, mach, isa);
    f_top = engine__thrust_at(r, alt, top, mach, isa);
    if (g->method == 0 && f_lo != f_top) {
        double t = lo + (lim - f_lo) / (f_top - f_lo) * (top - lo);
        while (engine__thrust_at(r, alt, t, mach, isa) < lim && t > lo)
            t = nextafter(t, lo);
        return t;
    }
    for (i = 0; i < 100; i++) {
        double mid = (lo + top) / 2;
        if (mid == lo || mid == top)
            break;
        if (engine__thrust_at(r, alt, mid, mach, isa) >= lim)
            lo = mid;
        else
            top = mid;
    }
    return lo;
}

/* Go's built-in min of two float64s. */
static double engine__min_builtin(double x, double y)
{
    if (isnan(x) || isnan(y))
        return NAN;
    if (x == 0 && y == 0)
        return signbit(x) ? x : y;
    return x < y ? x : y;
}

/* Rule 1 at assumed temperature ta: no reduction at or below the OAT, nor at
   or below the corner; records the reason and returns 1 when it acts. */
static int engine__full_rating(double ta, double oat, double corner, int has_corner, engine_target_result *res)
{
    if (ta <= oat + ENGINE__TEMP_TOL) {
        res->reasons |= ENGINE_REASON_TA_NOT_ABOVE_OAT;
        return 1;
    }
    if (has_corner && ta <= corner + ENGINE__TEMP_TOL) {
        res->reasons |= ENGINE_REASON_TA_BELOW_CORNER;
        return 1;
    }
    return 0;
}

/* The assumed-temperature method (FAA AC 25-13), rule by rule: the table
   value to use before bleed corrections; full is the value at the OAT. */
static double engine__reduce(const engine__rating *r, const engine_conditions *c, double isa, double full,
                             engine_target_result *res, uint32_t *clamped)
{
    double alt = c->alt_ft, oat = c->oat_c, mach = c->mach, ta = c->assumed_c, corner = 0, v;
    uint32_t cl = 0;
    int has_corner = engine__corner(r, alt, isa, &corner);
    res->reduction_evaluated = 1;
    res->assumed_c = c->assumed_c;
    res->effective_c = oat;
    if (r->thrust >= 0)
        res->thrust_reduction_pct = 0; /* checked; NaN stays for a rating without a thrust grid */
    /* Rule 1: no reduction at or below the OAT, nor at or below the corner. */
    if (engine__full_rating(ta, oat, corner, has_corner, res))
        return full;
    /* Rule 2: no higher than the maximum assumed temperature; rule 1 then
       applies again at the temperature cut to. */
    if (ta > ENGINE__ASSUMED_MAX_C) {
        ta = ENGINE__ASSUMED_MAX_C;
        res->reasons |= ENGINE_REASON_TA_ABOVE_MAX;
        if (engine__full_rating(ta, oat, corner, has_corner, res))
            return full;
    }
    /* Rule 3: the thrust reduction limit. */
    if (r->thrust < 0) {
        res->reasons |= ENGINE_REASON_REDUCTION_NOT_CHECKED;
    } else {
        double thrust_full = engine__thrust_at(r, alt, oat, mach, isa);
        double lim = (1 - ENGINE__MAX_REDUCTION_PCT / 100) * thrust_full;
        if (engine__thrust_at(r, alt, ta, mach, isa) < lim) {
            ta = engine__largest_meeting(r, lim, alt, oat, ta, mach, isa);
            res->reasons |= ENGINE_REASON_REDUCTION_LIMITED;
        }
        if (thrust_full > 0)
            res->thrust_reduction_pct = 100 * (1 - engine__thrust_at(r, alt, ta, mach, isa) / thrust_full);
    }
    /* Rule 4: the value at the effective temperature, never above full. */
    res->effective_c = ta;
    res->reduction_applied = 1;
    v = engine__base(r, alt, ta, mach, isa, &cl);
    *clamped |= cl;
#if ENGINE__CORRECTED
    /* Same corrected speed N1/sqrt(theta) as at Ta. */
    v *= sqrt((oat + ENGINE__KELVIN) / (ta + ENGINE__KELVIN));
#endif
    return engine__min_builtin(v, full);
}
#endif /* ENGINE__ASSUMED */

/* The target of rating r at c into *res; ENGINE_ERR_CONDITIONS leaves *res
   part written. */
static int engine__target_r(const engine__rating *r, const engine_conditions *c, engine_target_result *res)
{
    double isa = NAN, full, value, corr;
    uint32_t cl = 0, f = 0;
    if (engine__check(c) != ENGINE_OK)
        return ENGINE_ERR_CONDITIONS;
    res->reduction_evaluated = res->reduction_applied = 0;
    res->reasons = 0;
    res->assumed_c = res->effective_c = res->thrust_reduction_pct = NAN;
    if (r->needs_isa || c->assumed_set)
        isa = engine__isa_c(c->alt_ft);
    full = engine__base(r, c->alt_ft, c->oat_c, c->mach, isa, &cl);
    value = full;
#if ENGINE__ASSUMED
    if (c->assumed_set && r->assumed)
        value = engine__reduce(r, c, isa, full, res, &cl);
#endif
    corr = engine__bleed_correction(r, c, isa, &cl);
    res->value = engine__limit(value + corr, &res->flags);
    res->value_full = res->value;
    if (res->reduction_evaluated)
        res->value_full = engine__limit(full + corr, &f);
    if (cl != 0)
        res->flags |= ENGINE_FLAG_CLAMPED | cl;
    return ENGINE_OK;
}

#if ENGINE__EXPR

/* ---- gate expressions (thrustmap/expr.go, fastexpr.go) ---- */

typedef struct {
    engine_conditions cond;
    double tla, tat, isa_dev, assumed_temp;
    int err; /* a function failed: the expression fails */
} engine__ctx;

static void engine__ctx_set(engine__ctx *x, const engine_conditions *c, double tla)
{
    x->cond = *c;
    x->tla = tla;
    x->tat = engine__basis_temp(1, c->oat_c, c->mach, 0);
    x->isa_dev = c->oat_c - engine__isa_c(c->alt_ft);
    x->assumed_temp = c->assumed_set ? c->assumed_c : 0;
    x->err = 0;
}
#if ENGINE__USE_RATING_AT || ENGINE__USE_ASSUMED || ENGINE__USE_ISA_TEMP

static double engine__fail(engine__ctx *x)
{
    x->err = 1;
    return NAN;
}
#endif
#if ENGINE__USE_MIN

/* The gate expressions' min: expr-lang's builtin on two numbers, which
   keeps the first unless it is greater than the second. */
static double engine__math_min(double x, double y)
{
    return x > y ? y : x;
}
#endif
#if ENGINE__USE_MAX

/* The gate expressions' max: expr-lang's builtin on two numbers, which
   keeps the first unless it is less than the second. */
static double engine__math_max(double x, double y)
{
    return x < y ? y : x;
}
#endif
#if ENGINE__USE_ABS

/* The gate expressions' abs: expr-lang's builtin, which negates below zero
   (so abs(-0) is -0). */
static double engine__math_abs(double x)
{
    return x < 0 ? -x : x;
}
#endif
#if ENGINE__USE_LERP

static double engine__e_lerp(double a, double b, double f)
{
    return a + (b - a) * f;
}
#endif
#if ENGINE__USE_RATING

/* rating("name"): corrections included, no reduction. */
static double engine__e_rating(engine__ctx *x, int r)
{
    uint32_t f, cl;
    return engine__plain(&engine__ratings[r], &x->cond, &f, &cl);
}
#endif
#if ENGINE__USE_RATING_AT

/* rating_at("name", alt, oat) */
static double engine__e_rating_at(engine__ctx *x, int r, double alt, double oat)
{
    engine_conditions c = x->cond;
    uint32_t f, cl;
    c.alt_ft = alt;
    c.oat_c = oat;
    if (engine__check(&c) != ENGINE_OK)
        return engine__fail(x);
    return engine__plain(&engine__ratings[r], &c, &f, &cl);
}
#endif
#if ENGINE__USE_ASSUMED

/* assumed("name"): the target with the reduction at the assumed temperature. */
static double engine__e_assumed(engine__ctx *x, int r)
{
    engine_target_result res;
    if (engine__target_r(&engine__ratings[r], &x->cond, &res) != ENGINE_OK)
        return engine__fail(x);
    return res.value;
}
#endif
#if ENGINE__USE_ISA_TEMP

/* isa_temp(alt) */
static double engine__e_isa_temp(engine__ctx *x, double alt)
{
    if (!isfinite(alt) || alt < ENGINE__MIN_ALT_FT || alt > ENGINE__MAX_ALT_FT)
        return engine__fail(x);
    return engine__isa_c(alt);
}
#endif
#if ENGINE__EXPR_TARGET

/* A target: fails on a function's failure or a result that is not finite. */
static int engine__number(const engine_conditions *c, double (*fn)(engine__ctx *), double tla, double *v)
{
    engine__ctx x;
    double r;
    engine__ctx_set(&x, c, tla);
    r = fn(&x);
    if (x.err || !isfinite(r))
        return -1;
    *v = r;
    return 0;
}
#endif
#if ENGINE__EXPR_WHEN

/* A when. */
static int engine__truth(const engine_conditions *c, int (*fn)(engine__ctx *), double tla, int *b)
{
    engine__ctx x;
    int r;
    engine__ctx_set(&x, c, tla);
    r = fn(&x);
    if (x.err)
        return -1;
    *b = r;
    return 0;
}
#endif

typedef struct {
    const char *name;
    double tla;
    int rating;  /* -1: none */
    double most; /* the largest own target it can give; HUGE_VAL: not bounded */
    double (*target)(engine__ctx *);
    int (*when)(engine__ctx *);
} engine__gate;
#else /* no gate expressions */

typedef struct {
    const char *name;
    double tla;
    int rating;
    double most; /* the largest own target it can give; HUGE_VAL: not bounded */
} engine__gate;
#endif /* ENGINE__EXPR */

/* ---- gates and levers: the gate expressions and the layout ---- */
#include "engine_gates.h"

/* ---- lever commands (thrustmap/model.go) ---- */

static int engine__same_cond(const engine_conditions *a, const engine_conditions *b)
{
    return a->alt_ft == b->alt_ft && a->oat_c == b->oat_c && a->mach == b->mach && a->bleeds == b->bleeds &&
           !a->on_ground == !b->on_ground && !a->assumed_set == !b->assumed_set && a->assumed_c == b->assumed_c;
}

/* Drops the gate values worked out at other conditions. */
static void engine__invalidate(engine_lever_state *s, const engine_conditions *c)
{
    s->cond = *c;
    s->when_failed = 0;
    s->when_known = s->own_known = s->eff_known = 0;
}

/* Gate i's own target, worked out once per conditions. */
static engine__gate_eval *engine__own(engine_lever_state *s, int i, double tla)
{
    engine__gate_eval *e = &s->gates[i];
    const engine__gate *g = &engine__gates[i];
    uint32_t bit = 1u << i, f = 0;
    if (s->own_known & bit)
        return e;
    s->own_known |= bit;
    e->own_flags = e->own_clamp = 0; /* own and has_own are set below, eff and the rest by engine__effective */
#if ENGINE__EXPR_TARGET
    if (g->target) {
        double v;
        if (engine__number(&s->cond, g->target, tla, &v) == 0) {
            e->own = engine__limit(v, &e->own_flags);
            e->has_own = 1;
            return e;
        }
        e->own_flags = ENGINE_FLAG_FALLBACK;
        if (g->rating < 0) {
            e->own = s->last;
            e->has_own = s->has_last;
            return e;
        }
    }
#endif
    (void)tla;
    e->own = engine__plain(&engine__ratings[g->rating], &s->cond, &f, &e->own_clamp);
    e->has_own = 1;
    e->own_flags |= f;
    return e;
}

/* Whether gate i takes part at the state's conditions: its when holds and
   it has a target (its own, its fallback rating, or the last command). */
static int engine__active(engine_lever_state *s, int i, double tla)
{
#if ENGINE__EXPR_WHEN || ENGINE__EXPR_TARGET
    const engine__gate *g = &engine__gates[i];
#endif
#if ENGINE__EXPR_WHEN
    uint32_t bit = 1u << i;
    if (g->when) {
        if ((s->when_known & bit) == 0) {
            int ok = 0;
            s->when_known |= bit;
            if (engine__truth(&s->cond, g->when, tla, &ok) != 0)
                s->when_failed = 1; /* the gate drops out and every command says so */
            if (ok)
                s->when_true |= bit;
            else
                s->when_true &= ~bit;
        }
        if ((s->when_true & bit) == 0)
            return 0;
    }
#endif
#if ENGINE__EXPR_TARGET
    if (g->target == 0 || g->rating >= 0)
        return 1;
    return engine__own(s, i, tla)->has_own;
#else
    (void)s;
    (void)i;
    (void)tla;
    return 1;
#endif
}

/* The most the effective target of the gates from gi's neighbour towards
   base can be: the largest bound of those active. HUGE_VAL when a gate's
   target is not bounded, or when knowing whether it is active would take
   work (a when not yet evaluated at these conditions). */
static double engine__chain_most(const engine_lever_state *s, int gi, int base, int step)
{
    double most = -HUGE_VAL;
    int i;
    for (i = gi + step; (step < 0 && i >= base) || (step > 0 && i <= base); i += step) {
        if (((ENGINE__ALWAYS >> i) & 1u) == 0) {
#if ENGINE__EXPR_WHEN
            if (engine__gates[i].when != 0 && ((s->when_known >> i) & 1u) != 0) {
                if (((s->when_true >> i) & 1u) == 0)
                    continue; /* not active */
            } else
#endif
                return HUGE_VAL;
        }
        if (engine__gates[i].most > most)
            most = engine__gates[i].most;
    }
    (void)s;
    return most;
}

/* Gate gi (active) with its effective target: its own, raised to the
   effective target of the active gate next nearer idle. When its own target
   is at least what that gate's can be (engine__chain_most), nothing can
   raise it and the gates nearer idle are not worked out: the same result
   with fewer table look-ups. */
static const engine__gate_eval *engine__effective(engine_lever_state *s, int gi, double tla)
{
    engine__gate_eval *e = &s->gates[gi];
    int base = ENGINE__IDLE > 0 ? ENGINE__IDLE : 0, step = -1, prev = -1, i;
    if (s->eff_known & (1u << gi))
        return e;
    if (gi < base)
        step = 1;
    engine__own(s, gi, tla);
    e->eff = e->own;
    e->flags = e->own_flags;
    e->clamp = e->own_clamp;
    s->eff_known |= 1u << gi;
    if (gi == base || e->own >= engine__chain_most(s, gi, base, step))
        return e;
    for (i = gi + step; (step < 0 && i >= base) || (step > 0 && i <= base); i += step) {
        if (((ENGINE__ALWAYS >> i) & 1u) != 0 || engine__active(s, i, tla)) {
            prev = i;
            break;
        }
    }
    if (prev >= 0) {
        const engine__gate_eval *p = engine__effective(s, prev, tla);
        if (p->eff > e->own) {
            e->eff = p->eff;
            e->flags = p->flags | ENGINE_FLAG_RAISED;
            e->clamp = p->clamp;
        }
    }
    return e;
}

/* The gate logic at lever angle tla with geometry gi; out is zero. */
static int engine__command_at(engine_lever_state *s, int gi, double tla, uint32_t cl, const engine_conditions *c, engine_command *out)
{
    const engine__geom *geo = &engine__geoms[gi];
    const engine__gate_eval *e;
    int zone = -1, lo = -1, hi = -1, rep, i;
    if (s->geom_plus1 != gi + 1) {
        if (engine__check(c) != ENGINE_OK)
            return ENGINE_ERR_CONDITIONS;
        s->geom_plus1 = gi + 1;
        s->gate_plus1 = 0;
        s->has_last = 0;
        engine__invalidate(s, c);
    } else if (!engine__same_cond(&s->cond, c)) {
        if (engine__check(c) != ENGINE_OK)
            return ENGINE_ERR_CONDITIONS;
        engine__invalidate(s, c);
#if ENGINE__EXPR_TLA
    } else {
        /* A gate expression reads tla: work the gates out at every position. */
        engine__invalidate(s, c);
#endif
    }
    if (tla < ENGINE_TLA_MIN_DEG) {
        tla = ENGINE_TLA_MIN_DEG;
        cl |= ENGINE_CLAMPED_LEVER;
    } else if (tla > ENGINE_TLA_MAX_DEG) {
        tla = ENGINE_TLA_MAX_DEG;
        cl |= ENGINE_CLAMPED_LEVER;
    }
    out->tla_deg = tla;
    out->clamped = cl;
    out->gate = out->lower = out->upper = -1;

    /* The capture zone the lever is in, or the active gates either side. */
    for (i = 0; i < ENGINE_NUM_GATES; i++) {
        double d;
        if (((ENGINE__ALWAYS >> i) & 1u) == 0 && !engine__active(s, i, tla))
            continue;
        d = tla - engine__gates[i].tla;
        if (fabs(d) <= geo->capture[i]) {
            zone = i;
            break;
        }
        if (d > 0) {
            lo = i;
        } else {
            hi = i;
            break;
        }
    }

    /* The reported gate keeps its capture through the hysteresis band. */
    rep = s->gate_plus1 - 1;
    if (rep >= 0 && (!engine__active(s, rep, tla) || fabs(tla - engine__gates[rep].tla) > geo->capture[rep] + geo->hysteresis[rep]))
        rep = -1;
    if (zone >= 0)
        rep = zone;
    s->gate_plus1 = rep + 1;
    out->gate = rep;

    if (zone >= 0) {
        e = engine__effective(s, zone, tla);
        out->value = e->eff;
        out->flags = e->flags;
        out->clamped = cl | e->clamp;
    } else if (lo >= 0 && hi >= 0) {
        double lo_edge = engine__gates[lo].tla + geo->capture[lo];
        double hi_edge = engine__gates[hi].tla - geo->capture[hi];
        double f = (tla - lo_edge) / (hi_edge - lo_edge);
        const engine__gate_eval *a = engine__effective(s, lo, tla), *b = engine__effective(s, hi, tla);
        out->value = a->eff + (b->eff - a->eff) * f;
        out->flags = a->flags | b->flags;
        out->clamped = cl | a->clamp | b->clamp;
        out->lower = lo;
        out->upper = hi;
        out->fraction = f;
    } else if (lo >= 0) { /* forward of the forwardmost active gate: hold it */
        e = engine__effective(s, lo, tla);
        out->value = e->eff;
        out->flags = e->flags;
        out->clamped = cl | e->clamp;
    } else if (hi >= 0) { /* aft of the aftmost active gate */
        e = engine__effective(s, hi, tla);
        out->value = e->eff;
        out->flags = e->flags;
        out->clamped = cl | e->clamp;
    } else {
        return ENGINE_ERR_NO_GATE;
    }
#if ENGINE__IDLE >= 0
    if (tla < engine__gates[ENGINE__IDLE].tla - geo->capture[ENGINE__IDLE]) {
        out->reverse = 1;
#if ENGINE__INTERLOCK
        if (!c->on_ground) {
            /* Reverse selected in the air: hold idle. */
            e = engine__effective(s, ENGINE__IDLE, tla);
            out->value = e->eff;
            out->flags = e->flags | ENGINE_FLAG_INTERLOCK;
            out->clamped = cl | e->clamp;
        }
#endif
    }
#endif
    if (s->when_failed)
        out->flags |= ENGINE_FLAG_FALLBACK;
    if (out->clamped != 0)
        out->flags |= ENGINE_FLAG_CLAMPED | out->clamped;
    s->last = out->value;
    s->has_last = 1;
    return ENGINE_OK;
}

/* ---- the API ---- */

int engine_rating_index(const char *name)
{
    int i;
    if (name == 0)
        return -1;
    for (i = 0; i < ENGINE_NUM_RATINGS; i++)
        if (strcmp(engine__ratings[i].name, name) == 0)
            return i;
    return -1;
}

const char *engine_rating_name(int rating)
{
    if (rating < 0 || rating >= ENGINE_NUM_RATINGS)
        return "";
    return engine__ratings[rating].name;
}

int engine_bleed_bit(const char *name)
{
    int i;
    if (name == 0)
        return ENGINE_ERR_INPUT;
    for (i = 0; i < ENGINE_NUM_BLEEDS; i++)
        if (strcmp(engine__bleed_names[i], name) == 0)
            return i;
    return ENGINE_ERR_BLEED;
}

const char *engine_bleed_name(int bit)
{
    if (bit < 0 || bit >= ENGINE_NUM_BLEEDS)
        return "";
    return engine__bleed_names[bit];
}

const char *engine_gate_name(int gate)
{
    if (gate < 0 || gate >= ENGINE_NUM_GATES)
        return "";
    return engine__gates[gate].name;
}

int engine_target_detail(int rating, const engine_conditions *c, engine_target_result *out)
{
    engine_target_result res;
    int rc;
    if (c == 0 || out == 0)
        return ENGINE_ERR_INPUT;
    if (rating < 0 || rating >= ENGINE_NUM_RATINGS)
        return ENGINE_ERR_RATING;
    rc = engine__target_r(&engine__ratings[rating], c, &res);
    if (rc == ENGINE_OK)
        *out = res;
    return rc;
}

int engine_target(int rating, const engine_conditions *c, double *value)
{
    engine_target_result res;
    int rc;
    if (value == 0)
        return ENGINE_ERR_INPUT;
    rc = engine_target_detail(rating, c, &res);
    if (rc == ENGINE_OK)
        *value = res.value;
    return rc;
}

void engine_lever_reset(engine_lever_state *s)
{
    if (s != 0)
        memset(s, 0, sizeof *s);
}
/* The first geometry of lever id, as thrustmap's Model looks it up. */
static int engine__geom_index(int lever)
{
    int i;
    for (i = 0; i <= ENGINE_NUM_LEVERS; i++)
        if (engine__geoms[i].id == lever)
            return i;
    return -1;
}

int engine_command_tla(int lever, engine_lever_state *s, double tla_deg, const engine_conditions *c, engine_command *out)
{
    int gi = engine__geom_index(lever);
    if (s == 0 || c == 0 || out == 0)
        return ENGINE_ERR_INPUT;
    memset(out, 0, sizeof *out);
    if (gi < 0)
        return ENGINE_ERR_LEVER;
    if (!isfinite(tla_deg))
        return ENGINE_ERR_INPUT;
    return engine__command_at(s, gi, tla_deg, 0, c, out);
}

#if ENGINE_NUM_LEVERS > 0

/* A one-axis table (a lever calibration) at x; *clamped: x was beyond it. */
static double engine__curve_at(const engine__grid *g, double x, int *clamped)
{
    const double *xs = g->axis[0], *ys = g->values;
    int last = g->len[0] - 1, i;
    if (g->method == 1) {
        uint32_t cl = 0;
        double v = engine__grid_at(g, x, 0, 0, &cl);
        *clamped = cl != 0;
        return v;
    }
    if (x <= xs[0]) {
        *clamped = x < xs[0];
        return ys[0];
    }
    if (x >= xs[last]) {
        *clamped = x > xs[last];
        return ys[last];
    }
    i = engine__segment(xs, g->len[0], x);
    *clamped = 0;
    return engine__lerp(ys[i], ys[i + 1], (x - xs[i]) / (xs[i + 1] - xs[i]));
}

int engine_lever_id(int i)
{
    if (i < 0 || i >= ENGINE_NUM_LEVERS)
        return ENGINE_NO_LEVER;
    return engine__geoms[i].id;
}

/* LeverCalibration.TLA */
static double engine__raw_tla(const engine__geom *geo, double raw, uint32_t *cl)
{
    int clamped = 0;
    double tla = engine__curve_at(&engine__grids[geo->forward], raw, &clamped);
    *cl = clamped ? ENGINE_CLAMPED_RAW : 0;
    if (raw < geo->raw_min || raw > geo->raw_max)
        *cl |= ENGINE_CLAMPED_DEVICE;
    return tla;
}

static int engine__calibrated(int lever)
{
    int i;
    for (i = 0; i < ENGINE_NUM_LEVERS; i++)
        if (engine__geoms[i].id == lever)
            return i;
    return -1;
}

int engine_command_raw(int lever, engine_lever_state *s, double raw, const engine_conditions *c, engine_command *out)
{
    int gi;
    const engine__geom *geo;
    uint32_t cl = 0;
    double tla;
    if (s == 0 || c == 0 || out == 0)
        return ENGINE_ERR_INPUT;
    gi = s->geom_plus1 - 1;
    memset(out, 0, sizeof *out);
    if (gi < 0 || engine__geoms[gi].id != lever) {
        gi = engine__geom_index(lever);
        if (gi < 0 || !engine__geoms[gi].calibrated)
            return ENGINE_ERR_LEVER;
        s->holding = 0;
    }
    geo = &engine__geoms[gi];
    if (!geo->calibrated)
        return ENGINE_ERR_LEVER;
    if (!isfinite(raw))
        return ENGINE_ERR_INPUT;
    if (!s->holding || fabs(raw - s->held) > geo->deadband) {
        s->held = raw;
        s->holding = 1;
    }
    tla = engine__raw_tla(geo, s->held, &cl);
    if (raw < geo->raw_min || raw > geo->raw_max)
        cl |= ENGINE_CLAMPED_DEVICE;
    return engine__command_at(s, gi, tla, cl, c, out);
}

int engine_raw_to_tla(int lever, double raw, double *tla_deg, uint32_t *clamped)
{
    int i = engine__calibrated(lever);
    uint32_t cl = 0;
    if (i < 0)
        return ENGINE_ERR_LEVER;
    if (isnan(raw) || tla_deg == 0)
        return ENGINE_ERR_INPUT;
    *tla_deg = engine__raw_tla(&engine__geoms[i], raw, &cl);
    if (clamped)
        *clamped = cl;
    return ENGINE_OK;
}

int engine_tla_to_raw(int lever, double tla_deg, double *raw, int *clamped)
{
    int i = engine__calibrated(lever), cl = 0, ignore = 0;
    const engine__geom *geo;
    double r, lo, hi;
    if (i < 0)
        return ENGINE_ERR_LEVER;
    if (isnan(tla_deg) || raw == 0)
        return ENGINE_ERR_INPUT;
    geo = &engine__geoms[i];
    r = engine__curve_at(&engine__grids[geo->inverse], tla_deg, &cl);
    if (!geo->monotone || cl) {
        *raw = r;
        if (clamped)
            *clamped = cl;
        return ENGINE_OK;
    }
    /* Bisect the monotone forward map between the calibrated ends. */
    lo = geo->raw_lo;
    hi = geo->raw_hi;
    while (hi - lo > 1e-3) {
        double mid = (lo + hi) / 2;
        double t = engine__curve_at(&engine__grids[geo->forward], mid, &ignore);
        if ((t < tla_deg) != (geo->inverted != 0))
            lo = mid;
        else
            hi = mid;
    }
    *raw = (lo + hi) / 2;
    if (clamped)
        *clamped = 0;
    return ENGINE_OK;
}
#endif /* ENGINE_NUM_LEVERS > 0 */
