/* test_iq_gradient.c — the exact gradient of the MI and the GMI of
 * two-dimensional cells with respect to their boundaries
 * (src/design/iq_gradient.c) against central finite differences of the
 * rates of the exact matrix (src/design/iq_channel.c): polar cells from
 * low SNR, where the arc integrals come from the Bessel series, to high
 * SNR, where they come from quadrature, and with a point at the origin
 * (hex:7's centre); the I/Q pair's thresholds on both axes; and both
 * receivers under a residual phase error (Gaussian and Tikhonov laws;
 * the I/Q pair by Gauss–Hermite rules, directly and reweighted, and by
 * the trapezoidal rule on the circle). Also the I/Q pair rated axis by
 * axis (src/design/iq_axis_planes.c): its MI, GMI and gradient against those of
 * the 2-D matrix, and which constellations and labels allow it. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <gsl/gsl_cdf.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "design/design_internal.h"
#include "quantcap.h"

#ifndef M_PI
#define M_PI 3.14159265358979323846
#endif

#define FD_STEP 1e-4 /* central differences, in widths of the noise (σ across a
                        radius, σ/|x| across a sector start): truncation
                        ~1e-8 relative, rounding ~1e-13/step */
#define FD_TOL 2e-7  /* agreement, absolute (bits per unit) plus relative */

static double rate(const qc_plane *c, const qc_iq_noise *n, const qc_iq_cells *q, int gmi)
{
    qc_dmc *ch = NULL;
    assert_int_equal(qc_iq_channel(c, n, q, &ch, NULL), QC_OK);
    qc_iq_rates r;
    assert_int_equal(qc_iq_rates_compute(c, ch, 0, 0.0, &r), QC_OK);
    qc_dmc_free(ch);
    return gmi ? r.gmi_bits : r.mi_bits;
}

/* The central difference of the rate in *v (step h) against exact; what
 * names the case and the kind of parameter, k its index. */
static void expect_derivative(const qc_plane *c, const qc_iq_noise *n, const qc_iq_cells *q,
                              int gmi, double *v, double h, double exact, const char *what,
                              size_t k)
{
    const double keep = *v;
    *v = keep + h;
    const double up = rate(c, n, q, gmi);
    *v = keep - h;
    const double down = rate(c, n, q, gmi);
    *v = keep;
    const double fd = (up - down) / (2.0 * h);
    if (!(fabs(fd - exact) <= FD_TOL * (1.0 + fabs(fd))))
        fail_msg("%s %zu, %s: exact %.12g, finite difference %.12g", what, k,
                 gmi ? "GMI" : "MI", exact, fd);
}

