/* test_coarse_fine.c — the MI-optimal threshold search
 * (src/quantizer/optimal.c): its rate is never below the optimum of the
 * dynamic programme on its own grid (the guarantee) nor below the
 * exhaustive dynamic programme on a 4096-cell fine grid, on several models
 * and resolutions; the automatic grid has the size and spacing of its rule
 * (scale_grid.c); the Newton refinement (refine.c) never lowers the rate
 * and ends where the exact gradient vanishes, and its curvature is the
 * exact Hessian for Gaussian laws; the mirror test of the threshold moves
 * tells symmetric channels apart, and its shortcuts there reach the rate
 * of the full search; more cells never lower the
 * rate; on a dense alphabet the DP's rate is that of its cuts and its
 * grid keeps within the DP's work limit. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "quantizer/quantizer.h"

#define TOL_RATE 1e-12 /* bits: rounding of two rate sums of up to 2048 terms */
#define TOL_GRAD 1e-7  /* nats per noise scale: gradient left by the Newton stop */
#define OLD_FINE 4096  /* the fixed fine grid of the exhaustive search */

typedef struct {
    const char *name;
    const qc_model_type *type;
    double params[3];
    double levels[8];
    double law[8];
    size_t nlevels;
    size_t max_bits;
} case_t;

static const case_t cases[] = {
    /* PAM-8 at about 16 dB: near-degenerate local maxima at 4 bits (1e-6 bit
     * apart), which a coarse grid alone does not resolve */
    {"pam8-16dB", &qc_model_gauss, {0.72629}, {-7, -5, -3, -1, 1, 3, 5, 7},
     {0.125, 0.125, 0.125, 0.125, 0.125, 0.125, 0.125, 0.125}, 8, 6},
    /* PAM-4, σ = 0.6, with an uneven law */
    {"pam4-uneven", &qc_model_gauss, {0.6}, {-3, -1, 1, 3},
     {0.1, 0.4, 0.3, 0.2}, 4, 6},
    /* binary input at 0 dB: the single-threshold and tail regime */
    {"bpsk-0dB", &qc_model_gauss, {1.0}, {-1, 1}, {0.5, 0.5}, 2, 5},
    /* signal-dependent noise, unipolar levels */
    {"gauss-sd", &qc_model_gauss_sd, {0.2, 0.05, 0.0}, {0, 1, 2, 3, 4, 5, 6, 7},
     {0.125, 0.125, 0.125, 0.125, 0.125, 0.125, 0.125, 0.125}, 8, 5},
};

static qc_model *model_of(const case_t *c)
{
    qc_model *m;
    assert_int_equal(qc_model_alloc(c->type, c->params, &m), QC_OK);
    return m;
}

/* Rate in bits of thresholds t. */
static double rate_bits(const qc_model *m, const case_t *c, const double *t, size_t nt)
{
    qc_cell_mi *w;
    double mi;
    assert_int_equal(qc_cell_mi_alloc(m, c->levels, c->law, c->nlevels, nt, &w), QC_OK);
    assert_int_equal(qc_cell_mi_eval(w, t, &mi, NULL), QC_OK);
    qc_cell_mi_free(w);
    return mi * QC_LOG2E;
}

/* The design as the optimal strategy runs it (automatic grid); the DP
 * optimum on that grid into *dp_bits (may be NULL). */
static double design_dp(const qc_model *m, const case_t *c, size_t nt, double *t,
                        double *dp_bits)
{
    qc_fine_grid g;
    assert_int_equal(qc_coarse_grid_build(m, c->levels, c->law, c->nlevels, nt + 1, &g),
                     QC_OK);
    assert_int_equal(g.n, qc_coarse_cells(m, c->levels, c->law, c->nlevels, nt + 1));
    double mi;
    assert_int_equal(
        qc_optimal_thresholds(m, c->levels, c->law, c->nlevels, nt, &g, t, &mi, NULL), QC_OK);
    if (dp_bits) {
        size_t K = nt + 1, *cuts = malloc((K + 1) * sizeof *cuts);
        double *td = malloc(nt * sizeof *td);
        assert_non_null(cuts);
        assert_non_null(td);
        assert_int_equal(qc_dp_quantize(g.p, c->law, K, QC_DP_PLAIN, cuts, NULL), QC_OK);
        for (size_t j = 1; j < K; j++)
            td[j - 1] = g.bounds[cuts[j] - 1];
        *dp_bits = rate_bits(m, c, td, nt);
        free(cuts);
        free(td);
    }
    qc_fine_grid_clear(&g);
    return mi * QC_LOG2E;
}

