/* level_search.c — level optimization: the M transmitted levels move to
 * maximize the design objective, the thresholds re-designed at every
 * step. Derivative-free Nelder–Mead simplex search (Nelder & Mead, Comput.
 * J. 7, 1965; GSL's nmsimplex2) over the level vector; each trial vector
 * is sorted and pulled into the constraint set by qc_level_set_project,
 * with a small quadratic penalty on the distance pulled so the simplex
 * stays near the set. Several starts: the given levels, equally spaced
 * levels filling the set, and random perturbations of the best so far
 * (GSL's MT19937 with a fixed seed, so runs repeat exactly). The first
 * two starts depend on nothing found, so each has its own search state
 * and, when the caller allows, they run in two OpenMP threads; their
 * bests are taken in the order of the starts, which gives the bits of a
 * run of one after the other. */
#include "design/design_internal.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_multimin.h>
#include <gsl/gsl_randist.h>
#include <gsl/gsl_rng.h>

#define SEARCH_SEED 20240611UL
#define STEP_FRACTION 0.1     /* initial simplex step, of the width      */
#define SIZE_TOL_FRACTION 1e-4 /* stop when the simplex is this small    */
#define PERTURB_FRACTION 0.25 /* sd of a restart perturbation            */
#define PENALTY_BITS 1e-2     /* bits per width² pulled back             */
#define EVALS_BASE 120        /* objective evaluations per start: base  */
#define EVALS_PER_LEVEL 40    /*   + this per level                      */
#define BAD_VALUE 1e6         /* value of a level vector with no design  */
#define FILL_FACTOR 1e3       /* how far outside a "filling" start begins */

typedef struct {
    const qc_level_set *set;
    qc_level_design design;
    void *ctx;
    double width;
    double *x;        /* scratch: the projected trial                   */
    double *best_x;
    double best;      /* best objective (bits)                          */
    size_t evals, limit;
    qc_status failure; /* first failure other than an infeasible trial */
    char message[512]; /* its message                                  */
} search;

static double objective(const gsl_vector *z, void *p)
{
    search *s = p;
    const size_t n = s->set->n;
    for (size_t i = 0; i < n; i++)
        s->x[i] = gsl_vector_get(z, i);
    qc_level_set_project(s->set, s->x);
    /* distance pulled back (z sorted against the projected vector) */
    double pulled = 0.0;
    {
        double *zs = s->x + n;
        for (size_t i = 0; i < n; i++)
            zs[i] = gsl_vector_get(z, i);
        for (size_t i = 1; i < n; i++) /* insertion sort: n is small */
            for (size_t j = i; j > 0 && zs[j - 1] > zs[j]; j--) {
                double t = zs[j];
                zs[j] = zs[j - 1];
                zs[j - 1] = t;
            }
        for (size_t i = 0; i < n; i++)
            pulled += (zs[i] - s->x[i]) * (zs[i] - s->x[i]);
    }
    double penalty = PENALTY_BITS * pulled / (s->width * s->width);
    if (s->failure != QC_OK || s->evals >= s->limit)
        return BAD_VALUE + penalty;
    qc_design_result r;
    qc_status st = s->design(s->ctx, s->x, &r);
    s->evals++;
    double rate = r.rate_bits;
    qc_design_result_clear(&r);
    if (st != QC_OK) {
        if (st != QC_EINFEASIBLE && st != QC_ENOCONV) {
            s->failure = st;
            snprintf(s->message, sizeof s->message, "%s", qc_last_error());
        }
        return BAD_VALUE + penalty;
    }
    if (rate > s->best) {
        s->best = rate;
        memcpy(s->best_x, s->x, n * sizeof *s->x);
    }
    return -rate + penalty;
}

/* One Nelder–Mead run from `start` (n values). */
static qc_status run_from(search *s, const double *start)
{
    const size_t n = s->set->n;
    qc_status st = QC_OK;
    gsl_multimin_fminimizer *m =
        gsl_multimin_fminimizer_alloc(gsl_multimin_fminimizer_nmsimplex2, n);
    gsl_vector *z = gsl_vector_alloc(n), *step = gsl_vector_alloc(n);
    if (!m || !z || !step) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto done;
    }
    for (size_t i = 0; i < n; i++)
        gsl_vector_set(z, i, start[i]);
    gsl_vector_set_all(step, STEP_FRACTION * s->width);
    gsl_multimin_function f = {objective, n, s};
    s->limit = s->evals + qc_level_search_budget(n);
    int rc = gsl_multimin_fminimizer_set(m, &f, z, step);
    if (rc != GSL_SUCCESS) {
        st = qc_fail(QC_ENUMERIC, "level search: Nelder-Mead start failed: %s",
                     gsl_strerror(rc));
        goto done;
    }
    while (s->evals < s->limit && s->failure == QC_OK) {
        rc = gsl_multimin_fminimizer_iterate(m);
        if (rc == GSL_ENOPROG)
            break;
        if (rc != GSL_SUCCESS) {
            st = qc_fail(QC_ENUMERIC, "level search: Nelder-Mead step failed: %s",
                         gsl_strerror(rc));
            goto done;
        }
        double size = gsl_multimin_fminimizer_size(m);
        if (gsl_multimin_test_size(size, SIZE_TOL_FRACTION * s->width) == GSL_SUCCESS)
            break;
    }
done:
    gsl_multimin_fminimizer_free(m);
    gsl_vector_free(z);
    gsl_vector_free(step);
    return st;
}

size_t qc_level_search_budget(size_t n) { return EVALS_BASE + EVALS_PER_LEVEL * n; }

