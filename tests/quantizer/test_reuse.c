/* test_reuse.c — work a design shares or skips gives the same numbers, to
 * the last bit, as the work done again: the Gaussian models' two tails
 * from one call (gauss.c, gauss_sd.c), the store of unquantized rates
 * (unquantized_memo.c), the uniform quantizer's centring, whose
 * bisections stop once the rounded middle is known (uniform.c), against
 * full bisections written out here as the reference, and the levels a law
 * does not send, skipped by the rates and searches of its thresholds
 * (discretize.c, cell_mi.c, relocate.c, lloyd_max.c), against the same
 * problem on the sent levels alone (and by the grid DP), and the cells
 * and levels a clipped
 * rate passes over (cells beyond a level's support, cleared only where a
 * row's band has moved; levels whose support does not reach a threshold),
 * against a channel computed afresh and sums over every level (and the
 * run of levels whose supports hold a point, against every level), and the
 * uniform range's and the thresholds' choice among equally good ones with
 * the clipped rate as a screen, against that choice on the exact rate
 * alone. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "quantcap.h"
#include "quantizer/quantizer.h"

#define TEST_RNG_SEED 0x9E3779B97F4A7C15ull /* random cases below */
#include "test_helpers.h"

#define TAIL_CASES 200000 /* random (level, threshold, sigma) triples */
#define TIDY_CASES 24     /* random uniform designs centred both ways */
#define EPS_NATS 1e-10    /* rate the centring may give up (the designs' own) */

static qc_model *gauss(double sigma)
{
    qc_model *m;
    assert_int_equal(qc_model_alloc(&qc_model_gauss, &sigma, &m), QC_OK);
    return m;
}

static int same_bits(double a, double b) { return memcmp(&a, &b, sizeof a) == 0; }

/* tails() gives below() and above() bit for bit, near the mean (both
 * computed), at GSL's switch between its formulas, and deep in the tails:
 * gauss (σ from 1e-3 to 10) and gauss-sd (σ0 from 1e-3 to 10, a and b
 * up to 1, levels x ≥ 0). */
static void tails_match(const qc_model_type *type)
{
    assert_non_null(type->tails);
    static qc_model *cur;
    for (size_t i = 0; i < TAIL_CASES; i++) {
        if (i % 1000 == 0) {
            double p[3] = {pow(10.0, -3.0 + 4.0 * uniform01()), uniform01(), uniform01()};
            qc_model_free(cur);
            assert_int_equal(qc_model_alloc(type, p, &cur), QC_OK);
        }
        double x = type == &qc_model_gauss ? 4.0 * uniform01() - 2.0 : 4.0 * uniform01();
        double mean, var;
        assert_int_equal(type->moments(cur, x, &mean, &var), QC_OK);
        double s = sqrt(var);
        double u = i % 4 == 0   ? 0.66291 + 1e-3 * (uniform01() - 0.5) /* GSL's switch */
                   : i % 4 == 1 ? 1.0 + 1e-9 * (uniform01() - 0.5)    /* ours */
                                : 90.0 * uniform01() - 45.0;
        if (i % 8 == 0)
            u = -u;
        double t = x + u * s, lo, hi;
        type->tails(cur, x, t, &lo, &hi);
        if (!same_bits(lo, type->below(cur, x, t)) || !same_bits(hi, type->above(cur, x, t)))
            fail_msg("%s: tails differ at x = %.17g, t = %.17g, sigma = %.17g", type->name, x,
                     t, s);
    }
    qc_model_free(cur);
    cur = NULL;
}

static void test_gauss_tails(void **state)
{
    (void)state;
    tails_match(&qc_model_gauss);
    tails_match(&qc_model_gauss_sd);
}

/* A stored rate is the computed one; the same channel again is a hit, a
 * changed law or parameter a miss. */