static double design(const qc_model *m, const case_t *c, size_t nt, double *t)
{
    return design_dp(m, c, nt, t, NULL);
}

/* Exhaustive DP over a 4096-cell grid, as the design did before the
 * coarse-to-fine search; returns its rate and thresholds. */
static double exhaustive(const qc_model *m, const case_t *c, size_t nt, double *t)
{
    qc_fine_grid g;
    size_t K = nt + 1, *cuts = malloc((K + 1) * sizeof *cuts);
    assert_non_null(cuts);
    assert_int_equal(
        qc_fine_grid_build(m, c->levels, c->law, c->nlevels, OLD_FINE, K, &g), QC_OK);
    assert_int_equal(qc_dp_quantize(g.p, c->law, K, QC_DP_FAST, cuts, NULL), QC_OK);
    for (size_t j = 1; j < K; j++)
        t[j - 1] = g.bounds[cuts[j] - 1];
    qc_fine_grid_clear(&g);
    free(cuts);
    return rate_bits(m, c, t, nt);
}

static void test_not_below_exhaustive_dp(void **state)
{
    (void)state;
    for (size_t k = 0; k < sizeof cases / sizeof *cases; k++) {
        const case_t *c = &cases[k];
        qc_model *m = model_of(c);
        double prev = 0.0;
        for (size_t bits = 1; bits <= c->max_bits; bits++) {
            size_t nt = ((size_t)1 << bits) - 1;
            double *t = malloc(nt * sizeof *t), *te = malloc(nt * sizeof *te);
            assert_non_null(t);
            assert_non_null(te);
            double r = design(m, c, nt, t), re = exhaustive(m, c, nt, te);
            if (r < re - TOL_RATE)
                fail_msg("%s, %zu bits: coarse to fine %.15f bit < exhaustive DP %.15f", c->name,
                         bits, r, re);
            /* the reported rate is the rate of the thresholds returned */
            assert_true(fabs(rate_bits(m, c, t, nt) - r) <= TOL_RATE);
            for (size_t j = 1; j < nt; j++)
                assert_true(t[j] > t[j - 1]);
            /* more cells never lower the optimal rate */
            assert_true(r >= prev - TOL_RATE);
            prev = r;
            free(t);
            free(te);
        }
        qc_model_free(m);
    }
}

/* The guarantee: the design's rate is never below the best quantizer
 * whose thresholds are boundaries of its own grid, found here by the
 * plain O(K·N²) dynamic programme (every split tried, no SMAWK). */
static void test_not_below_own_grid_dp(void **state)
{
    (void)state;
    for (size_t k = 0; k < sizeof cases / sizeof *cases; k++) {
        const case_t *c = &cases[k];
        qc_model *m = model_of(c);
        for (size_t bits = 1; bits <= c->max_bits; bits++) {
            size_t nt = ((size_t)1 << bits) - 1;
            double *t = malloc(nt * sizeof *t), dp;
            assert_non_null(t);
            double r = design_dp(m, c, nt, t, &dp);
            if (r < dp - TOL_RATE)
                fail_msg("%s, %zu bits: design %.15f bit < DP optimum on its grid %.15f",
                         c->name, bits, r, dp);
            free(t);
        }
        qc_model_free(m);
    }
}

