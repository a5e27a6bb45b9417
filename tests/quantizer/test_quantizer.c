/* test_quantizer.c — the building blocks of threshold design: the
 * dynamic programme over contiguous groupings (plain and SMAWK) against
 * exhaustive search, its binary-input global optimality, channel merging,
 * the discretizer deep in the Gaussian tail, Lloyd–Max on a Gaussian,
 * and the uniform quantizer's range search (with clipped tails). */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_math.h> /* M_PI, M_SQRT2 */

#include <gsl/gsl_cdf.h>
#include <gsl/gsl_randist.h>

#include "quantcap.h"
#include "quantizer/quantizer.h" /* qc_lloyd_max with a round cap */

#define TEST_RNG_SEED 0x9E3779B97F4A7C15ull /* random laws and channels below */
#include "test_helpers.h"

#define TOL_TIGHT 1e-12   /* rounding of sums of a few hundred terms */
#define TOL_TAIL 1e-10    /* relative, cells 30σ into the tail */
#define TOL_TABLE 5e-4    /* four printed digits of a published table */
#define TOL_SEARCH 1e-10  /* a continuous search against its own family */
#define TOL_SIMPSON 1e-9  /* nats: Simpson's rule against the library's quadrature */
#define TOL_LLOYD 1e-9    /* Lloyd–Max fixed point against its closed form */
#define TOL_STEP 1e-9     /* level units: equal steps of a uniform quantizer */
#define TOL_LLOYD_COND 1e-9 /* level units: Lloyd–Max conditions, centroids
                               recomputed here in closed form */
#define TOL_PANTER 0.02   /* relative: Panter–Dite's asymptotic error at
                             512 cells (the next term is O(1/K^2) relative) */
#define LLOYD_ROUNDS_MAX 60 /* rounds a converging design may take */

/* ---- random laws and channels (tests/common/test_helpers.h) ---------- */

/* a random law with no zero entries, in a new array */
static double *random_law_new(size_t n)
{
    double *r = malloc(n * sizeof *r);
    assert_non_null(r);
    random_law(r, n, 0.0);
    return r;
}

/* A channel with monotone likelihood ratios along the outputs: P(y|x) ∝
 * w_y·exp(−(s_y − l_x)²/2v) on increasing s_y (a Gaussian location family
 * on an uneven grid with arbitrary output weights). */
static qc_dmc *random_mlr_channel(size_t nx, size_t ny)
{
    qc_dmc *d;
    assert_int_equal(qc_dmc_alloc(nx, ny, &d), QC_OK);
    double *s = malloc(ny * sizeof *s), *w = malloc(ny * sizeof *w), acc = 0.0;
    for (size_t y = 0; y < ny; y++) {
        acc += 0.1 + uniform01();
        s[y] = acc;
        w[y] = 0.2 + uniform01();
    }
    double v = acc * (0.02 + 0.3 * uniform01());
    v *= v;
    for (size_t x = 0; x < nx; x++) {
        double l = uniform01() * acc, t = 0.0;
        for (size_t y = 0; y < ny; y++)
            t += d->p[x * ny + y] = w[y] * exp(-0.5 * (s[y] - l) * (s[y] - l) / v) + 1e-300;
        for (size_t y = 0; y < ny; y++)
            d->p[x * ny + y] /= t;
    }
    free(s);
    free(w);
    return d;
}

static double merged_mi(const qc_dmc *fine, const double *r, const size_t *cuts,
                        size_t k)
{
    qc_dmc *m;
    double mi;
    assert_int_equal(qc_dmc_merge(fine, cuts, k, &m), QC_OK);
    assert_int_equal(qc_mutual_information(m, r, &mi), QC_OK);
    qc_dmc_free(m);
    return mi;
}

/* Best MI over every way of cutting ny outputs into k contiguous cells. */
static double exhaustive_contiguous(const qc_dmc *d, const double *r, size_t k)
{
    size_t cuts[32];
    cuts[0] = 0;
    cuts[k] = d->ny;
    for (size_t i = 1; i < k; i++)
        cuts[i] = i;
    double best = -1.0;
    for (;;) {
        double mi = merged_mi(d, r, cuts, k);
        if (mi > best)
            best = mi;
        /* next combination of the k − 1 inner cuts from 1..ny−1 */
        size_t i = k - 1;
        while (i >= 1 && cuts[i] == d->ny - k + i)
            i--;
        if (i == 0)
            break;
        cuts[i]++;
        for (size_t j = i + 1; j < k; j++)
            cuts[j] = cuts[j - 1] + 1;
    }
    return best;
}

static void test_dp_equals_exhaustive_contiguous(void **state)
{
    (void)state;
    for (int trial = 0; trial < 300; trial++) {
        size_t nx = uniform_between(2, 5), ny = uniform_between(2, 10), k = uniform_between(1, ny);
        qc_dmc *d = random_dmc(nx, ny, 0.0);
        double *r = random_law_new(nx);
        size_t cuts[16];
        double mi;
        /* the plain DP is exact for every channel */
        assert_int_equal(qc_dp_quantize(d, r, k, QC_DP_PLAIN, cuts, &mi), QC_OK);
        double best = exhaustive_contiguous(d, r, k);
        assert_true(fabs(mi - best) <= TOL_TIGHT);
        assert_true(fabs(merged_mi(d, r, cuts, k) - mi) <= TOL_TIGHT);
        qc_dmc_free(d);
        /* SMAWK is exact where the quadrangle inequality holds (He, Cai,
         * Song, Mei, IEEE Trans. IT 2021): monotone likelihood ratios */
        d = random_mlr_channel(nx, ny);
        assert_int_equal(qc_dp_quantize(d, r, k, QC_DP_FAST, cuts, &mi), QC_OK);
        best = exhaustive_contiguous(d, r, k);
        assert_true(fabs(mi - best) <= TOL_TIGHT);
        qc_dmc_free(d);
        free(r);
    }
}

