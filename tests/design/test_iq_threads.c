/* test_iq_threads.c — the costly rows of a two-dimensional receiver are
 * computed point by point in OpenMP threads (src/design/iq_channel.c):
 * the I/Q pair's under a residual phase error, with the gradient of its
 * MI and GMI (src/design/iq_gradient.c), and polar cells', each thread
 * in its own lane of the series workspace (src/design/iq_polar.c), with
 * the polar gradient's sums, one radius or sector start per thread; the
 * I/Q pair's without a phase error on a large matrix; and the unquantized
 * MI of a constellation that does not factor (src/design/iq_rate.c). They
 * must be those of one thread to the last bit, whatever the number of
 * threads: for Gauss–Hermite rules (Gaussian error, Tikhonov error
 * reweighted), the trapezoidal rule on the circle (an error wide against
 * the noise's angular width), and polar cells without a phase error
 * (series and, far from the origin, direct quadrature) and with one
 * (Gaussian and Tikhonov, with the sector-start densities), and a row
 * does not depend on what its workspace computed before. The thread
 * tests are skipped when the library is built without OpenMP. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "design/design_internal.h"
#include "quantcap.h"
#include "thread_helpers.h"

#ifndef M_PI
#define M_PI 3.14159265358979323846
#endif

#define MAX_THRESHOLDS 31 /* per axis: up to 32 × 32 cells */


/* The matrix and both gradients (MI, GMI) of spec through the I/Q pair at
 * snr_db under a phase error of pn_deg rms, on 1, 2 and 3 threads: the
 * same bytes. Uneven thresholds, so that no symmetry hides a point
 * computed in the wrong row. */
static void check_threads(const char *spec, double snr_db, double pn_deg, qc_phase_law law,
                          size_t nt)
{
    qc_plane *c;
    assert_int_equal(qc_plane_parse(spec, &c), QC_OK);
    assert_non_null(c->labels);
    const double sigma = sqrt(qc_plane_energy(c) / (2.0 * pow(10.0, snr_db / 10.0)));
    const qc_iq_noise noise = {sigma, pn_deg * M_PI / 180.0, law};
    double ti[MAX_THRESHOLDS], tq[MAX_THRESHOLDS];
    assert_true(nt <= MAX_THRESHOLDS);
    for (size_t k = 0; k < nt; k++) {
        const double u = -1.0 + 2.0 * ((double)k + 0.5) / (double)nt;
        ti[k] = 4.0 * u + 0.07 * sin(3.0 * (double)k);
        tq[k] = 4.2 * u - 0.05 * cos(5.0 * (double)k);
    }
    qc_iq_cells q = {.kind = QC_IQ_PRODUCT, .ti = ti, .nti = nt, .tq = tq, .ntq = nt};
    const size_t ny = qc_iq_cell_count(&q);
    need_threads((pn_deg > 0.0 ? 48 : 1) * c->size * ny);
    double *first = NULL, g_first[2][2 * MAX_THRESHOLDS];
    for (size_t r = 0; r < sizeof thread_counts / sizeof *thread_counts; r++) {
        set_threads(thread_counts[r]);
        qc_dmc *ch = NULL;
        double err = -1.0;
        assert_int_equal(qc_iq_channel(c, &noise, &q, &ch, &err), QC_OK);
        assert_true(err >= 0.0 && err <= QC_IQ_QUAD_TOL);
        double g[2][2 * MAX_THRESHOLDS] = {{0.0}};
        for (int gmi = 0; gmi <= 1; gmi++)
            assert_int_equal(qc_product_gradient(c, &noise, &q, ch, gmi, g[gmi], g[gmi] + nt),
                             QC_OK);
        if (r == 0) {
            first = malloc(c->size * ny * sizeof *first);
            assert_non_null(first);
            memcpy(first, ch->p, c->size * ny * sizeof *first);
            memcpy(g_first, g, sizeof g);
        } else {
            if (memcmp(first, ch->p, c->size * ny * sizeof *first) != 0)
                fail_msg("%s at %g deg: the matrix on %d threads differs from one thread's",
                         spec, pn_deg, thread_counts[r]);
            if (memcmp(g_first, g, sizeof g) != 0)
                fail_msg("%s at %g deg: the gradient on %d threads differs from one thread's",
                         spec, pn_deg, thread_counts[r]);
        }
        qc_dmc_free(ch);
    }
    free(first);
    qc_plane_free(c);
    set_threads(1);
}