/* Newton from a poor start: the rate rises, the exact gradient vanishes. */
static void test_newton_reaches_stationary_point(void **state)
{
    (void)state;
    for (size_t k = 0; k < sizeof cases / sizeof *cases; k++) {
        const case_t *c = &cases[k];
        qc_model *m = model_of(c);
        const size_t nt = 7;
        double t[7], g[7], mi0, mi, lo, hi;
        qc_levels_support(m, c->levels, c->nlevels, &lo, &hi);
        for (size_t j = 0; j < nt; j++) /* uniform over the middle half */
            t[j] = lo + (hi - lo) * (0.25 + 0.5 * (double)(j + 1) / (double)(nt + 1));
        double scale = qc_noise_scale(m, c->levels, c->law, c->nlevels);
        assert_true(scale > 0.0 && isfinite(scale));
        qc_cell_mi *w;
        assert_int_equal(qc_cell_mi_alloc(m, c->levels, c->law, c->nlevels, nt, &w), QC_OK);
        assert_int_equal(qc_cell_mi_eval(w, t, &mi0, NULL), QC_OK);
        size_t it = 0;
        assert_int_equal(qc_refine_continuous(w, scale, t, &mi, &it), QC_OK);
        assert_true(mi >= mi0);
        assert_true(it >= 1);
        double check;
        assert_int_equal(qc_cell_mi_eval(w, t, &check, g), QC_OK);
        assert_true(check == mi);
        for (size_t j = 0; j < nt; j++) {
            if (j > 0)
                assert_true(t[j] > t[j - 1]);
            if (fabs(g[j]) * scale > TOL_GRAD)
                fail_msg("%s: gradient %g at threshold %zu (%g)", c->name, g[j], j + 1, t[j]);
        }
        qc_cell_mi_free(w);
        qc_model_free(m);
    }
}

/* Newton steps with both ends held (how the threshold moves rate one
 * slot): the held thresholds stay bit for bit, the inner ones reach a
 * stationary point, and the rate of the short quantizer changes by
 * exactly what the whole one does with the same inner thresholds, since
 * I(X;Y_q) is a sum of cell terms fixed by each cell's two ends. */
static void test_refine_held_is_local_and_exact(void **state)
{
    (void)state;
    for (size_t k = 0; k < sizeof cases / sizeof *cases; k++) {
        const case_t *c = &cases[k];
        qc_model *m = model_of(c);
        enum { NT = 9, FROM = 2, NU = 5 }; /* u = t[FROM .. FROM + NU) */
        double t[NT], u[NU], g[NU], lo, hi;
        qc_levels_support(m, c->levels, c->nlevels, &lo, &hi);
        for (size_t j = 0; j < NT; j++) /* uneven over the middle half */
            t[j] = lo + (hi - lo) * (0.25 + 0.5 * pow((double)(j + 1) / (NT + 1), 1.3));
        double scale = qc_noise_scale(m, c->levels, c->law, c->nlevels);
        qc_cell_mi *whole, *part;
        assert_int_equal(qc_cell_mi_alloc(m, c->levels, c->law, c->nlevels, NT, &whole), QC_OK);
        assert_int_equal(qc_cell_mi_alloc(m, c->levels, c->law, c->nlevels, NU, &part), QC_OK);
        memcpy(u, t + FROM, sizeof u);
        double before, after, whole_before, whole_after, check;
        assert_int_equal(qc_cell_mi_eval(part, u, &before, NULL), QC_OK);
        size_t it = 0;
        assert_int_equal(qc_refine_held(part, scale, 1, 1, 0, u, &after, &it), QC_OK);
        assert_true(it >= 1 && after >= before);
        assert_true(u[0] == t[FROM] && u[NU - 1] == t[FROM + NU - 1]);
        assert_int_equal(qc_cell_mi_eval(part, u, &check, g), QC_OK);
        for (size_t j = 1; j + 1 < NU; j++) {
            assert_true(u[j] > u[j - 1] && u[j + 1] > u[j]);
            if (fabs(g[j]) * scale > TOL_GRAD)
                fail_msg("%s: gradient %g at inner threshold %zu", c->name, g[j], j);
        }
        assert_int_equal(qc_cell_mi_eval(whole, t, &whole_before, NULL), QC_OK);
        memcpy(t + FROM, u, sizeof u);
        assert_int_equal(qc_cell_mi_eval(whole, t, &whole_after, NULL), QC_OK);
        double change = after - before, whole_change = whole_after - whole_before;
        if (!(change > 0.0) || fabs(whole_change - change) > 1e-13 * fmax(1.0, whole_after))
            fail_msg("%s: held-ends change %.17g, whole %.17g", c->name, change, whole_change);
        qc_cell_mi_free(whole);
        qc_cell_mi_free(part);
        qc_model_free(m);
    }
}

/* The curvature the Newton steps use is the exact Hessian: for a
 * Gaussian law given each level the density's slope is −(y − μ)·f/σ²
 * (the workspace keeps μ and 1/σ²), so the diagonal and the coupling
 * agree with central differences of the exact gradient (qc_cell_mi_eval)
 * to 1e-8 of the largest curvature; a forward difference of the density
 * (step 10⁻⁵ of the noise scale), which other models keep, is off by
 * ~10⁻⁶ of it. */