static void test_memo(void **state)
{
    (void)state;
    qc_unquantized_memo *memo;
    assert_int_equal(qc_unquantized_memo_alloc(0, &memo), QC_OK);
    const double levels[4] = {-3.0, -1.0, 1.0, 3.0};
    double law[4] = {0.25, 0.25, 0.25, 0.25};
    qc_model *m = gauss(0.9), *m2 = gauss(0.9), *m3 = gauss(0.91);
    double mi, err, mi_m, err_m, mi_h, err_h;
    int nl, nl_m, nl_h;
    assert_int_equal(qc_unquantized_mi_detail(m, levels, law, 4, &mi, &err, &nl), QC_OK);
    assert_int_equal(qc_unquantized_mi_memo(memo, m, levels, law, 4, &mi_m, &err_m, &nl_m),
                     QC_OK);
    /* another instance of the same setting finds it */
    assert_int_equal(qc_unquantized_mi_memo(memo, m2, levels, law, 4, &mi_h, &err_h, &nl_h),
                     QC_OK);
    assert_true(same_bits(mi, mi_m) && same_bits(err, err_m) && nl == nl_m);
    assert_true(same_bits(mi, mi_h) && same_bits(err, err_h) && nl == nl_h);
    size_t hits, misses;
    qc_unquantized_memo_counts(memo, &hits, &misses);
    assert_int_equal(hits, 1);
    assert_int_equal(misses, 1);
    assert_int_equal(qc_unquantized_mi_memo(memo, m3, levels, law, 4, &mi_h, NULL, NULL), QC_OK);
    law[0] = 0.3;
    law[3] = 0.2;
    assert_int_equal(qc_unquantized_mi_memo(memo, m, levels, law, 4, &mi_h, NULL, NULL), QC_OK);
    qc_unquantized_memo_counts(memo, &hits, &misses);
    assert_int_equal(hits, 1);
    assert_int_equal(misses, 3);
    /* a budget too small for any entry keeps nothing and still answers */
    qc_unquantized_memo *tiny;
    assert_int_equal(qc_unquantized_memo_alloc(16, &tiny), QC_OK);
    law[0] = 0.25;
    law[3] = 0.25;
    for (int k = 0; k < 2; k++) {
        assert_int_equal(qc_unquantized_mi_memo(tiny, m, levels, law, 4, &mi_h, NULL, NULL),
                         QC_OK);
        assert_true(same_bits(mi, mi_h));
    }
    qc_unquantized_memo_counts(tiny, &hits, &misses);
    assert_int_equal(hits, 0);
    assert_int_equal(misses, 2);
    qc_unquantized_memo_free(tiny);
    qc_unquantized_memo_free(memo);
    qc_unquantized_memo_free(NULL);
    qc_model_free(m);
    qc_model_free(m2);
    qc_model_free(m3);
}

/* ---- the centring with full bisections (the reference) ---------------- */

static void range_thresholds(double c, double h, size_t nt, double *t)
{
    const double K = (double)(nt + 1);
    for (size_t j = 0; j < nt; j++)
        t[j] = c - h + 2.0 * h * (double)(j + 1) / K;
}

static qc_status full_center(qc_threshold_objective f, void *ctx, size_t nt, double *c,
                             double *h, int which, double lo_p, double hi_p, double floor_v,
                             double *t)
{
    double *p = which ? h : c;
    const double p0 = *p;
    double ends[2];
    for (int side = 0; side < 2; side++) {
        double good = p0, bad = side ? hi_p : lo_p, v;
        for (int k = 0; k < 200; k++) {
            double x = k == 0 ? bad : 0.5 * (good + bad);
            if (k > 0 && (x == good || x == bad))
                break;
            *p = x;
            range_thresholds(*c, *h, nt, t);
            int ordered = *h > 0.0;
            for (size_t j = 1; ordered && j < nt; j++)
                ordered = t[j] > t[j - 1];
            v = -INFINITY;
            if (ordered && f(ctx, t, nt, &v) != QC_OK)
                return QC_ENUMERIC;
            if (v >= floor_v) {
                good = x;
                if (k == 0)
                    break;
            } else {
                bad = x;
            }
        }
        ends[side] = good;
    }
    *p = qc_simplest_within(0.5 * (ends[0] + ends[1]), 1e-4 * (ends[1] - ends[0]));
    range_thresholds(*c, *h, nt, t);
    double v;
    qc_status st = f(ctx, t, nt, &v);
    if (st != QC_OK || !(v >= floor_v))
        *p = p0;
    return st;
}