/* Best MI over all partitions of the outputs into at most k blocks
 * (restricted growth strings). */
static double exhaustive_partitions(const qc_dmc *d, const double *r, size_t k)
{
    const size_t n = d->ny;
    size_t a[16] = {0}, mx[16] = {0};
    double best = -1.0;
    qc_dmc *m;
    assert_int_equal(qc_dmc_alloc(d->nx, k, &m), QC_OK);
    for (;;) {
        memset(m->p, 0, d->nx * k * sizeof *m->p);
        for (size_t x = 0; x < d->nx; x++)
            for (size_t y = 0; y < n; y++)
                m->p[x * k + a[y]] += d->p[x * n + y];
        double mi;
        assert_int_equal(qc_mutual_information(m, r, &mi), QC_OK);
        if (mi > best)
            best = mi;
        size_t i = n - 1;
        while (i >= 1 && (a[i] == mx[i - 1] + 1 || a[i] + 1 >= k))
            i--;
        if (i == 0)
            break;
        a[i]++;
        mx[i] = a[i] > mx[i - 1] ? a[i] : mx[i - 1];
        for (size_t j = i + 1; j < n; j++) {
            a[j] = 0;
            mx[j] = mx[j - 1];
        }
    }
    qc_dmc_free(m);
    return best;
}

static double lr_key[64];
static int by_lr(const void *a, const void *b)
{
    double u = lr_key[*(const size_t *)a], v = lr_key[*(const size_t *)b];
    return (u > v) - (u < v);
}

static void test_dp_binary_input_globally_optimal(void **state)
{
    (void)state;
    for (int trial = 0; trial < 60; trial++) {
        size_t ny = uniform_between(2, 8), k = uniform_between(2, ny);
        qc_dmc *d = random_dmc(2, ny, 0.0);
        double *r = random_law_new(2);
        /* sort the outputs by likelihood ratio P(y|0)/P(y|1) */
        size_t order[16];
        for (size_t y = 0; y < ny; y++) {
            order[y] = y;
            lr_key[y] = d->p[y] / d->p[ny + y];
        }
        qsort(order, ny, sizeof *order, by_lr);
        qc_dmc *s;
        assert_int_equal(qc_dmc_alloc(2, ny, &s), QC_OK);
        for (size_t x = 0; x < 2; x++)
            for (size_t y = 0; y < ny; y++)
                s->p[x * ny + y] = d->p[x * ny + order[y]];
        size_t cuts[16];
        double mi;
        assert_int_equal(qc_dp_quantize(s, r, k, QC_DP_FAST, cuts, &mi), QC_OK);
        /* Kurkoski & Yagi, IEEE Trans. IT 60(8), 2014: for binary input the
         * DP over LR-sorted outputs is optimal among ALL quantizers */
        double best = exhaustive_partitions(d, r, k);
        assert_true(fabs(mi - best) <= TOL_TIGHT);
        qc_dmc_free(s);
        qc_dmc_free(d);
        free(r);
    }
}

/* The fast DP of d into k cells (at most 47) equals the plain one, and its
 * cuts (into c1) give the value it reports, which it returns. */
static double fast_equals_plain(const qc_dmc *d, const double *r, size_t k, size_t *c1)
{
    size_t c2[48];
    double m1, m2;
    assert_int_equal(qc_dp_quantize(d, r, k, QC_DP_FAST, c1, &m1), QC_OK);
    assert_int_equal(qc_dp_quantize(d, r, k, QC_DP_PLAIN, c2, &m2), QC_OK);
    assert_true(fabs(m1 - m2) <= TOL_TIGHT);
    assert_true(fabs(merged_mi(d, r, c1, k) - m1) <= TOL_TIGHT);
    return m1;
}

static void test_dp_fast_equals_plain(void **state)
{
    (void)state;
    for (int trial = 0; trial < 200; trial++) {
        size_t nx = uniform_between(2, 6), ny = uniform_between(4, 160);
        size_t k = uniform_between(2, ny < 40 ? ny : 40);
        qc_dmc *d = random_mlr_channel(nx, ny);
        double *r = random_law_new(nx);
        size_t c1[48];
        const double m1 = fast_equals_plain(d, r, k, c1);
        /* the cuts are valid */
        assert_true(c1[0] == 0 && c1[k] == ny);
        for (size_t i = 0; i < k; i++)
            assert_true(c1[i] < c1[i + 1]);
        /* data processing (Cover & Thomas, Thm 2.8.1): merging never gains */
        double full;
        assert_int_equal(qc_mutual_information(d, r, &full), QC_OK);
        assert_true(m1 <= full + TOL_TIGHT);
        qc_dmc_free(d);
        free(r);
    }
}

/* Channels whose cells sum over many levels (every row has mass on every
 * output): the DP keeps its cell values in a table that may outgrow the
 * cache (dp_optimal.c), here tables of 2^14 and 2^15 slots that many distinct
 * cells share, so that slots are overwritten; the fast DP still equals
 * the plain one and its cuts give the value it reports. */
static void test_dp_wide_alphabet(void **state)
{
    (void)state;
    const size_t sizes[2][2] = {{200, 7}, {1100, 3}}; /* outputs, cells */
    for (size_t c = 0; c < 2; c++) {
        const size_t nx = 20, ny = sizes[c][0], k = sizes[c][1];
        qc_dmc *d = random_mlr_channel(nx, ny);
        double *r = random_law_new(nx);
        size_t c1[8];
        fast_equals_plain(d, r, k, c1);
        qc_dmc_free(d);
        free(r);
    }
}

