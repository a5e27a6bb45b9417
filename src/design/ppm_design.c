/* ppm_design.c — the design of a per-slot quantizer for M-ary
 * pulse-position modulation (Pierce, IEEE Trans. Commun. 26(12), 1978, from memory):
 * one symbol is M slots of an intensity model, one at the pulsed level and
 * M − 1 at the empty level, each slot's output cut by the same
 * thresholds. The request's strategy first designs the thresholds for
 * one slot under the slot law (1 − 1/M, 1/M); with the optimal strategy
 * they are then moved coordinate by coordinate to maximize the PPM rate
 * itself (whole counts for count outputs, Brent's method otherwise;
 * Brent, Algorithms for Minimization without Derivatives, 1973, ch. 5).
 * The soft receiver's capacity per symbol is certified by
 * qc_ppm_soft_rate (src/capacity/ppm.c, the symmetry of the slots), the
 * hard receiver (one threshold per slot, erasures) by qc_ppm_hard_rate at
 * the threshold maximizing it, and the unquantized reference is the soft
 * rate with every count its own cell (count outputs) or a fine uniform
 * grid (real outputs, a lower bound). */
#include "design/design_internal.h"

#include <math.h>
#include <stdlib.h>
#include <stdio.h>
#include <string.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_min.h>

#define SEARCH_TOL_BITS 1e-8 /* bracket of each rate compared in the searches */
#define SEARCH_PASSES 4      /* coordinate passes of the threshold refinement */
#define REAL_SAMPLES 12      /* samples per coordinate before Brent (real outputs) */
#define BRENT_ITERS 60
#define HARD_GRID 2048       /* hard threshold: samples on real outputs */
#define FINE_REAL_CELLS 4096 /* unquantized reference on real outputs */

typedef struct {
    const qc_model *model;
    const double *levels; /* {empty, pulsed} */
    size_t slots;
    int counts;           /* count output: whole thresholds */
    qc_dmc *d;            /* 2 × (n + 1) scratch */
    double *lo, *hi;      /* scratch */
    size_t n;             /* thresholds */
} ppm_ctx;

/* Soft rate (lower bound, bits) of thresholds t[0..n−1]. */
static qc_status soft_rate(ppm_ctx *c, const double *t, size_t n, double tol, qc_ppm_bounds *b)
{
    c->d->nx = 2;
    c->d->ny = n + 1;
    qc_status st = qc_discretize_into(c->model, c->levels, 2, t, n, c->lo, c->hi, c->d);
    if (st != QC_OK)
        return st;
    return qc_ppm_soft_rate(c->d->p, c->d->p + (n + 1), n + 1, c->slots, tol, b);
}

static double soft_value(ppm_ctx *c, const double *t, qc_status *st)
{
    qc_ppm_bounds b;
    *st = soft_rate(c, t, c->n, SEARCH_TOL_BITS, &b);
    return *st == QC_OK ? b.rate_bits : -INFINITY;
}

/* The range a threshold may move in: from the empty level's support
 * low end to the pulsed level's high end. */
static void output_range(const qc_model *m, const double *levels, double *lo, double *hi)
{
    const qc_model_type *type = qc_model_get_type(m);
    double a, b, c, d;
    type->support(m, levels[0], &a, &b);
    type->support(m, levels[1], &c, &d);
    *lo = fmin(a, c);
    *hi = fmax(b, d);
}

typedef struct {
    ppm_ctx *c;
    double *t;
    size_t i;
    qc_status st;
} coord_fn;

static double minus_rate_at(double x, void *p)
{
    coord_fn *f = p;
    double keep = f->t[f->i];
    f->t[f->i] = x;
    qc_status st;
    double v = soft_value(f->c, f->t, &st);
    f->t[f->i] = keep;
    if (st != QC_OK && f->st == QC_OK)
        f->st = st;
    return st == QC_OK ? -v : 0.0;
}

/* Move threshold i within (lo, hi) to the best rate; *best is the rate
 * of t as it stands and is raised when the threshold moves. */