static size_t centred_coordinates; /* coordinates full_tidy centred */

static qc_status full_tidy(const qc_model *model, const double *levels, size_t nlevels,
                           size_t nt, qc_threshold_objective f, void *ctx, double eps,
                           double *t)
{
    double *u = malloc(nt * sizeof *u);
    double v0;
    qc_status st = f(ctx, t, nt, &v0);
    const double w = t[1] - t[0], K = (double)(nt + 1);
    double h = 0.5 * K * w, c = t[0] - w + h, lo, hi;
    qc_levels_support(model, levels, nlevels, &lo, &hi);
    const double hmax = fmax(fmax(hi - c, c - lo), h);
    /* a coordinate is centred only where a step of 1/100 of a cell to
     * either side keeps the rate within eps (docs/methods.md, "Equally good
     * thresholds"); otherwise it stays */
    int moved = 0;
    for (int which = 1; which >= 0 && st == QC_OK; which--) {
        double *p = which ? &h : &c, p0 = *p;
        int flat = 1;
        for (int side = 0; side < 2 && flat; side++) {
            double v = -INFINITY;
            *p = p0 + (side ? 1e-2 : -1e-2) * w;
            range_thresholds(c, h, nt, u);
            if (f(ctx, u, nt, &v) != QC_OK)
                st = QC_ENUMERIC;
            flat = v >= v0 - eps;
        }
        *p = p0;
        if (st == QC_OK && flat) {
            st = which ? full_center(f, ctx, nt, &c, &h, 1, 0.0, hmax, v0 - eps, u)
                       : full_center(f, ctx, nt, &c, &h, 0, fmin(lo, c), fmax(hi, c),
                                     v0 - eps, u);
            moved++;
        }
    }
    centred_coordinates += moved;
    if (st == QC_OK && moved) {
        double v;
        range_thresholds(c, h, nt, u);
        int ordered = 1;
        for (size_t j = 1; j < nt; j++)
            ordered = ordered && u[j] > u[j - 1];
        if (ordered && (st = f(ctx, u, nt, &v)) == QC_OK && v >= v0 - eps)
            memcpy(t, u, nt * sizeof *t);
    }
    free(u);
    return st;
}

/* Random level sets (some asymmetric), noise and resolutions: the centred
 * uniform quantizer is the one of full bisections, bit for bit; both
 * flat coordinates (centred) and sharp ones (left) occur. */
static void test_tidy_same_as_full_bisection(void **state)
{
    (void)state;
    centred_coordinates = 0;
    for (size_t i = 0; i < TIDY_CASES; i++) {
        size_t n = uniform_between(2, 8), nt = ((size_t)1 << uniform_between(1, 6)) - 1;
        if (nt < 2)
            nt = 3;
        double levels[8], law[8];
        for (size_t k = 0; k < n; k++) {
            levels[k] = -1.0 + 2.0 * (double)k / (double)(n - 1);
            if (i % 3 == 0)
                levels[k] += 0.1 * uniform01(); /* asymmetric */
            law[k] = 1.0 / (double)n;
        }
        qc_model *m = gauss(pow(10.0, -2.0 + 2.2 * uniform01()));
        qc_cell_mi *w;
        assert_int_equal(qc_cell_mi_alloc(m, levels, law, n, nt, &w), QC_OK);
        double *t = malloc(nt * sizeof *t), *ref = malloc(nt * sizeof *ref);
        assert_int_equal(qc_uniform_search(m, levels, n, nt, w, t, NULL, NULL), QC_OK);
        memcpy(ref, t, nt * sizeof *t);
        assert_int_equal(
            qc_uniform_tidy(m, levels, n, nt, qc_cell_mi_objective, w, NULL, EPS_NATS, t), QC_OK);
        assert_int_equal(full_tidy(m, levels, n, nt, qc_cell_mi_objective, w, EPS_NATS, ref), QC_OK);
        for (size_t j = 0; j < nt; j++)
            if (!same_bits(t[j], ref[j]))
                fail_msg("case %zu (%zu levels, %zu thresholds): threshold %zu is %.17g, full "
                         "bisections give %.17g",
                         i, n, nt, j + 1, t[j], ref[j]);
        free(t);
        free(ref);
        qc_cell_mi_free(w);
        qc_model_free(m);
    }
    assert_true(centred_coordinates > 0 && centred_coordinates < 2 * TIDY_CASES);
}