/* Polar cells of spec at snr_db under a phase error of pn_deg rms. */
static void check_phase_case(const char *spec, double snr_db, double pn_deg, qc_phase_law law,
                             size_t nr, const double *radii, size_t np,
                             const double *phases_deg)
{
    qc_plane *c;
    assert_int_equal(qc_plane_parse(spec, &c), QC_OK);
    const double sigma = sqrt(qc_plane_energy(c) / (2.0 * pow(10.0, snr_db / 10.0)));
    qc_iq_noise noise = {sigma, pn_deg * M_PI / 180.0, law};
    double rad[16], ph[64], g_r[16], g_p[64], rmax = 0.0;
    for (size_t i = 0; i < c->size; i++)
        rmax = fmax(rmax, hypot(c->x[i], c->y[i]));
    memcpy(rad, radii, nr * sizeof *rad);
    for (size_t p = 0; p < np; p++)
        ph[p] = phases_deg[p] * M_PI / 180.0;
    qc_iq_cells q = {.kind = QC_IQ_POLAR, .radii = rad, .nradii = nr, .phases = ph,
                     .nphases = np};
    for (int gmi = 0; gmi <= (c->labels != NULL); gmi++) { /* GMI where labels came */
        qc_dmc *ch = NULL, *ch_rays = NULL;
        assert_int_equal(qc_iq_channel(c, &noise, &q, &ch, NULL), QC_OK);
        assert_int_equal(qc_polar_gradient(c, &noise, &q, ch, NULL, gmi, g_r, g_p), QC_OK);
        /* the same matrix and gradient with the sector-start densities
         * taken from the matrix's own series, in a workspace kept from a
         * matrix of other cells (as a search keeps it) */
        const size_t ny = qc_iq_cell_count(&q);
        double *rays = malloc(c->size * ny * sizeof *rays), g_r2[16], g_p2[64];
        assert_non_null(rays);
        qc_polar_series *ws = NULL;
        qc_dmc *other = NULL;
        assert_int_equal(qc_polar_series_alloc(&noise, &ws), QC_OK);
        double wide[16];
        for (size_t k = 0; k < nr; k++)
            wide[k] = 1.5 * rad[k];
        qc_iq_cells q_wide = q;
        q_wide.radii = wide;
        assert_int_equal(qc_iq_channel_rays(c, &noise, &q_wide, &other, NULL, NULL, ws), QC_OK);
        qc_dmc_free(other);
        assert_int_equal(qc_iq_channel_rays(c, &noise, &q, &ch_rays, NULL, rays, ws), QC_OK);
        qc_polar_series_free(ws);
        assert_memory_equal(ch_rays->p, ch->p, c->size * ny * sizeof *ch->p);
        assert_int_equal(qc_polar_gradient(c, &noise, &q, ch_rays, rays, gmi, g_r2, g_p2),
                         QC_OK);
        assert_memory_equal(g_r2, g_r, nr * sizeof *g_r);
        assert_memory_equal(g_p2, g_p, np * sizeof *g_p);
        free(rays);
        qc_dmc_free(ch_rays);
        qc_dmc_free(ch);
        char what[96];
        snprintf(what, sizeof what, "%s at %g dB, %g deg, radius", spec, snr_db, pn_deg);
        for (size_t k = 0; k < nr; k++)
            expect_derivative(c, &noise, &q, gmi, &rad[k], FD_STEP * sigma, g_r[k], what, k);
        snprintf(what, sizeof what, "%s at %g dB, %g deg, sector start", spec, snr_db,
                 pn_deg);
        for (size_t k = 0; k < np; k++)
            expect_derivative(c, &noise, &q, gmi, &ph[k], FD_STEP * sigma / rmax, g_p[k], what,
                              k);
    }
    qc_plane_free(c);
}

static void check_case(const char *spec, double snr_db, size_t nr, const double *radii,
                       size_t np, const double *phases_deg)
{
    check_phase_case(spec, snr_db, 0.0, QC_PHASE_GAUSS, nr, radii, np, phases_deg);
}

/* The I/Q pair: in-phase thresholds ti, quadrature thresholds tq, under a
 * phase error of pn_deg rms. */
static void check_product_pn(const char *spec, double snr_db, double pn_deg, qc_phase_law law,
                             size_t ni, const double *ti, size_t nq, const double *tq)
{
    qc_plane *c;
    assert_int_equal(qc_plane_parse(spec, &c), QC_OK);
    const double sigma = sqrt(qc_plane_energy(c) / (2.0 * pow(10.0, snr_db / 10.0)));
    qc_iq_noise noise = {sigma, pn_deg * M_PI / 180.0, law};
    double a[16], b[16], g_i[16], g_q[16];
    memcpy(a, ti, ni * sizeof *a);
    memcpy(b, tq, nq * sizeof *b);
    qc_iq_cells q = {.kind = QC_IQ_PRODUCT, .ti = a, .nti = ni, .tq = b, .ntq = nq};
    for (int gmi = 0; gmi <= (c->labels != NULL); gmi++) {
        qc_dmc *ch = NULL;
        assert_int_equal(qc_iq_channel(c, &noise, &q, &ch, NULL), QC_OK);
        assert_int_equal(qc_product_gradient(c, &noise, &q, ch, gmi, g_i, g_q), QC_OK);
        qc_dmc_free(ch);
        char what[96];
        snprintf(what, sizeof what, "%s at %g dB, %g deg, in-phase threshold", spec, snr_db,
                 pn_deg);
        for (size_t k = 0; k < ni; k++)
            expect_derivative(c, &noise, &q, gmi, &a[k], FD_STEP * sigma, g_i[k], what, k);
        snprintf(what, sizeof what, "%s at %g dB, %g deg, quadrature threshold", spec, snr_db,
                 pn_deg);
        for (size_t k = 0; k < nq; k++)
            expect_derivative(c, &noise, &q, gmi, &b[k], FD_STEP * sigma, g_q[k], what, k);
    }
    qc_plane_free(c);
}

static void check_product(const char *spec, double snr_db, size_t ni, const double *ti,
                          size_t nq, const double *tq)
{
    check_product_pn(spec, snr_db, 0.0, QC_PHASE_GAUSS, ni, ti, nq, tq);
}