static void test_dp_bad_input(void **state)
{
    (void)state;
    qc_dmc *d = random_dmc(2, 5, 0.0);
    double r[2] = {0.5, 0.5}, bad[2] = {0.7, 0.7};
    size_t cuts[8];
    assert_int_equal(qc_dp_quantize(d, r, 6, QC_DP_FAST, cuts, NULL), QC_EINVAL);
    assert_non_null(strstr(qc_last_error(), "5 fine outputs into 6 cells"));
    assert_int_equal(qc_dp_quantize(d, r, 0, QC_DP_FAST, cuts, NULL), QC_EINVAL);
    assert_int_equal(qc_dp_quantize(d, bad, 2, QC_DP_FAST, cuts, NULL), QC_EINVAL);
    assert_non_null(strstr(qc_last_error(), "sum to 1.39999"));
    size_t badcuts[3] = {0, 3, 3};
    qc_dmc *m;
    assert_int_equal(qc_dmc_merge(d, badcuts, 2, &m), QC_EINVAL);
    assert_null(m);
    /* one cell: everything merged, nothing learned */
    double mi;
    assert_int_equal(qc_dp_quantize(d, r, 1, QC_DP_PLAIN, cuts, &mi), QC_OK);
    assert_true(cuts[0] == 0 && cuts[1] == 5 && fabs(mi) <= TOL_TIGHT);
    qc_dmc_free(d);
}

/* ---- discretizer deep in the tail ------------------------------------ */

static void test_discretize_tail_80db(void **state)
{
    (void)state;
    /* levels ±1, σ = 1e-4: SNR = 80 dB */
    const double sigma = 1e-4, levels[2] = {-1.0, 1.0};
    qc_model *m;
    assert_int_equal(qc_model_alloc(&qc_model_gauss, &sigma, &m), QC_OK);
    double t[7] = {-0.5, 0.0, 1.0 - 35 * sigma, 1.0 + 30 * sigma, 1.0 + 31 * sigma,
                   1.0 + 36 * sigma, 1.0 + 37 * sigma};
    qc_dmc *d;
    assert_int_equal(qc_discretize(m, levels, 2, t, 7, &d), QC_OK);
    for (size_t i = 0; i < d->nx * d->ny; i++)
        assert_true(isfinite(d->p[i]) && d->p[i] >= 0.0);
    /* Independent values with the C library's erfc: P(a ≤ Y < b | x=1)
     * = ½[erfc((a−1)/(σ√2)) − erfc((b−1)/(σ√2))] (Abramowitz & Stegun
     * 7.1.2, 26.2.29). */
    const double *row = d->p + 8;
    double c30_31 = 0.5 * (erfc(30.0 / M_SQRT2) - erfc(31.0 / M_SQRT2)); /* 4.9e-198 */
    double c36_37 = 0.5 * (erfc(36.0 / M_SQRT2) - erfc(37.0 / M_SQRT2)); /* 4.2e-284 */
    double above37 = 0.5 * erfc(37.0 / M_SQRT2);                         /* 5.7e-300 */
    double lower35 = 0.5 * erfc(35.0 / M_SQRT2);                         /* 1.1e-268 */
    assert_true(c30_31 > 1e-200 && above37 > 1e-301);
    assert_true(fabs(row[4] - c30_31) <= TOL_TAIL * c30_31);
    assert_true(fabs(row[6] - c36_37) <= TOL_TAIL * c36_37);
    assert_true(fabs(row[7] - above37) <= TOL_TAIL * above37);
    /* cells up to 1 − 35σ: everything below is the lower tail */
    double below = row[0] + row[1] + row[2];
    assert_true(fabs(below - lower35) <= TOL_TAIL * lower35);
    /* cells 10⁴σ away underflow to exactly 0, not to −0 noise or NaN */
    assert_true(row[0] == 0.0 && d->p[7] == 0.0);
    qc_dmc_free(d);
    qc_model_free(m);
}

/* σ so small that x ± 8.3σ rounds to x: the unquantized rate used to
 * fail ("narrower than the resolution of doubles"); it is the noiseless
 * limit instead, flagged. Each output is a point mass, so I(X;Y) = H(X). */
static void test_unquantized_noiseless_limit(void **state)
{
    (void)state;
    const double sigma = 1e-20, levels[2] = {-1.0, 1.0}, input[2] = {0.5, 0.5};
    qc_model *m;
    assert_int_equal(qc_model_alloc(&qc_model_gauss, &sigma, &m), QC_OK);
    double mi = -1.0, err = -1.0;
    int noiseless = 0;
    assert_int_equal(qc_unquantized_mi_detail(m, levels, input, 2, &mi, &err, &noiseless),
                     QC_OK);
    assert_true(noiseless == 1);
    assert_true(fabs(mi - M_LN2) <= TOL_TIGHT && err >= 0.0);
    qc_model_free(m);
    /* well-separated levels with ordinary noise: exact −log p per level,
     * no flag */
    const double sigma2 = 0.01, law[2] = {0.25, 0.75};
    assert_int_equal(qc_model_alloc(&qc_model_gauss, &sigma2, &m), QC_OK);
    assert_int_equal(qc_unquantized_mi_detail(m, levels, law, 2, &mi, &err, &noiseless),
                     QC_OK);
    assert_true(noiseless == 0);
    assert_true(fabs(mi - qc_binary_entropy(0.25)) <= TOL_TIGHT);
    qc_model_free(m);
    /* a repeated level shares its point mass: the distinguishable levels
     * are −1 and 1, each with probability ½, so I(X;Y) = log 2 */
    const double rep[3] = {-1.0, 1.0, 1.0}, rep_law[3] = {0.5, 0.25, 0.25};
    assert_int_equal(qc_model_alloc(&qc_model_gauss, &sigma, &m), QC_OK);
    assert_int_equal(qc_unquantized_mi_detail(m, rep, rep_law, 3, &mi, &err, &noiseless),
                     QC_OK);
    assert_true(noiseless == 1);
    assert_true(fabs(mi - M_LN2) <= TOL_TIGHT);
    qc_model_free(m);
}