/* A law that sends few of many levels: the rates of the quantizer, its
 * gradient and curvature, the threshold moves and Lloyd–Max skip the
 * levels it does not send (their rows of the channel are left 0, no model
 * call) and give, to the last bit, what the same work on the sent levels
 * alone gives. 64 levels in Gaussian noise, every fifth sent (the first
 * and the last among them, so that both problems have the same output
 * range), 15 thresholds. */
static void test_unsent_levels_skipped(void **state)
{
    (void)state;
    enum { N = 64, NT = 15, STRIDE = 5 };
    qc_model *m = gauss(2.5);
    double levels[N], law[N], sent_levels[N], sent_law[N];
    size_t ns = 0;
    double total = 0.0;
    for (size_t i = 0; i < N; i++) {
        levels[i] = 2.0 * (double)i - (double)(N - 1);
        law[i] = i % STRIDE == 0 || i == N - 1 ? 1.0 + (double)(i % 7) : 0.0;
        total += law[i];
    }
    for (size_t i = 0; i < N; i++) {
        law[i] /= total;
        if (law[i] > 0.0) {
            sent_levels[ns] = levels[i];
            sent_law[ns++] = law[i];
        }
    }
    qc_cell_mi *all, *sent;
    assert_int_equal(qc_cell_mi_alloc(m, levels, law, N, NT, &all), QC_OK);
    assert_int_equal(qc_cell_mi_alloc(m, sent_levels, sent_law, ns, NT, &sent), QC_OK);
    double t[NT], ga[NT], gs[NT], ia, is;
    for (size_t j = 0; j < NT; j++)
        t[j] = -60.0 + 8.0 * (double)j + 0.3 * sin((double)j);
    assert_int_equal(qc_cell_mi_eval(all, t, &ia, ga), QC_OK);
    assert_int_equal(qc_cell_mi_eval(sent, t, &is, gs), QC_OK);
    assert_true(same_bits(ia, is));
    for (size_t j = 0; j < NT; j++)
        assert_true(same_bits(ga[j], gs[j]));
    for (size_t i = 0; i < N; i++) /* unsent rows: not computed */
        for (size_t c = 0; i % STRIDE != 0 && i != N - 1 && c <= NT; c++)
            assert_true(all->channel->p[i * (NT + 1) + c] == 0.0);

    /* the exact gradient and tridiagonal curvature of the Newton steps */
    double ha[NT], hs[NT], oa[NT], os[NT], Fa[NT], Fs[NT];
    double *fa = malloc(NT * N * sizeof *fa), *fs = malloc(NT * N * sizeof *fs);
    assert_non_null(fa);
    assert_non_null(fs);
    assert_true(qc_cell_mi_derivatives(all, t, 1e-5, ga, ha, oa, fa, Fa));
    assert_true(qc_cell_mi_derivatives(sent, t, 1e-5, gs, hs, os, fs, Fs));
    for (size_t j = 0; j < NT; j++) {
        assert_true(same_bits(ga[j], gs[j]));
        assert_true(same_bits(ha[j], hs[j]));
        assert_true(same_bits(Fa[j], Fs[j]));
        if (j + 1 < NT)
            assert_true(same_bits(oa[j], os[j]));
    }

    /* Newton refinement and threshold moves, from the same start */
    double ta[NT], ts[NT];
    memcpy(ta, t, sizeof t);
    memcpy(ts, t, sizeof t);
    assert_int_equal(qc_refine_continuous(all, 2.5, ta, &ia, NULL), QC_OK);
    assert_int_equal(qc_refine_continuous(sent, 2.5, ts, &is, NULL), QC_OK);
    assert_int_equal(qc_relocate_thresholds(all, 2.5, ta, &ia, NULL), QC_OK);
    assert_int_equal(qc_relocate_thresholds(sent, 2.5, ts, &is, NULL), QC_OK);
    assert_true(same_bits(ia, is));
    for (size_t j = 0; j < NT; j++)
        assert_true(same_bits(ta[j], ts[j]));

    /* Lloyd–Max from its own start */
    double ra[NT + 1], rs[NT + 1];
    assert_int_equal(qc_lloyd_max(m, levels, law, N, NT, 0, 0, ta, ra, NULL), QC_OK);
    assert_int_equal(qc_lloyd_max(m, sent_levels, sent_law, ns, NT, 0, 0, ts, rs, NULL),
                     QC_OK);
    for (size_t j = 0; j < NT; j++)
        assert_true(same_bits(ta[j], ts[j]));
    for (size_t c = 0; c <= NT; c++)
        assert_true(same_bits(ra[c], rs[c]));
    free(fa);
    free(fs);
    qc_cell_mi_free(all);
    qc_cell_mi_free(sent);
    qc_model_free(m);
}