static void test_curvature_is_exact(void **state)
{
    (void)state;
    for (size_t k = 0; k < sizeof cases / sizeof *cases; k++) {
        const case_t *c = &cases[k];
        qc_model *m = model_of(c);
        enum { NT = 9 };
        double t[NT], g[NT], hd[NT], ho[NT], F[NT], f[NT * 8], up[NT], down[NT], lo, hi, mi;
        qc_levels_support(m, c->levels, c->nlevels, &lo, &hi);
        for (size_t j = 0; j < NT; j++) /* uneven over the middle half */
            t[j] = lo + (hi - lo) * (0.25 + 0.5 * pow((double)(j + 1) / (NT + 1), 1.3));
        const double scale = qc_noise_scale(m, c->levels, c->law, c->nlevels);
        const double delta = 3e-5 * scale;
        qc_cell_mi *w;
        assert_int_equal(qc_cell_mi_alloc(m, c->levels, c->law, c->nlevels, NT, &w), QC_OK);
        assert_non_null(w->mean);
        assert_int_equal(qc_cell_mi_eval(w, t, &mi, NULL), QC_OK);
        assert_true(qc_cell_mi_derivatives(w, t, QC_NEWTON_SLOPE_STEP * scale, g, hd, ho, f, F));
        double hmax = 0.0;
        for (size_t j = 0; j < NT; j++)
            hmax = fmax(hmax, fabs(hd[j]));
        for (size_t j = 0; j < NT; j++) {
            double tj = t[j];
            t[j] = tj + delta;
            assert_int_equal(qc_cell_mi_eval(w, t, &mi, up), QC_OK);
            t[j] = tj - delta;
            assert_int_equal(qc_cell_mi_eval(w, t, &mi, down), QC_OK);
            t[j] = tj;
            double diag = (up[j] - down[j]) / (2.0 * delta);
            if (fabs(diag - hd[j]) > 1e-8 * hmax)
                fail_msg("%s: curvature %.12g at threshold %zu, central difference %.12g",
                         c->name, hd[j], j, diag);
            if (j + 1 < NT) {
                double off = (up[j + 1] - down[j + 1]) / (2.0 * delta);
                if (fabs(off - ho[j]) > 1e-8 * hmax)
                    fail_msg("%s: coupling %.12g of thresholds %zu and %zu, central "
                             "difference %.12g", c->name, ho[j], j, j + 1, off);
            }
        }
        qc_cell_mi_free(w);
        qc_model_free(m);
    }
    /* a law that is not Gaussian keeps the forward difference */
    qc_model *p;
    const double poisson_params[2] = {20.0, 0.5};
    assert_int_equal(qc_model_alloc(&qc_model_poisson, poisson_params, &p), QC_OK);
    const double levels[2] = {0.0, 1.0}, law[2] = {0.5, 0.5};
    qc_cell_mi *w;
    assert_int_equal(qc_cell_mi_alloc(p, levels, law, 2, 3, &w), QC_OK);
    assert_null(w->mean);
    qc_cell_mi_free(w);
    qc_model_free(p);
}

/* n thresholds symmetric about 0 (n odd, the middle one at 0), unevenly
 * spaced over [−7, 7]. */
static void symmetric_thresholds(double *t, size_t n)
{
    const double half = (double)(n / 2);
    for (size_t j = 0; j < n; j++)
        t[j] = 7.0 * pow(fabs((double)j - half) / half, 1.3) * ((double)j < half ? -1.0 : 1.0);
}

/* The mirror tests of the threshold moves: PAM-8 in Gaussian noise at
 * symmetric thresholds is its own mirror image, also with thresholds
 * 1e-7 of their spacing off (what Newton's last step leaves); thresholds
 * 1e-3 of the spacing off, an uneven law, or signal-dependent noise
 * (whose channel is not symmetric at any thresholds) are not. At
 * thresholds that are not symmetric the model is still found to be (about
 * y = 0, not about another point), unless the law or the noise is not. */