static void test_phase_error_threads(void **state)
{
    (void)state;
#ifndef _OPENMP
    skip();
#endif
    check_threads("qam:16", 18.0, 3.0, QC_PHASE_GAUSS, 15);    /* Gauss–Hermite      */
    check_threads("qam:16", 16.0, 5.0, QC_PHASE_TIKHONOV, 15); /* reweighted         */
    check_threads("qam:16", 30.0, 25.0, QC_PHASE_GAUSS, 15);   /* rule on the circle */
    check_threads("psk:64", 24.0, 0.0, QC_PHASE_GAUSS, 31);    /* no phase error     */
}

/* The unquantized MI by the product Gauss–Hermite rule (64 points that do
 * not factor over the axes, 48 × 48 and 96 × 96 nodes): the same bits on
 * 1, 2 and 3 threads. */
static void test_unquantized_threads(void **state)
{
    (void)state;
#ifndef _OPENMP
    skip();
#endif
    qc_plane *c;
    assert_int_equal(qc_plane_parse("hex:64", &c), QC_OK);
    const double sigma = sqrt(qc_plane_energy(c) / (2.0 * pow(10.0, 1.8)));
    double first = NAN, first_err = NAN;
    for (size_t r = 0; r < sizeof thread_counts / sizeof *thread_counts; r++) {
        set_threads(thread_counts[r]);
        double mi = NAN, err = NAN;
        size_t used = 0;
        assert_int_equal(qc_iq_unquantized_mi(c, sigma, 96, &mi, &err, &used), QC_OK);
        assert_int_equal(used, 96);
        assert_true(mi > 5.0 && mi < 6.0);
        if (r == 0) {
            first = mi;
            first_err = err;
        } else if (memcmp(&first, &mi, sizeof mi) != 0 ||
                   memcmp(&first_err, &err, sizeof err) != 0) {
            fail_msg("unquantized MI on %d threads: %.17g (change %.3g), one thread %.17g "
                     "(%.3g)",
                     thread_counts[r], mi, err, first, first_err);
        }
    }
    qc_plane_free(c);
    set_threads(1);
}

/* Polar cells of spec at snr_db under a phase error of pn_deg rms (0:
 * none), A rings and P sectors: the matrix and the sector-start
 * densities on 1, 2 and 3 threads, with one workspace kept from one
 * thread count to the next (as a search keeps it), the same bytes. */
static void check_polar_threads(const char *spec, double snr_db, double pn_deg,
                                qc_phase_law law, size_t rings, size_t sectors)
{
    qc_plane *c;
    assert_int_equal(qc_plane_parse(spec, &c), QC_OK);
    const double sigma = sqrt(qc_plane_energy(c) / (2.0 * pow(10.0, snr_db / 10.0)));
    const qc_iq_noise noise = {sigma, pn_deg * M_PI / 180.0, law};
    double smax = 0.0;
    for (size_t x = 0; x < c->size; x++)
        smax = fmax(smax, hypot(c->x[x], c->y[x]));
    double radii[16], phases[64];
    for (size_t a = 0; a + 1 < rings; a++) /* uneven rings and sectors */
        radii[a] = smax * (0.15 + 0.9 * ((double)a + 1.0) / (double)rings) +
                   0.01 * sin((double)a);
    for (size_t p = 0; p < sectors; p++)
        phases[p] = -M_PI + 2.0 * M_PI * ((double)p + 0.1 + 0.02 * cos(7.0 * (double)p)) /
                                (double)sectors;
    qc_iq_cells q = {.kind = QC_IQ_POLAR, .radii = radii, .nradii = rings - 1,
                     .phases = phases, .nphases = sectors};
    const size_t ny = qc_iq_cell_count(&q), n = c->size * ny;
    need_threads(48 * n);
    qc_polar_series *series = NULL;
    assert_int_equal(qc_polar_series_alloc(&noise, &series), QC_OK);
    double *first = malloc(2 * n * sizeof *first), *rays = malloc(n * sizeof *rays);
    assert_non_null(first);
    assert_non_null(rays);
    const size_t ng = rings - 1 + sectors; /* radii, then sector starts */
    double g_first[2][2][80], g[2][2][80]; /* [gmi][rays kept or not][ng] */
    assert_true(ng <= 80);
    for (size_t r = 0; r < sizeof thread_counts / sizeof *thread_counts; r++) {
        set_threads(thread_counts[r]);
        qc_dmc *ch = NULL;
        double err = -1.0;
        assert_int_equal(qc_iq_channel_rays(c, &noise, &q, &ch, &err, rays, series), QC_OK);
        assert_true(err >= 0.0 && err <= QC_IQ_QUAD_TOL);
        memset(g, 0, sizeof g);
        for (int gmi = 0; gmi <= 1; gmi++)
            for (int kept = 0; kept <= (pn_deg > 0.0); kept++)
                assert_int_equal(qc_polar_gradient(c, &noise, &q, ch, kept ? rays : NULL, gmi,
                                                   g[gmi][kept], g[gmi][kept] + rings - 1),
                                 QC_OK);
        if (pn_deg > 0.0) /* the densities kept or computed again: the same */
            for (int gmi = 0; gmi <= 1; gmi++)
                assert_memory_equal(g[gmi][0], g[gmi][1], ng * sizeof g[0][0][0]);
        if (r == 0) {
            memcpy(first, ch->p, n * sizeof *first);
            memcpy(first + n, rays, n * sizeof *first);
            memcpy(g_first, g, sizeof g);
        } else if (memcmp(first, ch->p, n * sizeof *first) != 0 ||
                   memcmp(first + n, rays, n * sizeof *first) != 0) {
            fail_msg("%s polar %zu x %zu at %g deg: the matrix or the densities on %d threads "
                     "differ from one thread's",
                     spec, rings, sectors, pn_deg, thread_counts[r]);
        } else if (memcmp(g_first, g, sizeof g) != 0) {
            fail_msg("%s polar %zu x %zu at %g deg: the gradient on %d threads differs from "
                     "one thread's",
                     spec, rings, sectors, pn_deg, thread_counts[r]);
        }
        qc_dmc_free(ch);
    }
    free(first);
    free(rays);
    qc_polar_series_free(series);
    qc_plane_free(c);
    set_threads(1);
}