/* A clipped workspace rated at thresholds whose bands move (a wide range,
 * a narrow one, the law then changed to leave levels unsent) holds, to the
 * last bit, the channel and output law computed afresh at the last
 * thresholds: what a row's old band left behind is cleared. 256 levels
 * and 512 cells, so that rows and the output law are shared among threads
 * where there are several. */
static void test_clipped_bands_moved(void **state)
{
    (void)state;
    enum { N = 256, NT = 511 };
    qc_model *m = gauss(3.0);
    double *levels = malloc(N * sizeof *levels), *law = malloc(N * sizeof *law);
    double *ta = malloc(NT * sizeof *ta), *tb = malloc(NT * sizeof *tb);
    double *q = malloc((NT + 1) * sizeof *q);
    assert_true(levels && law && ta && tb && q);
    for (size_t i = 0; i < N; i++) {
        levels[i] = 2.0 * (double)i - (double)(N - 1);
        law[i] = 1.0 / N;
    }
    range_thresholds(0.0, 420.0, NT, ta);
    range_thresholds(-30.0, 200.0, NT, tb);
    qc_cell_mi *w;
    assert_int_equal(qc_cell_mi_alloc(m, levels, law, N, NT, &w), QC_OK);
    w->clip = 1;
    double mi;
    for (int pass = 0; pass < 2; pass++) {
        if (pass == 1) { /* every third level unsent */
            double total = 0.0;
            for (size_t i = 0; i < N; i++)
                total += law[i] = i % 3 == 1 ? 0.0 : 1.0 + (double)(i % 5);
            for (size_t i = 0; i < N; i++)
                law[i] /= total;
        }
        assert_int_equal(qc_cell_mi_eval(w, ta, &mi, NULL), QC_OK);
        assert_int_equal(qc_cell_mi_eval(w, tb, &mi, NULL), QC_OK);
        qc_dmc *d;
        assert_int_equal(qc_dmc_alloc(N, NT + 1, &d), QC_OK);
        double *lo = malloc((NT + 1) * sizeof *lo), *hi = malloc((NT + 1) * sizeof *hi);
        assert_true(lo && hi);
        assert_int_equal(qc_discretize_clipped(m, levels, N, tb, NT, lo, hi, d), QC_OK);
        size_t moved = 0; /* cells a band at ta held that tb's band does not */
        for (size_t i = 0; i < N; i++)
            for (size_t c = 0; c <= NT; c++) {
                double want = law[i] > 0.0 ? d->p[i * (NT + 1) + c] : 0.0;
                assert_true(same_bits(w->channel->p[i * (NT + 1) + c], want));
                moved += want == 0.0 && c >= qc_count_below(ta, NT, w->sup_lo[i], 0) &&
                         c <= qc_count_below(ta, NT, w->sup_hi[i], 1);
            }
        assert_true(moved > N); /* the case does move the bands */
        qc_output_law(d, law, q);
        for (size_t c = 0; c <= NT; c++)
            assert_true(same_bits(w->q[c], q[c]));
        qc_cell_mi *fresh; /* the rate, from a workspace rated once */
        double mi_fresh;
        assert_int_equal(qc_cell_mi_alloc(m, levels, law, N, NT, &fresh), QC_OK);
        fresh->clip = 1;
        assert_int_equal(qc_cell_mi_eval(fresh, tb, &mi_fresh, NULL), QC_OK);
        assert_true(same_bits(mi, mi_fresh));
        qc_cell_mi_free(fresh);
        qc_dmc_free(d);
        free(lo);
        free(hi);
    }
    qc_cell_mi_free(w);
    free(levels);
    free(law);
    free(ta);
    free(tb);
    free(q);
    qc_model_free(m);
}