static void test_mirror_image(void **state)
{
    (void)state;
    enum { NT = 11 };
    double t[NT], mi;
    const case_t *pam = &cases[0], *sd = &cases[3];
    qc_model *m = model_of(pam);
    qc_cell_mi *w;
    assert_int_equal(qc_cell_mi_alloc(m, pam->levels, pam->law, 8, NT, &w), QC_OK);
    symmetric_thresholds(t, NT);
    const double spacing = t[NT - 1] - t[NT - 2];
    assert_int_equal(qc_cell_mi_eval(w, t, &mi, NULL), QC_OK);
    assert_true(qc_cell_mi_mirrored(w, t));
    t[2] += 1e-7 * spacing;
    assert_int_equal(qc_cell_mi_eval(w, t, &mi, NULL), QC_OK);
    assert_true(qc_cell_mi_mirrored(w, t));
    t[2] += 1e-3 * spacing;
    assert_int_equal(qc_cell_mi_eval(w, t, &mi, NULL), QC_OK);
    assert_false(qc_cell_mi_mirrored(w, t));
    /* thresholds that are not symmetric: the model still is, and the
     * workspace holds the channel of t again, bit for bit */
    for (size_t j = 0; j < NT; j++)
        t[j] += 0.3 * sin((double)j);
    int model = 0;
    assert_int_equal(qc_cell_mi_eval(w, t, &mi, NULL), QC_OK);
    double *before = malloc(8 * (NT + 1) * sizeof *before);
    assert_non_null(before);
    memcpy(before, w->channel->p, 8 * (NT + 1) * sizeof *before);
    assert_int_equal(qc_cell_mi_model_mirrored(w, t, 0.0, &model), QC_OK);
    assert_true(model);
    assert_memory_equal(before, w->channel->p, 8 * (NT + 1) * sizeof *before);
    assert_int_equal(qc_cell_mi_model_mirrored(w, t, 0.5, &model), QC_OK);
    assert_false(model); /* not about y = 0.25 */
    free(before);
    qc_cell_mi_free(w);
    /* an uneven law, at asymmetric and at symmetric thresholds */
    const double uneven[8] = {0.1, 0.15, 0.125, 0.125, 0.125, 0.125, 0.125, 0.125};
    assert_int_equal(qc_cell_mi_alloc(m, pam->levels, uneven, 8, NT, &w), QC_OK);
    assert_int_equal(qc_cell_mi_eval(w, t, &mi, NULL), QC_OK);
    assert_int_equal(qc_cell_mi_model_mirrored(w, t, 0.0, &model), QC_OK);
    assert_false(model);
    symmetric_thresholds(t, NT);
    assert_int_equal(qc_cell_mi_eval(w, t, &mi, NULL), QC_OK);
    assert_false(qc_cell_mi_mirrored(w, t));
    qc_cell_mi_free(w);
    qc_model_free(m);
    /* signal-dependent noise, thresholds symmetric about the middle level */
    m = model_of(sd);
    for (size_t j = 0; j < NT; j++)
        t[j] += 3.5;
    assert_int_equal(qc_cell_mi_alloc(m, sd->levels, sd->law, 8, NT, &w), QC_OK);
    assert_int_equal(qc_cell_mi_eval(w, t, &mi, NULL), QC_OK);
    assert_false(qc_cell_mi_mirrored(w, t));
    assert_int_equal(qc_cell_mi_model_mirrored(w, t, 7.0, &model), QC_OK);
    assert_false(model);
    qc_cell_mi_free(w);
    qc_model_free(m);
}

/* Threshold moves on a channel that is its own mirror image rate the
 * slots of one half and mirror them, and pass over the mirror of a move
 * that did not gain. PAM-8 at 16 dB with 16 cells, from its symmetric
 * local maximum (2.4113264 bit): they gain 1.3e-6 bit, to the rate the
 * full search reaches on the same channel with two levels listed in
 * swapped order (the same rate, but its rows no longer mirror each other,
 * so neither shortcut applies), within the rounding of the two sums. */