/* Signal-dependent noise, σ²(x) = σ0² + a·x with σ0 = 1e-300 (σ0² below
 * the smallest double: the model used to round σ(0) to 0 and fail):
 * level 0 is a spike of width 1e-300, levels 1 and 2 have wide,
 * overlapping outputs. The spike is told apart from the rest by Y
 * itself, so by the chain rule
 * I(X;Y) = h(p0) + (1 − p0)·I(X';Y | X ∈ {1, 2}), the latter the same
 * function's rate of levels 1 and 2 alone under the conditional law. */
static void test_unquantized_spike_among_wide_levels(void **state)
{
    (void)state;
    const double params[3] = {1e-300, 1.0, 0.0};
    const double levels[3] = {0.0, 1.0, 2.0}, input[3] = {0.3, 0.3, 0.4};
    qc_model *m;
    assert_int_equal(qc_model_alloc(&qc_model_gauss_sd, params, &m), QC_OK);
    double mi, err, rest, rest_err;
    int noiseless = 0;
    assert_int_equal(qc_unquantized_mi_detail(m, levels, input, 3, &mi, &err, &noiseless),
                     QC_OK);
    assert_true(noiseless == 0); /* σ(0) = 1e-300 is resolved */
    const double cond[2] = {0.3 / 0.7, 0.4 / 0.7};
    assert_int_equal(qc_unquantized_mi(m, levels + 1, cond, 2, &rest, &rest_err), QC_OK);
    assert_true(rest > 0.01);
    double want = qc_binary_entropy(0.3) + 0.7 * rest;
    assert_true(fabs(mi - want) <= err + 0.7 * rest_err + TOL_TIGHT);
    qc_model_free(m);
}

/* The unquantized rate skips, at each output, the levels whose support
 * cannot hold it, finding them among the levels sorted by where their
 * support starts. With signal-dependent noise those starts are not in the
 * order of the levels (here: level 3 starts far left of level 0), and the
 * levels come unsorted: the result must still equal a brute-force
 * composite Simpson rule over the full mixture (an independent sum). */
static void test_unquantized_unsorted_supports(void **state)
{
    (void)state;
    const double params[3] = {0.1, 0.05, 0.3}; /* σ0, a, b: σ(3) = 1.7, σ(0) = 0.1 */
    const double levels[5] = {3.0, 0.0, 1.0, 0.2, 2.5};
    const double input[5] = {0.1, 0.3, 0.2, 0.25, 0.15};
    qc_model *m;
    assert_int_equal(qc_model_alloc(&qc_model_gauss_sd, params, &m), QC_OK);
    double mi, err;
    assert_int_equal(qc_unquantized_mi(m, levels, input, 5, &mi, &err), QC_OK);
    const double a = -16.0, b = 22.0;
    const size_t n = 400000; /* even; step 9.5e-5, a thousandth of the narrowest σ */
    const double h = (b - a) / (double)n;
    double ref = 0.0;
    for (size_t j = 0; j <= n; j++) {
        double y = a + h * (double)j, w = (j == 0 || j == n) ? 1.0 : (j % 2 ? 4.0 : 2.0);
        double f[5], mix = 0.0;
        for (size_t i = 0; i < 5; i++) {
            f[i] = qc_model_get_type(m)->density(m, levels[i], y);
            mix += input[i] * f[i];
        }
        for (size_t i = 0; i < 5; i++)
            if (f[i] > 0.0)
                ref += w * input[i] * f[i] * log(f[i] / mix);
    }
    ref *= h / 3.0;
    if (fabs(mi - ref) > TOL_SIMPSON)
        fail_msg("unquantized %.15g nats, Simpson %.15g", mi, ref);
    qc_model_free(m);
}

/* A wide alphabet at low SNR, where every output point sees dozens of
 * levels: the rate is one quadrature of the level-summed integrand over
 * panels, each point summing only the levels whose support holds it. It
 * must equal a composite Simpson rule over the full mixture (every level
 * at every point, no supports) within its stated error (quadrature plus
 * the truncation bound) and the rule's own error. The law is not uniform
 * (a sampled Gaussian) so that no symmetry hides an error. */