/* The levels a clipped workspace takes as reaching y (qc_cell_mi_reach)
 * are exactly those inside at y, and the gradient and curvature summed
 * over them alone are, to the last bit, those summed over every level.
 * 200 levels of unequal spacing, 300 thresholds. */
static void test_clipped_reach(void **state)
{
    (void)state;
    enum { N = 200, NT = 299 };
    qc_model *m = gauss(1.5);
    double levels[N], law[N];
    for (size_t i = 0; i < N; i++) {
        levels[i] = 1.5 * (double)i + 0.4 * sin(0.7 * (double)i) - 150.0;
        law[i] = (1.0 + (double)(i % 4)) / (2.5 * N);
    }
    qc_cell_mi *w;
    assert_int_equal(qc_cell_mi_alloc(m, levels, law, N, NT, &w), QC_OK);
    w->clip = 1;
    assert_true(w->supports_ordered);
    for (double y = -175.0; y <= 175.0; y += 0.37) {
        size_t x0, x1;
        qc_cell_mi_reach(w, y, &x0, &x1);
        for (size_t x = 0; x < N; x++)
            assert_int_equal(x >= x0 && x < x1, qc_cell_mi_inside(w, x, y));
    }
    double t[NT];
    range_thresholds(0.0, 160.0, NT, t);
    double mi, g[2][NT], hd[2][NT], ho[2][NT], F[2][NT];
    double *f = malloc((size_t)NT * N * sizeof *f);
    assert_non_null(f);
    assert_int_equal(qc_cell_mi_eval(w, t, &mi, NULL), QC_OK);
    for (int all = 0; all < 2; all++) {
        w->supports_ordered = !all; /* all: every level's terms are summed */
        assert_true(qc_cell_mi_derivatives(w, t, 1e-5, g[all], hd[all], ho[all], f, F[all]));
    }
    for (size_t j = 0; j < NT; j++) {
        assert_true(same_bits(g[0][j], g[1][j]));
        assert_true(same_bits(hd[0][j], hd[1][j]));
        assert_true(same_bits(F[0][j], F[1][j]));
        if (j + 1 < NT)
            assert_true(same_bits(ho[0][j], ho[1][j]));
    }
    free(f);
    qc_cell_mi_free(w);
    qc_model_free(m);
}

/* The grid DP over a channel whose law leaves some levels unsent (their
 * tail sums skipped, the others gathered eight at a time) gives, to the
 * last bit, the cuts and rate of the DP over the sent rows alone: 27
 * levels, 11 of them sent, 400 fine cells into 9. */