static void test_moves_on_mirror_image(void **state)
{
    (void)state;
    enum { NT = 15 };
    const double sigma = 0.72629, law[8] = {0.125, 0.125, 0.125, 0.125,
                                            0.125, 0.125, 0.125, 0.125};
    const double levels[2][8] = {{-7, -5, -3, -1, 1, 3, 5, 7}, {-7, -5, -3, -1, 1, 3, 7, 5}};
    /* the decision thresholds and four spares on either side */
    const double start[NT] = {-6, -4.51, -4, -3.63, -3.248, -2, -1.987, 0,
                              1.987, 2, 3.248, 3.63, 4, 4.51, 6};
    qc_model *m;
    assert_int_equal(qc_model_alloc(&qc_model_gauss, &sigma, &m), QC_OK);
    double rate[2];
    for (int k = 0; k < 2; k++) {
        qc_cell_mi *w;
        double t[NT], mi0, mi;
        memcpy(t, start, sizeof t);
        assert_int_equal(qc_cell_mi_alloc(m, levels[k], law, 8, NT, &w), QC_OK);
        assert_int_equal(qc_refine_continuous(w, sigma, t, &mi0, NULL), QC_OK);
        assert_int_equal(qc_cell_mi_mirrored(w, t), !k);
        mi = mi0;
        assert_int_equal(qc_relocate_thresholds(w, sigma, t, &mi, NULL), QC_OK);
        if (!(mi - mi0 > 1e-6 * log(2.0)))
            fail_msg("order %d: the moves gained %g bit", k, (mi - mi0) / log(2.0));
        for (size_t j = 1; j < NT; j++)
            assert_true(t[j] > t[j - 1]);
        rate[k] = mi / log(2.0);
        qc_cell_mi_free(w);
    }
    if (fabs(rate[0] - rate[1]) > 1e-12)
        fail_msg("moves on the mirror image reach %.15g bit, the full search %.15g",
                 rate[0], rate[1]);
    qc_model_free(m);
}

/* Width of [lo, hi] in u = ∫ dy/s(y), written out from the rule of
 * scale_grid.c: s linear between the sorted means mu[0..n) (σ sd[i]),
 * flat for 2σ beyond the outer means and then s = d/2. */
static double u_width(const double *mu, const double *sd, size_t n, double lo, double hi)
{
    double u = 0.0;
    for (size_t i = 0; i + 1 < n; i++) {
        double k = (sd[i + 1] - sd[i]) / (mu[i + 1] - mu[i]);
        u += fabs(k) < 1e-14 ? (mu[i + 1] - mu[i]) / sd[i] : log(sd[i + 1] / sd[i]) / k;
    }
    double zl = (mu[0] - lo) / sd[0], zh = (hi - mu[n - 1]) / sd[n - 1];
    u += zl <= 2.0 ? zl : 2.0 + 2.0 * log(zl / 2.0);
    u += zh <= 2.0 ? zh : 2.0 + 2.0 * log(zh / 2.0);
    return u;
}

/* The grid sizes: max(2K, ⌈c·U⌉) (U the width in local noise scales, c =
 * min(4, max(2, K/4)) cells per unit), never above the old fixed grid; cells of equal width in u, so equally spaced
 * where σ is constant (between the PAM levels) and widening with σ
 * (gauss-sd); the noise scale is the smallest σ. */