static void test_unquantized_wide_alphabet_full_sum(void **state)
{
    (void)state;
    enum { M = 64 };
    double levels[M], law[M], e2 = 0.0, sum = 0.0;
    for (size_t i = 0; i < M; i++) {
        levels[i] = -(double)(M - 1) + 2.0 * (double)i;
        law[i] = exp(-0.5 * levels[i] * levels[i] / (40.0 * 40.0));
        sum += law[i];
    }
    for (size_t i = 0; i < M; i++) {
        law[i] /= sum;
        e2 += law[i] * levels[i] * levels[i];
    }
    const double sigma = sqrt(e2 / pow(10.0, 0.3)); /* 3 dB: ~±80 levels overlap */
    qc_model *m;
    assert_int_equal(qc_model_alloc(&qc_model_gauss, &sigma, &m), QC_OK);
    double mi, err;
    assert_int_equal(qc_unquantized_mi(m, levels, law, M, &mi, &err), QC_OK);
    assert_true(err > 0.0 && err < 1e-10);
    const double a = levels[0] - 40.0 * sigma, b = levels[M - 1] + 40.0 * sigma;
    const size_t n = 200000; /* even; step ≈ σ/700 */
    const double h = (b - a) / (double)n;
    double ref = 0.0;
    for (size_t j = 0; j <= n; j++) {
        double y = a + h * (double)j, w = (j == 0 || j == n) ? 1.0 : (j % 2 ? 4.0 : 2.0);
        double f[M], mix = 0.0;
        for (size_t i = 0; i < M; i++) {
            f[i] = gsl_ran_gaussian_pdf(y - levels[i], sigma);
            mix += law[i] * f[i];
        }
        for (size_t i = 0; i < M; i++)
            if (f[i] > 0.0)
                ref += w * law[i] * f[i] * log(f[i] / mix);
    }
    ref *= h / 3.0;
    if (fabs(mi - ref) > err + TOL_TIGHT)
        fail_msg("unquantized %.15g nats (error %.3g), full Simpson sum %.15g", mi, err, ref);
    qc_model_free(m);
}

/* ---- Lloyd–Max -------------------------------------------------------- */

static qc_status design_one(qc_model *m, const double *levels, size_t n,
                            size_t cells, qc_quantizer_kind kind,
                            qc_design_result *res)
{
    qc_design_request r;
    qc_design_request_default(&r);
    r.channel.model = m;
    r.channel.levels = levels;
    r.channel.nlevels = n;
    r.quantizer.cells = cells;
    r.quantizer.kind = kind;
    r.numerics.skip_snr_penalty = 1;
    return qc_design(&r, res);
}

static void test_lloyd_max_gaussian(void **state)
{
    (void)state;
    /* One level: Y ~ N(0, 1), the source Max 1960 tabulated. */
    const double sigma = 1.0, level = 0.0;
    qc_model *m;
    assert_int_equal(qc_model_alloc(&qc_model_gauss, &sigma, &m), QC_OK);
    qc_design_result res;
    assert_int_equal(design_one(m, &level, 1, 4, QC_QUANTIZER_LLOYD_MAX, &res), QC_OK);
    /* Max, IRE Trans. IT 6(1), 1960, Table I, N = 4 (from memory):
     * thresholds 0, ±0.9816; outputs ±0.4528, ±1.510; MSE 0.1175 */
    assert_true(fabs(res.thresholds[1]) <= TOL_TABLE);
    assert_true(fabs(res.thresholds[2] - 0.9816) <= TOL_TABLE);
    assert_true(fabs(res.thresholds[0] + 0.9816) <= TOL_TABLE);
    assert_true(fabs(res.reconstruction[2] - 0.4528) <= TOL_TABLE);
    assert_true(fabs(res.reconstruction[3] - 1.510) <= TOL_TABLE);
    assert_true(fabs(res.mse - 0.1175) <= TOL_TABLE);
    assert_true(res.rate_bits == 0.0); /* one level carries nothing */
    /* Centroid condition holds at the result: each reconstruction point
     * is inside its cell. */
    for (size_t j = 0; j < 3; j++)
        assert_true(res.reconstruction[j] < res.thresholds[j] &&
                    res.thresholds[j] < res.reconstruction[j + 1]);
    qc_design_result_clear(&res);
    /* N = 2: outputs ±√(2/π) = ±0.7979, MSE 1 − 2/π (a half-normal mean,
     * closed form). */
    assert_int_equal(design_one(m, &level, 1, 2, QC_QUANTIZER_LLOYD_MAX, &res), QC_OK);
    assert_true(fabs(res.reconstruction[1] - sqrt(2.0 / M_PI)) <= TOL_LLOYD);
    assert_true(fabs(res.mse - (1.0 - 2.0 / M_PI)) <= TOL_LLOYD);
    qc_design_result_clear(&res);
    qc_model_free(m);
}

/* Centroid of the cell [a, b) under the PAM mixture in N(x, σ²) noise by
 * the truncated-normal mean, ∫_a^b y φ_x = x ΔΦ + σ (φ(a') − φ(b'))
 * (Johnson, Kotz, Balakrishnan, Continuous Univariate Distributions 1,
 * 2nd ed., 1994, ch. 13), with GSL's Gaussian CDF and density. */
static double pam_centroid(const double *levels, size_t n, double sigma, double a, double b)
{
    double m0 = 0.0, m1 = 0.0;
    for (size_t i = 0; i < n; i++) {
        double za = (a - levels[i]) / sigma, zb = (b - levels[i]) / sigma;
        double P = isinf(za) ? gsl_cdf_ugaussian_P(zb)
                   : isinf(zb) ? gsl_cdf_ugaussian_Q(za)
                   : za > 0.0 ? gsl_cdf_ugaussian_Q(za) - gsl_cdf_ugaussian_Q(zb)
                              : gsl_cdf_ugaussian_P(zb) - gsl_cdf_ugaussian_P(za);
        double fa = isinf(za) ? 0.0 : gsl_ran_ugaussian_pdf(za);
        double fb = isinf(zb) ? 0.0 : gsl_ran_ugaussian_pdf(zb);
        m0 += P;
        m1 += levels[i] * P + sigma * (fa - fb);
    }
    return m1 / m0;
}