static void test_dp_unsent_rows(void **state)
{
    (void)state;
    enum { N = 27, FINE = 400, K = 9 };
    qc_dmc *all = random_dmc(N, FINE, 0.4), *sent;
    double law[N], sent_law[N], total = 0.0;
    size_t ns = 0;
    for (size_t i = 0; i < N; i++)
        total += law[i] = i % 5 == 1 || i % 7 == 3 || i == 25 ? 1.0 + (double)(i % 4) : 0.0;
    assert_int_equal(qc_dmc_alloc(11, FINE, &sent), QC_OK);
    for (size_t i = 0; i < N; i++) {
        law[i] /= total;
        if (law[i] > 0.0) {
            memcpy(sent->p + ns * FINE, all->p + i * FINE, FINE * sizeof *all->p);
            sent_law[ns++] = law[i];
        }
    }
    assert_int_equal(ns, 11);
    for (int method = 0; method < 2; method++) {
        const qc_dp_method m = method ? QC_DP_FAST : QC_DP_PLAIN;
        size_t ca[K + 1], cs[K + 1];
        double ma, ms;
        assert_int_equal(qc_dp_quantize(all, law, K, m, ca, &ma), QC_OK);
        assert_int_equal(qc_dp_quantize(sent, sent_law, K, m, cs, &ms), QC_OK);
        assert_true(same_bits(ma, ms));
        assert_memory_equal(ca, cs, sizeof ca);
    }
    qc_dmc_free(all);
    qc_dmc_free(sent);
}

/* The run of levels whose supports hold a point (qc_supports_holding,
 * which the companding start's mixture and the clipped gradient visit
 * instead of every level) is exactly the set of those that hold it, open
 * or closed, at points inside, between and on the ends of the supports;
 * supports whose ends fall are not taken as ordered. */
static void test_supports_holding(void **state)
{
    (void)state;
    enum { N = 300 };
    double lo[N], hi[N];
    for (size_t i = 0; i < N; i++) { /* widening, unevenly spaced */
        double c = 1.3 * (double)i + 0.5 * sin((double)i), w = 2.0 + 0.01 * (double)i;
        lo[i] = c - w;
        hi[i] = c + w;
    }
    assert_true(qc_supports_ordered(lo, hi, N));
    for (int closed = 0; closed < 2; closed++)
        for (size_t k = 0; k < 3 * N + 40; k++) {
            /* every end, and points spread over and beyond the span */
            double y = k < N ? lo[k] : k < 2 * N ? hi[k - N]
                                                 : -10.0 + 0.47 * (double)(k - 2 * N);
            size_t a, b;
            qc_supports_holding(lo, hi, N, y, closed, &a, &b);
            assert_true(a <= b && b <= N);
            for (size_t x = 0; x < N; x++) {
                int holds = closed ? lo[x] <= y && y <= hi[x] : lo[x] < y && y < hi[x];
                assert_int_equal(x >= a && x < b, holds);
            }
        }
    hi[N / 2] = hi[N / 2 - 1] - 1.0; /* an end that falls */
    assert_false(qc_supports_ordered(lo, hi, N));
}

/* PAM-n with levels −(n − 1) … n − 1 under the uniform law; returns its
 * power E[x²]. */
static double uniform_pam(double *levels, double *law, size_t n)
{
    double power = 0.0;
    for (size_t i = 0; i < n; i++) {
        levels[i] = 2.0 * (double)i - (double)(n - 1);
        law[i] = 1.0 / (double)n;
        power += law[i] * levels[i] * levels[i];
    }
    return power;
}

static size_t exact_calls; /* rates of exact_rate since the last reset */

static qc_status exact_rate(void *ctx, const double *t, size_t nt, double *v)
{
    exact_calls++;
    return qc_cell_mi_objective(ctx, t, nt, v);
}

/* The choice among equally good uniform ranges with the clipped rate as a
 * screen gives, to the last bit, the thresholds it gives on the exact rate
 * alone: PAM-64 at 20 dB with 128 cells, whose range the rate pins down
 * (the screen spares every exact rate but none is needed), and at 60 dB,
 * saturated, where both coordinates are flat and move (the exact rate
 * decides). */