static void test_grid_sizes(void **state)
{
    (void)state;
    const case_t *c = &cases[0];
    qc_model *m = model_of(c);
    double lo, hi, s = qc_noise_scale(m, c->levels, c->law, c->nlevels);
    assert_true(fabs(s - c->params[0]) <= 1e-15);
    qc_levels_support(m, c->levels, c->nlevels, &lo, &hi);
    double sd8[8], U;
    for (size_t i = 0; i < 8; i++)
        sd8[i] = c->params[0];
    U = u_width(c->levels, sd8, 8, lo, hi);
    /* 14/σ between the outer levels, 2·(2 + 2 ln(8.3/2)) in the tails */
    assert_true(fabs(U - (14.0 / c->params[0] + 4.0 + 4.0 * log(8.3 / 2.0))) <= 1e-9);
    for (size_t K = 2; K <= 4096; K *= 2) {
        size_t n = qc_coarse_cells(m, c->levels, c->law, c->nlevels, K);
        double per = fmin(4.0, fmax(2.0, 0.25 * (double)K)); /* cells per unit of u */
        size_t nu = (size_t)ceil(per * U), want = 2 * K > nu ? 2 * K : nu;
        if (want > qc_fine_cells_default(K))
            want = qc_fine_cells_default(K);
        assert_int_equal(n, want);
    }
    qc_fine_grid g;
    assert_int_equal(qc_coarse_grid_build(m, c->levels, c->law, c->nlevels, 2, &g), QC_OK);
    assert_int_equal(g.n, (size_t)ceil(2.0 * U));
    double step = U * c->params[0] / (double)g.n; /* in y where s = σ */
    size_t inside = 0;
    for (size_t i = 0; i + 1 < g.n - 1; i++)
        if (g.bounds[i] > -7.0 && g.bounds[i + 1] < 7.0) {
            assert_true(fabs(g.bounds[i + 1] - g.bounds[i] - step) <= 1e-9);
            inside++;
        }
    assert_true(inside >= 15);
    qc_fine_grid_clear(&g);
    qc_model_free(m);
    /* gauss-sd: σ(x)² = σ0² + a·x, smallest at x = 0 */
    c = &cases[3];
    m = model_of(c);
    s = qc_noise_scale(m, c->levels, c->law, c->nlevels);
    assert_true(fabs(s - 0.2) <= 1e-15);
    qc_levels_support(m, c->levels, c->nlevels, &lo, &hi);
    for (size_t i = 0; i < 8; i++)
        sd8[i] = sqrt(0.04 + 0.05 * c->levels[i]);
    U = u_width(c->levels, sd8, 8, lo, hi);
    assert_int_equal(qc_coarse_cells(m, c->levels, c->law, c->nlevels, 4),
                     (size_t)ceil(2.0 * U));
    /* fewer than half the cells that the smallest σ would ask */
    assert_true(ceil(2.0 * U) < (hi - lo) / s);
    assert_int_equal(qc_coarse_grid_build(m, c->levels, c->law, c->nlevels, 4, &g), QC_OK);
    /* cells widen with σ: near level 7 about 0.62/0.2 times as wide as near 0 */
    double w0 = INFINITY, w7 = INFINITY;
    for (size_t i = 0; i + 1 < g.n - 1; i++) {
        double mid = 0.5 * (g.bounds[i] + g.bounds[i + 1]), w = g.bounds[i + 1] - g.bounds[i];
        if (fabs(mid) < 0.3)
            w0 = fmin(w0, w);
        if (fabs(mid - 7.0) < 0.3)
            w7 = fmin(w7, w);
    }
    assert_true(isfinite(w0) && isfinite(w7));
    assert_true(w7 / w0 > 2.5 && w7 / w0 < 3.5);
    qc_fine_grid_clear(&g);
    qc_model_free(m);
}

/* The dense alphabet of the two tests below: DENSE_LEVELS equally likely
 * levels 2 apart under Gaussian noise of σ = DENSE_SIGMA. */
#define DENSE_LEVELS 256
#define DENSE_SIGMA 20.0
static qc_model *dense_alphabet(double *levels, double *law)
{
    for (size_t i = 0; i < DENSE_LEVELS; i++) {
        levels[i] = -255.0 + 2.0 * (double)i;
        law[i] = 1.0 / DENSE_LEVELS;
    }
    double sigma = DENSE_SIGMA;
    qc_model *m;
    assert_int_equal(qc_model_alloc(&qc_model_gauss, &sigma, &m), QC_OK);
    return m;
}

/* A dense alphabet: 256 levels 2 apart under σ = 20, so that a point of
 * the output range sees about a hundred levels. The DP, which visits only
 * the levels that reach a cell, must give the rate of its own cuts
 * computed from the whole merged channel; and at 10 bits the grid is
 * lowered to K − 1 + 6.7e7 / (K·λ) cells (the DP's work, scale_grid.c),
 * λ the summed support widths over the output range's width. */
static void test_dense_alphabet(void **state)
{
    (void)state;
    enum { L = DENSE_LEVELS };
    double levels[L], law[L];
    qc_model *m = dense_alphabet(levels, law);
    const size_t K = 16;
    qc_fine_grid g;
    assert_int_equal(qc_coarse_grid_build(m, levels, law, L, K, &g), QC_OK);
    size_t cuts[17];
    double dp_mi;
    assert_int_equal(qc_dp_quantize(g.p, law, K, QC_DP_FAST, cuts, &dp_mi), QC_OK);
    qc_dmc *d;
    assert_int_equal(qc_dmc_merge(g.p, cuts, K, &d), QC_OK);
    double q[17] = {0}, mi = 0.0;
    for (size_t x = 0; x < L; x++)
        for (size_t c = 0; c < K; c++)
            q[c] += law[x] * d->p[x * K + c];
    for (size_t x = 0; x < L; x++)
        for (size_t c = 0; c < K; c++) {
            double p = d->p[x * K + c];
            if (p > 0.0)
                mi += law[x] * p * log(p / q[c]);
        }
    assert_true(fabs(mi - dp_mi) <= 1e-12 * mi);
    qc_dmc_free(d);
    qc_fine_grid_clear(&g);

    double lo, hi, widths = 0.0;
    qc_levels_support(m, levels, L, &lo, &hi);
    for (size_t x = 0; x < L; x++) {
        double a, b;
        qc_model_get_type(m)->support(m, levels[x], &a, &b);
        widths += fmin(b, hi) - fmax(a, lo);
    }
    const double lambda = widths / (hi - lo);
    assert_true(lambda > 90.0 && lambda < 110.0);
    const size_t big = 1024;
    size_t want = big - 1 + (size_t)(6.7e7 / ((double)big * lambda));
    assert_true(want < 2 * big); /* the work limit binds */
    assert_int_equal(qc_coarse_cells(m, levels, law, L, big), want);
    qc_model_free(m);
}