static qc_status refine_one(ppm_ctx *c, double *t, size_t i, double lo, double hi, double *best)
{
    qc_status st;
    if (c->counts) {
        for (int dir = -1; dir <= 1; dir += 2) {
            for (;;) {
                double x = t[i] + dir;
                if (!(x > lo && x < hi) || x < 1.0)
                    break;
                double keep = t[i];
                t[i] = x;
                double v = soft_value(c, t, &st);
                if (st != QC_OK)
                    return st;
                if (v > *best + 2.0 * SEARCH_TOL_BITS) {
                    *best = v;
                } else {
                    t[i] = keep;
                    break;
                }
            }
        }
        return QC_OK;
    }
    /* real output: samples on (lo, hi), then Brent around the best */
    coord_fn f = {c, t, i, QC_OK};
    double xs[REAL_SAMPLES + 2], fs[REAL_SAMPLES + 2];
    size_t arg = 0;
    xs[0] = lo;
    xs[REAL_SAMPLES + 1] = hi;
    for (size_t k = 1; k <= REAL_SAMPLES; k++) {
        xs[k] = lo + (hi - lo) * (double)k / (double)(REAL_SAMPLES + 1);
        fs[k] = minus_rate_at(xs[k], &f);
        if (f.st != QC_OK)
            return f.st;
        if (arg == 0 || fs[k] < fs[arg])
            arg = k;
    }
    double x = xs[arg], fx = fs[arg];
    if (arg > 1 && arg < REAL_SAMPLES) {
        gsl_min_fminimizer *m = gsl_min_fminimizer_alloc(gsl_min_fminimizer_brent);
        if (!m)
            return qc_fail(QC_ENOMEM, "out of memory");
        gsl_function F = {minus_rate_at, &f};
        if (gsl_min_fminimizer_set_with_values(m, &F, x, fx, xs[arg - 1], fs[arg - 1],
                                               xs[arg + 1], fs[arg + 1]) == GSL_SUCCESS) {
            for (int it = 0; it < BRENT_ITERS; it++) {
                if (gsl_min_fminimizer_iterate(m) != GSL_SUCCESS || f.st != QC_OK)
                    break;
                double a = gsl_min_fminimizer_x_lower(m), b = gsl_min_fminimizer_x_upper(m);
                if (gsl_min_test_interval(a, b, 1e-7 * (hi - lo), 0.0) == GSL_SUCCESS)
                    break;
            }
            x = gsl_min_fminimizer_x_minimum(m);
            fx = gsl_min_fminimizer_f_minimum(m);
        }
        gsl_min_fminimizer_free(m);
        if (f.st != QC_OK)
            return f.st;
    }
    if (-fx > *best + 2.0 * SEARCH_TOL_BITS) {
        t[i] = x;
        *best = -fx;
    }
    return QC_OK;
}

/* Coordinate ascent of the soft rate over the thresholds. */
static qc_status refine(ppm_ctx *c, double *t, size_t *passes)
{
    qc_status st;
    double lo, hi;
    output_range(c->model, c->levels, &lo, &hi);
    double best = soft_value(c, t, &st);
    if (st != QC_OK)
        return st;
    for (*passes = 0; *passes < SEARCH_PASSES;) {
        double start = best;
        ++*passes;
        for (size_t i = 0; i < c->n; i++) {
            double a = i > 0 ? t[i - 1] : (c->counts ? 0.0 : lo);
            double b = i + 1 < c->n ? t[i + 1] : (c->counts ? floor(hi) + 2.0 : hi);
            if ((st = refine_one(c, t, i, a, b, &best)) != QC_OK)
                return st;
        }
        if (!(best > start + 2.0 * SEARCH_TOL_BITS))
            break;
    }
    return QC_OK;
}

/* The hard receiver at threshold x. */
static qc_status hard_at(ppm_ctx *c, double x, qc_ppm_hard *h)
{
    c->d->nx = 2;
    c->d->ny = 2;
    qc_status st = qc_discretize_into(c->model, c->levels, 2, &x, 1, c->lo, c->hi, c->d);
    if (st != QC_OK)
        return st;
    /* row 0 the empty slot, row 1 the pulsed one; cell 1 fires */
    return qc_ppm_hard_rate(c->d->p[3], c->d->p[1], c->slots, h);
}

typedef struct {
    ppm_ctx *c;
    qc_status st;
} hard_fn;

static double minus_hard(double x, void *p)
{
    hard_fn *f = p;
    qc_ppm_hard h;
    qc_status st = hard_at(f->c, x, &h);
    if (st != QC_OK && f->st == QC_OK)
        f->st = st;
    return st == QC_OK ? -h.rate_bits : 0.0;
}