/* PAM-4 at 10 dB with 512 cells: the design used to stop at its round cap
 * (5000 rounds) far from the Lloyd–Max conditions without saying so. It
 * must converge in a few rounds, say so, and satisfy the conditions
 * (each threshold the midpoint of its neighbouring centroids, recomputed
 * here independently); its error must sit near Panter & Dite's
 * high-resolution value D ≈ (∫ f^{1/3})³ / (12 K²) (Panter & Dite,
 * Proc. IRE 39(1), 1951), computed here by a composite Simpson rule. */
static void test_lloyd_max_converges(void **state)
{
    (void)state;
    const double levels[4] = {-3.0, -1.0, 1.0, 3.0}, sigma = sqrt(0.5); /* 10 dB */
    const size_t K = 512;
    qc_model *m;
    assert_int_equal(qc_model_alloc(&qc_model_gauss, &sigma, &m), QC_OK);
    qc_design_result res;
    assert_int_equal(design_one(m, levels, 4, K, QC_QUANTIZER_LLOYD_MAX, &res), QC_OK);
    assert_int_equal(res.design_convergence, QC_CONVERGED);
    assert_true(res.design_iterations <= LLOYD_ROUNDS_MAX);
    assert_true(res.design_residual <= TOL_LLOYD_COND);
    double worst = 0.0;
    for (size_t j = 0; j + 1 < K; j++) {
        double a = j == 0 ? -INFINITY : res.thresholds[j - 1];
        double lo = pam_centroid(levels, 4, sigma, a, res.thresholds[j]);
        double hi = pam_centroid(levels, 4, sigma, res.thresholds[j],
                                 j + 2 < K ? res.thresholds[j + 1] : INFINITY);
        worst = fmax(worst, fabs(res.thresholds[j] - 0.5 * (lo + hi)));
    }
    if (worst > TOL_LLOYD_COND)
        fail_msg("a threshold is %.3g off the midpoint of its centroids", worst);
    /* Panter–Dite */
    const double ya = -10.0, yb = 10.0;
    const size_t n = 20000;
    double integral = 0.0;
    for (size_t k = 0; k <= n; k++) {
        double y = ya + (yb - ya) * (double)k / (double)n, f = 0.0;
        for (size_t i = 0; i < 4; i++)
            f += 0.25 * gsl_ran_gaussian_pdf(y - levels[i], sigma);
        integral += (k == 0 || k == n ? 1.0 : k % 2 ? 4.0 : 2.0) * cbrt(f);
    }
    integral *= (yb - ya) / (double)n / 3.0;
    double panter = integral * integral * integral / (12.0 * (double)(K * K));
    if (fabs(res.mse / panter - 1.0) > TOL_PANTER)
        fail_msg("mse %.6g against Panter-Dite %.6g", res.mse, panter);
    qc_design_result_clear(&res);
    qc_model_free(m);
}

/* A design stopped by its round cap says so: not converged, the rounds
 * it took, and a residual above the tolerance. */
static void test_lloyd_max_cap_reported(void **state)
{
    (void)state;
    const double levels[4] = {-3.0, -1.0, 1.0, 3.0}, law[4] = {0.25, 0.25, 0.25, 0.25};
    const double sigma = sqrt(0.5);
    const size_t K = 256;
    qc_model *m;
    assert_int_equal(qc_model_alloc(&qc_model_gauss, &sigma, &m), QC_OK);
    double t[255], recon[256];
    qc_lloyd_report rep;
    assert_int_equal(qc_lloyd_max(m, levels, law, 4, K - 1, 0, 1, t, recon, &rep), QC_OK);
    assert_int_equal(rep.rounds, 1);
    assert_int_equal(rep.converged, 0);
    assert_true(rep.residual > rep.tolerance);
    assert_int_equal(qc_lloyd_max(m, levels, law, 4, K - 1, 0, 0, t, recon, &rep), QC_OK);
    assert_int_equal(rep.converged, 1);
    assert_true(rep.residual <= rep.tolerance && rep.rounds > 1);
    qc_model_free(m);
}

/* ---- uniform quantizer ----------------------------------------------- */

static double mi_of(qc_model *m, const double *levels, size_t n, const double *t,
                    size_t nt)
{
    qc_dmc *d;
    double mi, r[8];
    for (size_t i = 0; i < n; i++)
        r[i] = 1.0 / (double)n;
    assert_int_equal(qc_discretize(m, levels, n, t, nt, &d), QC_OK);
    assert_int_equal(qc_mutual_information(d, r, &mi), QC_OK);
    qc_dmc_free(d);
    return mi * QC_LOG2E;
}

static void test_uniform_is_best_of_its_family(void **state)
{
    (void)state;
    const double sigma = 0.45, levels[4] = {-3.0, -1.0, 1.0, 3.0};
    qc_model *m;
    assert_int_equal(qc_model_alloc(&qc_model_gauss, &sigma, &m), QC_OK);
    for (size_t bits = 2; bits <= 4; bits++) {
        size_t K = (size_t)1 << bits;
        qc_design_result res;
        assert_int_equal(design_one(m, levels, 4, K, QC_QUANTIZER_UNIFORM, &res), QC_OK);
        /* the thresholds are evenly spaced */
        double w = res.thresholds[1] - res.thresholds[0];
        for (size_t j = 1; j + 1 < K; j++)
            assert_true(fabs(res.thresholds[j] - res.thresholds[j - 1] - w) <= TOL_STEP);
        /* no range in a scan of 400 (centre, width) pairs beats it */
        double t[16];
        for (int i = 0; i < 400; i++) {
            double c = -0.3 + 0.6 * uniform01(), h = 0.5 + 6.0 * uniform01();
            for (size_t j = 1; j < K; j++)
                t[j - 1] = c - h + 2.0 * h * (double)j / (double)K;
            assert_true(mi_of(m, levels, 4, t, K - 1) <= res.rate_bits + TOL_SEARCH);
        }
        qc_design_result_clear(&res);
    }
    qc_model_free(m);
}