/* A wide alphabet (64 levels and more: 256 levels 2 apart under σ = 20)
 * takes its Newton steps and moves on the rate with the tails clipped at
 * the supports (optimal.c), then reports the exact rate of its
 * thresholds: the reported rate is that rate to the last bit, exact
 * Newton steps from there gain less than 1e-13 of it, and it is not
 * below the exact rate of the DP's own cuts, less 2e-13 bit (the
 * guarantee, docs/methods.md section 4). */
static void test_wide_alphabet_clipped_stages(void **state)
{
    (void)state;
    enum { L = DENSE_LEVELS };
    double levels[L], law[L];
    qc_model *m = dense_alphabet(levels, law);
    const size_t Ks[] = {16, 64};
    for (size_t k = 0; k < sizeof Ks / sizeof *Ks; k++) {
        const size_t K = Ks[k], nt = K - 1;
        qc_fine_grid g;
        assert_int_equal(qc_coarse_grid_build(m, levels, law, L, K, &g), QC_OK);
        double *t = malloc(nt * sizeof *t), *td = malloc(nt * sizeof *td), mi, exact;
        size_t *cuts = malloc((K + 1) * sizeof *cuts);
        assert_non_null(t);
        assert_non_null(td);
        assert_non_null(cuts);
        assert_int_equal(qc_optimal_thresholds(m, levels, law, L, nt, &g, t, &mi, NULL), QC_OK);
        qc_cell_mi *w;
        assert_int_equal(qc_cell_mi_alloc(m, levels, law, L, nt, &w), QC_OK);
        assert_int_equal(qc_cell_mi_eval(w, t, &exact, NULL), QC_OK);
        assert_true(exact == mi);
        double polished;
        assert_int_equal(qc_refine_continuous(w, DENSE_SIGMA, t, &polished, NULL), QC_OK);
        if (!(polished - mi <= 1e-13 * mi))
            fail_msg("K %zu: exact Newton steps raise %.17g to %.17g nats", K, mi, polished);
        assert_int_equal(qc_dp_quantize(g.p, law, K, QC_DP_FAST, cuts, NULL), QC_OK);
        for (size_t j = 1; j < K; j++)
            td[j - 1] = g.bounds[cuts[j] - 1];
        double dp;
        assert_int_equal(qc_cell_mi_eval(w, td, &dp, NULL), QC_OK);
        if (!(mi * QC_LOG2E >= dp * QC_LOG2E - 2e-13))
            fail_msg("K %zu: design %.17g bit below the grid DP's %.17g", K, mi * QC_LOG2E,
                     dp * QC_LOG2E);
        qc_cell_mi_free(w);
        qc_fine_grid_clear(&g);
        free(t);
        free(td);
        free(cuts);
    }
    qc_model_free(m);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_not_below_exhaustive_dp),
        cmocka_unit_test(test_not_below_own_grid_dp),
        cmocka_unit_test(test_newton_reaches_stationary_point),
        cmocka_unit_test(test_refine_held_is_local_and_exact),
        cmocka_unit_test(test_curvature_is_exact),
        cmocka_unit_test(test_mirror_image),
        cmocka_unit_test(test_moves_on_mirror_image),
        cmocka_unit_test(test_grid_sizes),
        cmocka_unit_test(test_dense_alphabet),
        cmocka_unit_test(test_wide_alphabet_clipped_stages),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