/* The threshold maximizing the hard receiver's rate: every whole count up
 * to the top of the pulsed slot's support, or a grid and Brent. */
static qc_status hard_design(ppm_ctx *c, double *best_t, qc_ppm_hard *best)
{
    double lo, hi;
    output_range(c->model, c->levels, &lo, &hi);
    qc_status st;
    best->rate_bits = -1.0;
    if (c->counts) {
        double top = fmax(1.0, ceil(hi));
        for (double x = 1.0; x <= top; x += 1.0) {
            qc_ppm_hard h;
            if ((st = hard_at(c, x, &h)) != QC_OK)
                return st;
            if (h.rate_bits > best->rate_bits) {
                *best = h;
                *best_t = x;
            }
        }
        return QC_OK;
    }
    hard_fn f = {c, QC_OK};
    double xs[HARD_GRID], fs[HARD_GRID];
    size_t arg = 0;
    for (size_t k = 0; k < HARD_GRID; k++) {
        xs[k] = lo + (hi - lo) * ((double)k + 0.5) / (double)HARD_GRID;
        fs[k] = minus_hard(xs[k], &f);
        if (f.st != QC_OK)
            return f.st;
        if (fs[k] < fs[arg])
            arg = k;
    }
    double x = xs[arg];
    if (arg > 0 && arg + 1 < HARD_GRID && fs[arg] < fs[arg - 1] && fs[arg] < fs[arg + 1]) {
        gsl_min_fminimizer *m = gsl_min_fminimizer_alloc(gsl_min_fminimizer_brent);
        if (!m)
            return qc_fail(QC_ENOMEM, "out of memory");
        gsl_function F = {minus_hard, &f};
        if (gsl_min_fminimizer_set_with_values(m, &F, x, fs[arg], xs[arg - 1], fs[arg - 1],
                                               xs[arg + 1], fs[arg + 1]) == GSL_SUCCESS) {
            for (int it = 0; it < BRENT_ITERS; it++) {
                if (gsl_min_fminimizer_iterate(m) != GSL_SUCCESS || f.st != QC_OK)
                    break;
                if (gsl_min_test_interval(gsl_min_fminimizer_x_lower(m),
                                          gsl_min_fminimizer_x_upper(m), 1e-12 * (hi - lo),
                                          0.0) == GSL_SUCCESS)
                    break;
            }
            if (gsl_min_fminimizer_f_minimum(m) < fs[arg])
                x = gsl_min_fminimizer_x_minimum(m);
        }
        gsl_min_fminimizer_free(m);
        if (f.st != QC_OK)
            return f.st;
    }
    *best_t = x;
    return hard_at(c, x, best);
}

/* The unquantized reference: every count its own cell up to the top of
 * the pulsed slot's support (the rest, under 1e-15 of the mass, in the
 * last cell), or a uniform grid of FINE_REAL_CELLS cells on real
 * outputs; both are quantizers, so the rate is a lower bound on the
 * unquantized one (data processing), and an upper bound on the
 * design's. */
static qc_status unquantized(ppm_ctx *c, double tol, qc_ppm_bounds *b)
{
    double lo, hi;
    output_range(c->model, c->levels, &lo, &hi);
    size_t n;
    if (c->counts) {
        double top = fmax(1.0, ceil(hi));
        n = top < (double)(QC_DMC_MAX_DIM - 1) ? (size_t)top : QC_DMC_MAX_DIM - 1;
    } else {
        n = FINE_REAL_CELLS - 1;
    }
    double *t = qc_malloc_array(n, sizeof *t), *l = qc_malloc_array(n, sizeof *l),
           *h = qc_malloc_array(n, sizeof *h);
    qc_dmc *d = NULL;
    qc_status st = !t || !l || !h ? qc_fail(QC_ENOMEM, "out of memory") : qc_dmc_alloc(2, n + 1, &d);
    if (st == QC_OK) {
        for (size_t i = 0; i < n; i++)
            t[i] = c->counts ? (double)(i + 1) : lo + (hi - lo) * (double)(i + 1) / (double)(n + 1);
        st = qc_discretize_into(c->model, c->levels, 2, t, n, l, h, d);
    }
    if (st == QC_OK)
        st = qc_ppm_soft_rate(d->p, d->p + (n + 1), n + 1, c->slots, tol, b);
    qc_dmc_free(d);
    free(t);
    free(l);
    free(h);
    return st;
}