static void test_tidy_screen(void **state)
{
    (void)state;
    enum { N = 64, NT = 127 };
    const double snr_db[2] = {20.0, 60.0};
    double levels[N], law[N];
    const double power = uniform_pam(levels, law, N);
    for (int k = 0; k < 2; k++) {
        qc_model *m = gauss(sqrt(power / pow(10.0, snr_db[k] / 10.0)));
        qc_cell_mi *w;
        assert_int_equal(qc_cell_mi_alloc(m, levels, law, N, NT, &w), QC_OK);
        double t[NT], plain[NT], screened[NT];
        w->clip = 1;
        assert_int_equal(qc_uniform_search(m, levels, N, NT, w, t, NULL, NULL), QC_OK);
        w->clip = 0;
        memcpy(plain, t, sizeof t);
        memcpy(screened, t, sizeof t);
        const qc_rate_screen screen = {qc_cell_mi_clipped_objective, w, QC_CLIP_RATE_NATS};
        exact_calls = 0;
        assert_int_equal(
            qc_uniform_tidy(m, levels, N, NT, exact_rate, w, NULL, EPS_NATS, plain), QC_OK);
        const size_t plain_calls = exact_calls;
        exact_calls = 0;
        assert_int_equal(
            qc_uniform_tidy(m, levels, N, NT, exact_rate, w, &screen, EPS_NATS, screened),
            QC_OK);
        size_t moved = 0;
        for (size_t j = 0; j < NT; j++) {
            assert_true(same_bits(plain[j], screened[j]));
            moved += plain[j] != t[j];
        }
        if (k == 0) { /* pinned: nothing moves, no exact rate needed */
            assert_int_equal(moved, 0);
            assert_true(plain_calls >= 3);
            assert_int_equal(exact_calls, 0);
        } else { /* flat: the range moves, as the exact rate decides */
            assert_true(moved > 0);
            assert_true(exact_calls > 0);
        }
        qc_cell_mi_free(w);
        qc_model_free(m);
    }
}

/* The choice among equally good thresholds of 511 thresholds over PAM-64
 * (more than it centres: it only removes and re-inserts redundant ones)
 * gives the same thresholds with the clipped screen as without: at 20 dB,
 * uniform thresholds over the levels, where every one matters and none
 * moves; at 60 dB, saturated, where most lie between separate levels and
 * are placed again (the screen cannot decide, the exact rate does). */
static void test_tidy_redundant_screen(void **state)
{
    (void)state;
    enum { N = 64, NT = 511 };
    const double snr_db[2] = {20.0, 60.0};
    double levels[N], law[N];
    const double power = uniform_pam(levels, law, N);
    for (int k = 0; k < 2; k++) {
        qc_model *m = gauss(sqrt(power / pow(10.0, snr_db[k] / 10.0)));
        double t[NT], plain[NT], screened[NT];
        range_thresholds(0.0, (double)N, NT, t);
        memcpy(plain, t, sizeof t);
        memcpy(screened, t, sizeof t);
        assert_int_equal(qc_tidy_thresholds_screened(m, levels, law, N, NT, EPS_NATS, 0, plain),
                         QC_OK);
        assert_int_equal(
            qc_tidy_thresholds_screened(m, levels, law, N, NT, EPS_NATS, 1, screened), QC_OK);
        size_t moved = 0;
        for (size_t j = 0; j < NT; j++) {
            assert_true(same_bits(plain[j], screened[j]));
            moved += plain[j] != t[j];
        }
        if (k == 0)
            assert_int_equal(moved, 0);
        else
            assert_true(moved > 0);
        qc_model_free(m);
    }
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_gauss_tails),
        cmocka_unit_test(test_memo),
        cmocka_unit_test(test_tidy_same_as_full_bisection),
        cmocka_unit_test(test_unsent_levels_skipped),
        cmocka_unit_test(test_clipped_bands_moved),
        cmocka_unit_test(test_clipped_reach),
        cmocka_unit_test(test_supports_holding),
        cmocka_unit_test(test_dp_unsent_rows),
        cmocka_unit_test(test_tidy_screen),
        cmocka_unit_test(test_tidy_redundant_screen),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