static void test_polar_threads(void **state)
{
    (void)state;
#ifndef _OPENMP
    skip();
#endif
    check_polar_threads("qam:64", 18.0, 0.0, QC_PHASE_GAUSS, 4, 16);    /* series        */
    check_polar_threads("qam:64", 36.0, 0.0, QC_PHASE_GAUSS, 4, 16);    /* and direct    */
    check_polar_threads("qam:16", 16.0, 4.0, QC_PHASE_GAUSS, 3, 32);
    check_polar_threads("qam:16", 14.0, 6.0, QC_PHASE_TIKHONOV, 4, 32);
    check_polar_threads("qam:16", 14.0, 1.5, QC_PHASE_TIKHONOV, 4, 32); /* c_k cut late */
}

/* A workspace's history does not show in a row: the row of a point near
 * the origin (a short series) from a fresh workspace and from one that
 * has grown on a far point first (a long series, more of the Tikhonov
 * law's coefficients) are the same bytes. Which lane, and so which
 * history, a row meets depends on the threads. */
static void test_polar_history(void **state)
{
    (void)state;
    const qc_iq_noise noise = {0.45, 1.5 * M_PI / 180.0, QC_PHASE_TIKHONOV};
    double radii[3] = {1.5, 3.0, 4.0}, phases[8];
    for (size_t p = 0; p < 8; p++)
        phases[p] = -M_PI + 2.0 * M_PI * ((double)p + 0.3) / 8.0;
    const qc_iq_cells q = {.kind = QC_IQ_POLAR, .radii = radii, .nradii = 3, .phases = phases,
                           .nphases = 8};
    double fresh[32], grown[32], far[32], e = 0.0;
    qc_polar_series *a = NULL, *b = NULL;
    assert_int_equal(qc_polar_series_alloc(&noise, &a), QC_OK);
    assert_int_equal(qc_polar_series_alloc(&noise, &b), QC_OK);
    assert_int_equal(qc_polar_row(a, &q, 1.0, 0.4, noise.sigma, fresh, &e, NULL), QC_OK);
    assert_int_equal(qc_polar_row(b, &q, 9.0, -7.0, noise.sigma, far, &e, NULL), QC_OK);
    assert_int_equal(qc_polar_row(b, &q, 1.0, 0.4, noise.sigma, grown, &e, NULL), QC_OK);
    assert_memory_equal(fresh, grown, sizeof fresh);
    qc_polar_series_free(a);
    qc_polar_series_free(b);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_phase_error_threads),
        cmocka_unit_test(test_unquantized_threads),
        cmocka_unit_test(test_polar_threads),
        cmocka_unit_test(test_polar_history),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