/* Newton on both ends of the range, from a range 10 % too wide and off
 * centre, for unipolar PAM-4 in signal-dependent noise (whose best range
 * is not centred on the levels): it settles where the rate's gradient in
 * the two ends vanishes, in a handful of evaluations, and no nearby range
 * is better. One threshold (from a = b): the ends move together. */
static void test_uniform_newton_stationary(void **state)
{
    (void)state;
    const double sd[3] = {0.2, 0.05, 0.0}, levels[4] = {0.0, 1.0, 2.0, 3.0};
    const double law[4] = {0.25, 0.25, 0.25, 0.25};
    qc_model *m;
    assert_int_equal(qc_model_alloc(&qc_model_gauss_sd, sd, &m), QC_OK);
    for (size_t nt = 1; nt <= 15; nt = 2 * nt + 1) {
        const double K = (double)(nt + 1);
        qc_cell_mi *w;
        assert_int_equal(qc_cell_mi_alloc(m, levels, law, 4, nt, &w), QC_OK);
        double a = nt == 1 ? 1.6 : -0.3, b = nt == 1 ? 1.6 : 3.5, mi, t[15], g[15];
        size_t evals = 0;
        int converged = 0;
        const double scale = qc_noise_scale(m, levels, law, 4);
        assert_int_equal(qc_uniform_newton(w, scale, &a, &b, &mi, &evals, &converged), QC_OK);
        assert_int_equal(converged, 1);
        assert_true(evals >= 3 && evals <= 20);
        for (size_t j = 0; j < nt; j++)
            t[j] = a + (b - a) * (double)(j + 1) / K;
        double v;
        assert_int_equal(qc_cell_mi_eval(w, t, &v, g), QC_OK);
        assert_true(v == mi);
        /* ∂I/∂a = Σ (1 − (j+1)/K) g_j, ∂I/∂b = Σ (j+1)/K g_j */
        double ga = 0.0, gb = 0.0, gmax = 0.0;
        for (size_t j = 0; j < nt; j++) {
            ga += (1.0 - (double)(j + 1) / K) * g[j];
            gb += (double)(j + 1) / K * g[j];
            gmax = fmax(gmax, fabs(g[j]));
        }
        if (nt > 1) /* the thresholds alone are not stationary */
            assert_true(gmax > 1e-3);
        else /* one threshold: both ends move together, onto its maximum */
            assert_true(a == b && gmax <= 1e-9);
        assert_true(fabs(ga) <= 1e-9 && fabs(gb) <= 1e-9);
        for (int da = -1; da <= 1; da++)
            for (int db = -1; db <= 1; db++) {
                for (size_t j = 0; j < nt; j++)
                    t[j] = a + 1e-4 * da + (b + 1e-4 * db - a - 1e-4 * da) *
                                               (double)(j + 1) / K;
                assert_int_equal(qc_cell_mi_eval(w, t, &v, NULL), QC_OK);
                assert_true(v <= mi + 1e-15);
            }
        qc_cell_mi_free(w);
    }
    qc_model_free(m);
}

/* The uniform search rates continuous outputs with each level's tails
 * clipped at its support (0 and 1 beyond, density 0): PAM-16 in Gaussian
 * noise (each level reaches a few of 64 cells) and unipolar PAM-16 in
 * signal-dependent noise. The clipped rate is within 1e-13 bit of the
 * exact one, its gradient within 1e-12 nat, the cells a level's support
 * does not reach are exactly 0, and thresholds that do not increase are
 * refused. The uniform design (clipped search, exact rate reported) and
 * an unclipped search give the same rate to 1e-12 bit; one threshold is
 * not clipped. */