/* A search state for the starts (x: 2n of scratch, best_x: n). */
static qc_status search_alloc(search *s, const search *like)
{
    const size_t n = like->set->n;
    *s = *like;
    s->x = qc_malloc_array(2 * n, sizeof *s->x);
    s->best_x = qc_malloc_array(n, sizeof *s->best_x);
    return s->x && s->best_x ? QC_OK : qc_fail(QC_ENOMEM, "out of memory");
}

static void search_free(search *s)
{
    free(s->x);
    free(s->best_x);
}

/* Start b's outcome into a, which holds the starts before it: the first
 * best in their order and the first failure, as one run after another. */
static void merge_search(search *a, const search *b)
{
    const size_t n = a->set->n;
    if (b->best > a->best) {
        a->best = b->best;
        memcpy(a->best_x, b->best_x, n * sizeof *a->best_x);
    }
    a->evals += b->evals;
    if (a->failure == QC_OK && b->failure != QC_OK) {
        a->failure = b->failure;
        memcpy(a->message, b->message, sizeof a->message);
    }
}

/* The first two runs, each with its own state, and where they begin. */
typedef struct {
    search *run;
    const double *start; /* the given levels                  */
    double *z;           /* scratch: n per run                 */
} first_ctx;

/* The start the first two runs begin from: k = 0 the given levels, 1
 * equally spaced levels filling the set (far outside where it is open),
 * pulled into the set. */
static void first_start(const search *s, const double *start, size_t k, double *z)
{
    const qc_level_set *set = s->set;
    const size_t n = set->n;
    if (k == 0) {
        memcpy(z, start, n * sizeof *z);
    } else {
        double lo = isfinite(set->lo) ? set->lo : -FILL_FACTOR * s->width;
        double hi = isfinite(set->hi) ? set->hi : FILL_FACTOR * s->width;
        if (!isfinite(set->lo) && isfinite(set->hi))
            lo = set->hi - 2.0 * FILL_FACTOR * s->width;
        if (isfinite(set->lo) && !isfinite(set->hi))
            hi = set->lo + 2.0 * FILL_FACTOR * s->width;
        for (size_t i = 0; i < n; i++)
            z[i] = lo + (hi - lo) * (double)i / (double)(n - 1);
    }
    qc_level_set_project(set, z);
}

/* First run k from its own start. */
static qc_status run_first(size_t k, void *ctx)
{
    const first_ctx *c = ctx;
    search *s = &c->run[k];
    double *z = c->z + k * s->set->n;
    first_start(s, c->start, k, z);
    return run_from(s, z);
}

qc_status qc_level_search(const qc_level_set *set, const double *start, size_t starts,
                          int threads_ok, qc_level_design design, void *ctx,
                          double *best_out, double *rate_bits, size_t *evaluations)
{
    qc_gsl_init();
    if (starts == 0)
        return qc_fail(QC_EINVAL, "level search: no starts");
    const size_t n = set->n;
    search like = {.set = set, .design = design, .ctx = ctx, .best = -INFINITY};
    search run[2];
    size_t ready = 0; /* search states to free */
    double *z = qc_malloc_array(2 * n, sizeof *z);
    gsl_rng *rng = gsl_rng_alloc(gsl_rng_mt19937);
    qc_status st = QC_OK;
    if (!z || !rng) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto done;
    }
    gsl_rng_set(rng, SEARCH_SEED);
    /* the width of the set sets the scale of steps and tolerances */
    memcpy(z, start, n * sizeof *z);
    qc_level_set_project(set, z);
    if (isfinite(set->lo) && isfinite(set->hi))
        like.width = set->hi - set->lo;
    else if (!isnan(set->power))
        like.width = 2.0 * sqrt(set->power);
    else
        like.width = z[n - 1] - z[0];
    if (!(like.width > 0.0) || !isfinite(like.width))
        like.width = 1.0;
    const size_t first = starts < 2 ? starts : 2;
    for (size_t k = 0; k < first && st == QC_OK; k++) {
        st = search_alloc(&run[k], &like);
        ready = k + 1;
    }
    if (st != QC_OK)
        goto done;
    /* the first two starts, each with its own state */
    first_ctx fc = {.run = run, .start = start, .z = z};
    st = qc_parallel_starts(first, threads_ok, run_first, &fc);
    search *s = &run[0];
    for (size_t k = 1; k < first && st == QC_OK; k++)
        merge_search(s, &run[k]);
    /* then perturbations of the best so far, one after another */
    for (size_t k = first; k < starts && st == QC_OK; k++) {
        if (!isfinite(s->best)) /* nothing evaluable yet: perturb the start */
            memcpy(s->best_x, start, n * sizeof *z);
        for (size_t i = 0; i < n; i++)
            z[i] = s->best_x[i] + gsl_ran_gaussian(rng, PERTURB_FRACTION * s->width);
        qc_level_set_project(set, z);
        st = run_from(s, z);
    }
    if (st == QC_OK && s->failure != QC_OK)
        st = qc_fail(s->failure, "level search: %s", s->message);
    if (st == QC_OK && !isfinite(s->best))
        st = qc_fail(QC_EINFEASIBLE, "level search: no level placement tried could be "
                                     "designed under the constraints");
    if (st == QC_OK) {
        memcpy(best_out, s->best_x, n * sizeof *best_out);
        *rate_bits = s->best;
    }
    *evaluations = s->evals;
done:
    for (size_t k = 0; k < ready; k++)
        search_free(&run[k]);
    free(z);
    gsl_rng_free(rng);
    return st;
}