static qc_status check_ppm_request(const qc_design_request *req)
{
    const qc_design_channel *ch = &req->channel;
    if (!ch->model)
        return qc_fail(QC_EINVAL, "design: no noise model given");
    const qc_model_type *type = qc_model_get_type(ch->model);
    if (!(type->properties & QC_MODEL_INTENSITY)) {
        /* the models that declare intensity levels, from the registry */
        char names[256] = "";
        size_t used = 0;
        const qc_model_type *const *types = qc_model_types();
        for (size_t i = 0; types[i] && used + 1 < sizeof names; i++)
            if (types[i]->properties & QC_MODEL_INTENSITY) {
                int w = snprintf(names + used, sizeof names - used, "%s%s", used ? ", " : "",
                                 types[i]->name);
                used += w > 0 ? (size_t)w : 0;
            }
        return qc_fail(QC_EINVAL, "alphabet ppm: model '%s' does not take optical "
                                  "intensities; pulse-position modulation needs an intensity "
                                  "model (%s)",
                       type->name, names);
    }
    if (ch->ppm_slots < 2 || ch->ppm_slots > QC_PPM_MAX_SLOTS)
        return qc_fail(QC_EINVAL, "alphabet ppm: M must be from 2 to %zu slots (got %zu)",
                       QC_PPM_MAX_SLOTS, ch->ppm_slots);
    if (!ch->levels || ch->nlevels != 2)
        return qc_fail(QC_EINVAL, "alphabet ppm: needs 2 levels per slot (empty, pulsed), got "
                                  "%zu",
                       ch->levels ? ch->nlevels : 0);
    if (!(ch->levels[0] < ch->levels[1]))
        return qc_fail(QC_EINVAL, "alphabet ppm: the pulsed level (%g) must exceed the empty "
                                  "level (%g)",
                       ch->levels[1], ch->levels[0]);
    if (ch->dimensions > 1)
        return qc_fail(QC_EINVAL, "alphabet ppm: one real dimension per slot (got %u)",
                       ch->dimensions);
    if (req->input.objective == QC_OBJECTIVE_GMI)
        return qc_fail(QC_EINVAL, "alphabet ppm: objective gmi is not defined (give mi or "
                                  "capacity, which agree: the uniform law achieves capacity)");
    if (req->input.probabilities)
        return qc_fail(QC_EINVAL, "alphabet ppm: the law over the M positions is uniform "
                                  "(capacity-achieving by symmetry); give no probabilities");
    if (req->input.costs || qc_constraints_any(req->input.constraints))
        return qc_fail(QC_EINVAL, "alphabet ppm: the average power is fixed by M (one pulse "
                                  "per symbol); give no costs or peak/power/mean limits");
    if (req->input.optimize_levels)
        return qc_fail(QC_EINVAL, "alphabet ppm: optimize-levels does not apply (two slot "
                                  "levels set by the pulse)");
    if (req->numerics.blocklength)
        return qc_fail(QC_EINVAL, "alphabet ppm: blocklength (the normal approximation) is "
                                  "not available for pulse-position modulation");
    if (req->input.fec)
        return qc_fail(QC_EINVAL, "alphabet ppm: fec needs a pre-FEC BER or NGMI, which "
                                  "pulse-position modulation does not define here");
    return QC_OK;
}