static void test_product(void **state)
{
    (void)state;
    const double ti[5] = {-2.5, -1.2, 0.1, 1.7, 2.9}, tq[3] = {-1.8, 0.3, 2.2};
    check_product("qam:16", 6.0, 5, ti, 3, tq);
    check_product("qam:16", 16.0, 5, ti, 3, tq);
    const double t8[7] = {-9.0, -6.0, -3.0, 0.5, 3.0, 6.5, 9.0}; /* rings of 4 and 12 */
    check_product("apsk:4/4,12/12", 14.0, 7, t8, 7, t8);
}

static void test_qam16(void **state)
{
    (void)state;
    const double radii[3] = {1.9, 3.1, 3.9};
    const double ph[8] = {-170.0, -120.0, -80.0, -20.0, 30.0, 50.0, 100.0, 150.0};
    check_case("qam:16", 8.0, 3, radii, 8, ph);   /* wide noise: short series */
    check_case("qam:16", 18.0, 3, radii, 8, ph);
    const double near[3] = {1.5, 3.2, 4.3};
    const double ph2[4] = {-135.0, -40.0, 44.0, 130.0};
    check_case("qam:16", 32.0, 3, near, 4, ph2); /* kappa 5800: a long series */
    const double close[3] = {1.5, 3.2, 4.3};
    const double ph3[4] = {-135.0, -40.0, 44.2, 130.0};
    check_case("qam:16", 42.0, 3, close, 4, ph3); /* kappa 57000: quadrature */
}

static void test_apsk_and_one_sector(void **state)
{
    (void)state;
    const double radii[2] = {0.8, 1.6};
    const double ph[6] = {-150.0, -95.0, -30.0, 10.0, 70.0, 120.0};
    check_case("apsk:4/4,12/12", 12.0, 2, radii, 6, ph);
    const double one[1] = {0.0};
    check_case("apsk:4/4,12/12", 12.0, 2, radii, 1, one); /* rings only */
}

static void test_origin_point(void **state)
{
    (void)state;
    /* psk:8 holds no origin point; hex:7 does (its centre) */
    const double radii[1] = {0.5};
    const double ph[6] = {-150.0, -90.0, -30.0, 30.0, 90.0, 150.0};
    check_case("hex:7", 10.0, 1, radii, 6, ph);
}

static void test_phase_error(void **state)
{
    (void)state;
    const double radii[3] = {1.9, 3.1, 3.9};
    const double ph[8] = {-170.0, -120.0, -80.0, -20.0, 30.0, 50.0, 100.0, 150.0};
    check_phase_case("qam:16", 18.0, 3.0, QC_PHASE_GAUSS, 3, radii, 8, ph);
    check_phase_case("qam:16", 12.0, 6.0, QC_PHASE_TIKHONOV, 3, radii, 8, ph);
    /* kappa 5800 (a series of ~780 terms alone) cut by the error's c_k */
    const double near[3] = {1.5, 3.2, 4.3};
    const double ph2[4] = {-135.0, -40.0, 44.0, 130.0};
    check_phase_case("qam:16", 32.0, 1.0, QC_PHASE_GAUSS, 3, near, 4, ph2);
    const double r7[1] = {0.5};
    const double ph7[6] = {-150.0, -90.0, -30.0, 30.0, 90.0, 150.0};
    check_phase_case("hex:7", 10.0, 4.0, QC_PHASE_TIKHONOV, 1, r7, 6, ph7);
    /* the I/Q pair: Gauss–Hermite rules (3 deg Gaussian; 5 deg Tikhonov,
     * reweighted), the trapezoidal rule on the circle (15 deg Tikhonov,
     * kappa 14.6; a Gaussian error wider than 6 angular widths of the
     * noise) */
    const double ti[5] = {-2.5, -1.2, 0.1, 1.7, 2.9}, tq[3] = {-1.8, 0.3, 2.2};
    check_product_pn("qam:16", 16.0, 3.0, QC_PHASE_GAUSS, 5, ti, 3, tq);
    check_product_pn("qam:16", 16.0, 5.0, QC_PHASE_TIKHONOV, 5, ti, 3, tq);
    check_product_pn("qam:16", 12.0, 15.0, QC_PHASE_TIKHONOV, 5, ti, 3, tq);
    check_product_pn("qam:16", 24.0, 12.0, QC_PHASE_GAUSS, 5, ti, 3, tq);
}

/* ---- the I/Q pair axis by axis ------------------------------------------ */