static void test_uniform_clipped_search(void **state)
{
    (void)state;
    double levels[16], law[16];
    for (size_t i = 0; i < 16; i++)
        law[i] = 1.0 / 16.0;
    const double sigma = 0.3, sd[3] = {0.02, 0.01, 0.0};
    for (int which = 0; which < 2; which++) {
        qc_model *m;
        for (size_t i = 0; i < 16; i++)
            levels[i] = which ? (double)i : -15.0 + 2.0 * (double)i;
        if (which)
            assert_int_equal(qc_model_alloc(&qc_model_gauss_sd, sd, &m), QC_OK);
        else
            assert_int_equal(qc_model_alloc(&qc_model_gauss, &sigma, &m), QC_OK);
        const size_t nt = 63;
        qc_cell_mi *exact, *clipped;
        assert_int_equal(qc_cell_mi_alloc(m, levels, law, 16, nt, &exact), QC_OK);
        assert_int_equal(qc_cell_mi_alloc(m, levels, law, 16, nt, &clipped), QC_OK);
        clipped->clip = 1;
        double t[63], ge[63], gc[63], ve, vc;
        const double lo = levels[0] - 1.0, hi = levels[15] + 1.0;
        for (size_t j = 0; j < nt; j++)
            t[j] = lo + (hi - lo) * (double)(j + 1) / (double)(nt + 1);
        assert_int_equal(qc_cell_mi_eval(exact, t, &ve, ge), QC_OK);
        assert_int_equal(qc_cell_mi_eval(clipped, t, &vc, gc), QC_OK);
        assert_true(fabs(ve - vc) * QC_LOG2E <= 1e-13);
        for (size_t j = 0; j < nt; j++)
            assert_true(fabs(ge[j] - gc[j]) <= 1e-12);
        size_t zeros = 0;
        for (size_t x = 0; x < 16; x++)
            for (size_t c = 0; c <= nt; c++) {
                const double p = clipped->channel->p[x * (nt + 1) + c];
                const int inside = c >= clipped->band[2 * x] && c <= clipped->band[2 * x + 1];
                if (!inside) {
                    assert_true(p == 0.0);
                    zeros++;
                }
            }
        assert_true(zeros > 16 * (nt + 1) / 2); /* most cells are beyond reach */
        double swapped[63];
        memcpy(swapped, t, sizeof t);
        swapped[10] = swapped[11];
        assert_int_equal(qc_cell_mi_eval(clipped, swapped, &vc, NULL), QC_EINVAL);
        /* the design against an unclipped search */
        double ts[63], vs;
        assert_int_equal(qc_uniform_search(m, levels, 16, nt, exact, ts, &vs, NULL), QC_OK);
        qc_design_result res;
        assert_int_equal(design_one(m, levels, 16, nt + 1, QC_QUANTIZER_UNIFORM, &res), QC_OK);
        assert_true(fabs(res.rate_bits - vs * QC_LOG2E) <= 1e-12);
        qc_design_result_clear(&res);
        qc_cell_mi_free(exact);
        qc_cell_mi_free(clipped);
        qc_model_free(m);
    }
    /* one threshold is searched on the exact rate: BPSK at 40 dB, where
     * the rate is 1 bit to the last digit over most positions and only the
     * far tails tell them apart; the strategy without the choice among
     * equally good thresholds gets the unclipped search's threshold */
    const double bpsk[2] = {-1.0, 1.0}, half[2] = {0.5, 0.5}, s40 = 0.01;
    qc_model *m;
    assert_int_equal(qc_model_alloc(&qc_model_gauss, &s40, &m), QC_OK);
    qc_cell_mi *w;
    assert_int_equal(qc_cell_mi_alloc(m, bpsk, half, 2, 1, &w), QC_OK);
    double t1, v1, t2;
    assert_int_equal(qc_uniform_search(m, bpsk, 2, 1, w, &t1, &v1, NULL), QC_OK);
    qc_strategy_plan *plan;
    qc_strategy_stats stats = {0};
    assert_int_equal(qc_strategy_plan_alloc(m, bpsk, 2, 1, NULL, 0, NULL, &plan), QC_OK);
    assert_int_equal(qc_strategy_design(&qc_strategy_uniform, plan, half, 0, &t2, &stats), QC_OK);
    assert_true(t2 == t1);
    qc_strategy_plan_free(plan);
    qc_cell_mi_free(w);
    qc_model_free(m);
}

/* A measured table (piecewise-linear densities, whose rate in the range
 * has local maxima): the uniform design with 16 to 64 cells is not beaten
 * by more than 10⁻⁶ bit by any range of a grid of 0.5 mV in both ends
 * (a Newton search from the scan's best settles 2·10⁻⁴ bit lower at 32
 * cells). */
static void test_uniform_kinked_density(void **state)
{
    (void)state;
    const char *dir = getenv("QC_TEST_DATA");
    assert_non_null(dir);
    char path[1024];
    snprintf(path, sizeof path, "%s/../data/table_demo.txt", dir);
    qc_model *m;
    assert_int_equal(qc_model_table_load(path, &m), QC_OK);
    const double *lv;
    size_t nl;
    qc_model_table_levels(m, &lv, &nl);
    const double law[4] = {0.25, 0.25, 0.25, 0.25};
    assert_int_equal(nl, 4);
    for (size_t K = 16; K <= 64; K *= 2) {
        qc_design_result res;
        assert_int_equal(design_one(m, lv, nl, K, QC_QUANTIZER_UNIFORM, &res), QC_OK);
        qc_cell_mi *w;
        assert_int_equal(qc_cell_mi_alloc(m, lv, law, nl, K - 1, &w), QC_OK);
        double t[63], best = -INFINITY;
        for (double a = -40.0; a <= 40.0; a += 0.5)
            for (double b = 60.0; b <= 180.0; b += 0.5) {
                for (size_t j = 1; j < K; j++)
                    t[j - 1] = a + (b - a) * (double)j / (double)K;
                double v;
                assert_int_equal(qc_cell_mi_eval(w, t, &v, NULL), QC_OK);
                best = fmax(best, v * QC_LOG2E);
            }
        if (res.rate_bits < best - 1e-6)
            fail_msg("%zu cells: design %.12f bit, a range of the grid %.12f", K,
                     res.rate_bits, best);
        qc_cell_mi_free(w);
        qc_design_result_clear(&res);
    }
    qc_model_free(m);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_dp_equals_exhaustive_contiguous),
        cmocka_unit_test(test_dp_binary_input_globally_optimal),
        cmocka_unit_test(test_dp_fast_equals_plain),
        cmocka_unit_test(test_dp_wide_alphabet),
        cmocka_unit_test(test_dp_bad_input),
        cmocka_unit_test(test_discretize_tail_80db),
        cmocka_unit_test(test_unquantized_noiseless_limit),
        cmocka_unit_test(test_unquantized_spike_among_wide_levels),
        cmocka_unit_test(test_unquantized_unsorted_supports),
        cmocka_unit_test(test_unquantized_wide_alphabet_full_sum),
        cmocka_unit_test(test_lloyd_max_gaussian),
        cmocka_unit_test(test_lloyd_max_converges),
        cmocka_unit_test(test_lloyd_max_cap_reported),
        cmocka_unit_test(test_uniform_is_best_of_its_family),
        cmocka_unit_test(test_uniform_newton_stationary),
        cmocka_unit_test(test_uniform_kinked_density),
        cmocka_unit_test(test_uniform_clipped_search),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