qc_status qc_ppm_design(const qc_design_request *req, qc_design_result *res)
{
    memset(res, 0, sizeof *res);
    if (!req)
        return qc_fail(QC_EINVAL, "no design request given");
    qc_status st = check_ppm_request(req);
    if (st != QC_OK)
        return st;
    const size_t M = req->channel.ppm_slots;
    const double m = (double)M;
    double law[2] = {1.0 - 1.0 / m, 1.0 / m};
    qc_design_request sub = *req;
    sub.channel.ppm_slots = 0;
    sub.input.objective = QC_OBJECTIVE_MI;
    sub.input.probabilities = law;
    sub.numerics.skip_snr_penalty = 1;
    qc_design_result r;
    if ((st = qc_input_design(&sub, &r)) != QC_OK)
        return st;
    const double tol = r.tol_bits;
    ppm_ctx c = {.model = req->channel.model, .levels = r.levels, .slots = M,
                 .counts = qc_model_get_type(req->channel.model)->output == QC_OUTPUT_COUNTS,
                 .n = r.nthresholds};
    size_t wide = r.nthresholds > 1 ? r.nthresholds : 1;
    c.lo = qc_malloc_array(wide, sizeof *c.lo);
    c.hi = qc_malloc_array(wide, sizeof *c.hi);
    if (!c.lo || !c.hi) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto done;
    }
    if ((st = qc_dmc_alloc(2, r.nthresholds + 1 > 2 ? r.nthresholds + 1 : 2, &c.d)) != QC_OK)
        goto done;
    size_t passes = 0;
    if (req->quantizer.kind == QC_QUANTIZER_OPTIMAL && (st = refine(&c, r.thresholds, &passes)) != QC_OK)
        goto done;
    r.design_iterations += passes;
    qc_ppm_bounds soft, unq;
    if ((st = soft_rate(&c, r.thresholds, c.n, tol, &soft)) != QC_OK)
        goto done;
    /* the final per-slot channel at the thresholds reported */
    memcpy(r.channel->p, c.d->p, 2 * (c.n + 1) * sizeof *c.d->p);
    qc_ppm_hard hard;
    double ht = NAN;
    if ((st = hard_design(&c, &ht, &hard)) != QC_OK || (st = unquantized(&c, tol, &unq)) != QC_OK)
        goto done;

    r.objective = req->input.objective;
    r.ppm_slots = M;
    r.ppm_evaluations = soft.evaluations;
    r.rate_bits = soft.rate_bits;
    r.upper_bound_bits = soft.upper_bound_bits;
    r.rate_per_slot_bits = r.rate_bits / m;
    r.mi_bits = r.rate_bits;
    /* the unquantized reference is itself a quantizer's rate: at least
     * the design's (data processing) */
    r.unquantized_bits = unq.upper_bound_bits;
    r.unquantized_err_bits = unq.upper_bound_bits - unq.rate_bits;
    r.unquantized_limited_by = QC_LIMIT_NONE;
    if (r.unquantized_bits < r.upper_bound_bits) {
        r.unquantized_bits = r.upper_bound_bits;
        r.unquantized_limited_by = QC_LIMIT_QUANTIZED_RATE;
    }
    r.rate_limited_by = QC_LIMIT_NONE;
    r.loss_bits = fmax(0.0, r.unquantized_bits - r.rate_bits);
    r.noiseless_limit = 0;
    r.hard_threshold = ht;
    r.hard_rate_bits = hard.rate_bits;
    c.d->nx = 2;
    c.d->ny = 2;
    if ((st = qc_discretize_into(c.model, c.levels, 2, &ht, 1, c.lo, c.hi, c.d)) != QC_OK)
        goto done;
    r.hard_fire_on = c.d->p[3];
    r.hard_fire_off = c.d->p[1];
    r.hard_erasure = hard.erasure;
    r.hard_error = hard.wrong;
    /* per-slot figures that mean nothing for the symbol */
    r.gmi_bits = NAN;
    r.label_bits = 0;
    r.dispersion_bits2 = NAN;
    r.shaping_gap_db = NAN;
    r.symbol_error_rate = r.pre_fec_ber = r.q_factor_db = r.ngmi = NAN;
    r.snr_db = NAN;
    r.snr_penalty_db = NAN;
    r.snr_penalty_note = QC_PENALTY_PPM;
    r.entropy_bits = log2(m);
    r.photons_per_symbol *= m; /* the figures took the slot law */
    r.bits_per_photon = r.photons_per_symbol > 0.0 ? r.rate_bits / r.photons_per_symbol : NAN;
    r.photons_per_bit = r.photons_per_symbol > 0.0 && r.rate_bits > 0.0
                            ? r.photons_per_symbol / r.rate_bits
                            : NAN;
    /* the bandwidth follows the slot rate, not the symbol rate: no
     * bit/s/Hz at the symbol rate */
    r.spectral_efficiency = NAN;
    if (req->channel.symbol_rate > 0.0)
        r.rate_gbps = qc_rate_gbps(r.rate_bits, req->channel.symbol_rate, r.polarizations);
    *res = r;
    memset(&r, 0, sizeof r);
done:
    qc_design_result_clear(&r);
    qc_dmc_free(c.d);
    free(c.lo);
    free(c.hi);
    return st;
}