#define AXES_TOL 1e-12 /* the same sums in another order (bits, bits per unit) */

/* A plane of n points from arrays (not owned: a view for the axis code). */
static qc_plane view(size_t n, double *x, double *y, double *p, size_t *labels, unsigned nbits)
{
    qc_plane c = {.size = n, .x = x, .y = y, .prob = p, .prob_given = 1, .labels = labels,
                  .nbits = nbits, .labelling = labels ? "given" : NULL};
    return c;
}

/* The axes' objective and gradient against the 2-D matrix's, MI and (with
 * labels) GMI, for thresholds ti (ni) and tq (nq). */
static void expect_axes_match(const qc_plane *c, double sigma, size_t ni, const double *ti,
                              size_t nq, const double *tq)
{
    qc_iq_noise noise = {sigma, 0.0, QC_PHASE_GAUSS};
    qc_iq_cells q = {.kind = QC_IQ_PRODUCT, .ti = ti, .nti = ni, .tq = tq, .ntq = nq};
    qc_iq_axis_planes a;
    int ok = 0;
    assert_int_equal(qc_iq_axis_planes_build(c, 1, &a, &ok), QC_OK);
    assert_true(ok);
    for (int gmi = 0; gmi <= (c->labels != NULL); gmi++) {
        qc_status st;
        const double whole = rate(c, &noise, &q, gmi);
        qc_dmc *axis_ch[2] = {NULL, NULL};
        const double sum = qc_iq_axes_objective(&a, &noise, &q, gmi, axis_ch, &st);
        assert_int_equal(st, QC_OK);
        if (!(fabs(sum - whole) <= AXES_TOL))
            fail_msg("%s: axes %.15g, matrix %.15g", gmi ? "GMI" : "MI", sum, whole);
        double gi[16], gq[16], hi[16], hq[16];
        qc_dmc *ch = NULL;
        assert_int_equal(qc_iq_channel(c, &noise, &q, &ch, NULL), QC_OK);
        assert_int_equal(qc_product_gradient(c, &noise, &q, ch, gmi, gi, gq), QC_OK);
        qc_dmc_free(ch);
        assert_int_equal(qc_iq_axes_gradient(&a, &noise, &q, axis_ch, gmi, hi, hq), QC_OK);
        qc_dmc_free(axis_ch[0]);
        qc_dmc_free(axis_ch[1]);
        for (size_t k = 0; k < ni; k++)
            if (!(fabs(hi[k] - gi[k]) <= AXES_TOL * (1.0 + fabs(gi[k]))))
                fail_msg("%s in-phase %zu: axes %.15g, matrix %.15g", gmi ? "GMI" : "MI", k,
                         hi[k], gi[k]);
        for (size_t k = 0; k < nq; k++)
            if (!(fabs(hq[k] - gq[k]) <= AXES_TOL * (1.0 + fabs(gq[k]))))
                fail_msg("%s quadrature %zu: axes %.15g, matrix %.15g", gmi ? "GMI" : "MI",
                         k, hq[k], gq[k]);
    }
    qc_iq_axis_planes_free(&a);
}

/* The per-axis cell probabilities take each threshold's two tails from
 * one call beyond one noise scale and share them between its two cells:
 * bit for bit the former Φ(b) − Φ(a) with both ends computed apart by
 * GSL's gsl_cdf_ugaussian_P and _Q, the reference (in the upper tail
 * Q(a) − Q(b) when a > 0), over random points, noise and
 * thresholds at GSL's switch of formulas (0.66291) and ours (1), far out
 * (to 40 noise scales) and at random within three noise scales. */
static double axis_cell_apart(double a, double b)
{
    if (a > 0.0)
        return gsl_cdf_ugaussian_Q(a) - gsl_cdf_ugaussian_Q(b);
    return gsl_cdf_ugaussian_P(b) - gsl_cdf_ugaussian_P(a);
}

