/* test_convolve.c — the FFT convolution module: against direct sums,
 * and by properties of laws (sums of independent variables); the chirp
 * z-transform against its defining sum. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include "test_helpers.h"

#include <math.h>
#include <stdlib.h>

#include <gsl/gsl_randist.h>

#include "models/convolve.h"

#define TOL_FFT 1e-13 /* absolute, inputs of order 1 */
#define TOL_FFT_PMF 1e-15      /* absolute, probabilities of at most 0.2 */
#define TOL_FFT_DENSITY 1e-12  /* absolute, a density from sampled convolution */

static void test_good_size(void **state)
{
    (void)state;
    assert_int_equal(qc_conv_good_size(0), 1);
    assert_int_equal(qc_conv_good_size(1), 1);
    assert_int_equal(qc_conv_good_size(11), 12);
    assert_int_equal(qc_conv_good_size(13), 14);
    assert_int_equal(qc_conv_good_size(1000), 1000);
    assert_int_equal(qc_conv_good_size(1031), 1050);
}

/* Random lengths (fixed seed): FFT result equals the direct sum. */
static void test_against_direct(void **state)
{
    (void)state;
    unsigned seed = 7u;
    for (int rep = 0; rep < 20; rep++) {
        size_t na = 1 + (seed = seed * 1103515245u + 12345u) % 300;
        size_t nb = 1 + (seed = seed * 1103515245u + 12345u) % 300;
        size_t n = qc_conv_good_size(na + nb - 1);
        double *a = malloc(na * sizeof *a), *b = malloc(nb * sizeof *b);
        double *y = malloc((na + nb) * sizeof *y);
        for (size_t i = 0; i < na; i++)
            a[i] = ((seed = seed * 1103515245u + 12345u) >> 8) / 16777216.0 - 0.3;
        for (size_t i = 0; i < nb; i++)
            b[i] = ((seed = seed * 1103515245u + 12345u) >> 8) / 16777216.0;
        qc_conv *c;
        assert_int_equal(qc_conv_alloc(n, &c), QC_OK);
        assert_int_equal(qc_conv_length(c), n);
        assert_int_equal(qc_conv_spectrum_length(c), n / 2 + 1);
        for (int again = 0; again < 2; again++) { /* the plan is reused */
            assert_int_equal(qc_conv_linear(c, a, na, b, nb, y), QC_OK);
            for (size_t k = 0; k < na + nb - 1; k++) {
                double s = 0.0;
                for (size_t i = 0; i < na; i++)
                    if (k >= i && k - i < nb)
                        s += a[i] * b[k - i];
                assert_near(y[k], s, TOL_FFT * (double)(na + nb));
            }
        }
        if (n > 1)
            assert_int_equal(qc_conv_linear(c, a, n, b, 2, y), QC_EINVAL);
        assert_int_equal(qc_conv_linear(c, a, 0, b, nb, y), QC_EINVAL);
        qc_conv_free(c);
        free(a);
        free(b);
        free(y);
    }
    qc_conv_free(NULL);
}

/* Poisson(2) * Poisson(3) = Poisson(5) (sum of independent Poisson
 * variables, e.g. Feller, An Introduction to Probability Theory, vol. I,
 * ch. XI); shot + thermal: N(0, 3²) * N(0, 4²) sampled = N(0, 5²). */
static void test_laws(void **state)
{
    (void)state;
    enum { N = 60 };
    double a[N], b[N], y[2 * N];
    /* Riemann sums of Gaussians are exact to exp(−2π²σ²/h²) (Poisson
     * summation); the cut at ±40 drops less than 1e-20 */
    for (int k = 0; k < N; k++) {
        a[k] = gsl_ran_poisson_pdf((unsigned)k, 2.0);
        b[k] = gsl_ran_poisson_pdf((unsigned)k, 3.0);
    }
    qc_conv *c;
    assert_int_equal(qc_conv_alloc(128, &c), QC_OK);
    assert_int_equal(qc_conv_linear(c, a, N, b, N, y), QC_OK);
    for (int k = 0; k < 30; k++)
        assert_near(y[k], gsl_ran_poisson_pdf((unsigned)k, 5.0), TOL_FFT_PMF);
    qc_conv_free(c);
    enum { W = 320 }; /* samples at step 0.25 on [−40, 40] */
    double g1[W + 1], g2[W + 1], out[2 * W + 1];
    for (int i = 0; i <= W; i++) {
        double u = -40.0 + 0.25 * i;
        g1[i] = 0.25 * gsl_ran_gaussian_pdf(u, 3.0);
        g2[i] = 0.25 * gsl_ran_gaussian_pdf(u, 4.0);
    }
    assert_int_equal(qc_conv_alloc(qc_conv_good_size(2 * W + 1), &c), QC_OK);
    assert_int_equal(qc_conv_linear(c, g1, W + 1, g2, W + 1, out), QC_OK);
    for (int i = 0; i <= 2 * W; i += 7) {
        double u = -80.0 + 0.25 * i;
        assert_near(out[i] / 0.25, gsl_ran_gaussian_pdf(u, 5.0), TOL_FFT_DENSITY);
    }
    qc_conv_free(c);
    qc_conv *bad;
    assert_int_equal(qc_conv_alloc(0, &bad), QC_EINVAL);
}

/* The chirp z-transform against the defining sum in long double, at a
 * period N that is not a transform length (as apd uses: N = len·h), and
 * against the plain FFT when N is the transform length. */
static void test_chirp(void **state)
{
    (void)state;
    const size_t nx = 300, K = 129, Ns[] = {256 * 3, 1000, 257};
    double x[300];
    for (size_t n = 0; n < nx; n++)
        x[n] = exp(-0.01 * (double)n) * (1.0 + 0.5 * sin(0.3 * (double)n));
    double complex X[129];
    for (size_t c = 0; c < sizeof Ns / sizeof *Ns; c++) {
        size_t N = Ns[c];
        assert_int_equal(qc_conv_chirp(x, nx, N, K, X), QC_OK);
        for (size_t k = 0; k < K; k++) {
            long double re = 0.0L, im = 0.0L;
            for (size_t n = 0; n < nx; n++) {
                /* angle 2π (nk mod N)/N, reduced exactly */
                long double a = 6.283185307179586476925286766559L *
                                (long double)((n * k) % N) / (long double)N;
                re += x[n] * cosl(a);
                im -= x[n] * sinl(a);
            }
            assert_near(creal(X[k]), (double)re, TOL_FFT);
            assert_near(cimag(X[k]), (double)im, TOL_FFT);
        }
    }
    /* N = 512, the length of a real FFT of the same (zero-padded) input */
    qc_conv *cv;
    assert_int_equal(qc_conv_alloc(512, &cv), QC_OK);
    double complex F[257], C[257];
    qc_conv_forward(cv, x, nx, F);
    assert_int_equal(qc_conv_chirp(x, nx, 512, 257, C), QC_OK);
    for (size_t k = 0; k < 257; k++) {
        assert_near(creal(C[k]), creal(F[k]), TOL_FFT);
        assert_near(cimag(C[k]), cimag(F[k]), TOL_FFT);
    }
    qc_conv_free(cv);
    assert_int_equal(qc_conv_chirp(x, 0, 512, 257, C), QC_EINVAL);
    assert_int_equal(qc_conv_chirp(x, nx, 0, 257, C), QC_EINVAL);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_good_size),
        cmocka_unit_test(test_against_direct),
        cmocka_unit_test(test_laws),
        cmocka_unit_test(test_chirp),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