static void test_axis_probs_bits(void **state)
{
    (void)state;
    unsigned long seed = 12345;
    double t[9], out[10];
    for (int i = 0; i < 20000; i++) {
        seed = seed * 6364136223846793005ul + 1442695040888963407ul;
        const double r = (double)(seed >> 11) / 9007199254740992.0;
        const double sigma = pow(10.0, -2.0 + 3.0 * r), v = 4.0 * r - 2.0;
        const size_t nt = 1 + (size_t)(i % 9);
        for (size_t k = 0; k < nt; k++) {
            const double ks = (double)k - 0.5 * (double)(nt - 1);
            seed = seed * 6364136223846793005ul + 1442695040888963407ul;
            const double w = (double)(seed >> 11) / 9007199254740992.0;
            const double u = i % 4 == 0   ? ks * 0.66291
                             : i % 4 == 1 ? ks * (1.0 + 1e-12 * r)
                             : i % 4 == 2 ? ks * 40.0 * r / (double)nt
                                          : 6.0 * w - 3.0;
            t[k] = v + u * sigma;
        }
        if (i % 4 == 3) /* random thresholds within three noise scales, sorted */
            for (size_t k = 1; k < nt; k++)
                for (size_t j = k; j > 0 && t[j] < t[j - 1]; j--) {
                    const double tmp = t[j];
                    t[j] = t[j - 1];
                    t[j - 1] = tmp;
                }
        qc_iq_axis_probs(v, sigma, t, nt, out);
        double lo = -INFINITY;
        for (size_t k = 0; k <= nt; k++) {
            const double hi = k < nt ? t[k] : INFINITY;
            const double ref = axis_cell_apart((lo - v) / sigma, (hi - v) / sigma);
            assert_memory_equal(&out[k], &ref, sizeof ref);
            lo = hi;
        }
    }
}

static void test_axes(void **state)
{
    (void)state;
    /* 16-QAM with its Gray labels (a product of two Gray codes) */
    qc_plane *c;
    assert_int_equal(qc_plane_parse("qam:16", &c), QC_OK);
    const double ti[5] = {-2.5, -1.2, 0.1, 1.7, 2.9}, tq[3] = {-1.8, 0.3, 2.2};
    expect_axes_match(c, 0.5, 5, ti, 3, tq);
    expect_axes_match(c, 1.1, 3, tq, 5, ti);
    qc_plane_free(c);
    /* 4 x 2 points, a shaped law on the in-phase axis, labels whose bits
     * are interleaved: bit 1 is the quadrature's, bits 0 and 2 the
     * in-phase Gray code's */
    const double lv[4] = {-3.0, -1.0, 1.0, 3.0}, px[4] = {0.1, 0.4, 0.3, 0.2};
    const size_t gray[4] = {0, 1, 3, 2};
    double x[8], y[8], p[8];
    size_t lab[8];
    for (size_t i = 0, k = 0; i < 4; i++)
        for (size_t j = 0; j < 2; j++, k++) {
            x[k] = lv[i], y[k] = j ? 1.0 : -1.0, p[k] = px[i] * 0.5;
            lab[k] = (gray[i] & 1) | (j << 1) | ((gray[i] >> 1) << 2);
        }
    qc_plane r = view(8, x, y, p, lab, 3);
    const double t4[3] = {-2.2, 0.2, 1.9}, t1[1] = {0.1};
    expect_axes_match(&r, 0.7, 3, t4, 1, t1);
    /* labels whose bit mixes the axes: no split for the GMI (still for the
     * MI, which needs no labels) */
    size_t mixed[8];
    memcpy(mixed, lab, sizeof mixed);
    mixed[0] ^= 1; /* bit 0 now differs between the two points at x = -3 */
    mixed[7] ^= 1;
    qc_plane m = view(8, x, y, p, mixed, 3);
    qc_iq_axis_planes a;
    int ok = 1;
    assert_int_equal(qc_iq_axis_planes_build(&m, 1, &a, &ok), QC_OK);
    assert_false(ok);
    assert_int_equal(qc_iq_axis_planes_build(&m, 0, &a, &ok), QC_OK);
    assert_true(ok);
    qc_iq_axis_planes_free(&a);
    /* a law that is not a product, and a missing corner: no axes */
    p[0] *= 1.5, p[1] *= 0.5;
    assert_int_equal(qc_iq_axis_planes_build(&r, 0, &a, &ok), QC_OK);
    assert_false(ok);
    p[0] /= 1.5, p[1] /= 0.5;
    qc_plane seven = view(7, x + 1, y + 1, p + 1, NULL, 0);
    assert_int_equal(qc_iq_axis_planes_build(&seven, 0, &a, &ok), QC_OK);
    assert_false(ok);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_qam16),
        cmocka_unit_test(test_apsk_and_one_sector),
        cmocka_unit_test(test_origin_point),
        cmocka_unit_test(test_product),
        cmocka_unit_test(test_phase_error),
        cmocka_unit_test(test_axes),
        cmocka_unit_test(test_axis_probs_bits),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
