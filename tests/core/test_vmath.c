/* test_vmath.c — logarithms and exponentials of arrays (src/core/vmath.c)
 * against log(3) and exp(3) element by element: within 4 ulp (the bound
 * glibc states for libmvec, from memory), equal where the result is
 * subnormal, 0, infinite or NaN, across the edges where lanes leave the
 * vector path (a subnormal
 * result, underflow to 0, overflow), at every offset of an array whose
 * length is not a multiple of the vector width. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <float.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "core/internal.h"

#define TEST_RNG_SEED 0x3e8b0c4f5a17ULL /* random arguments below */
#include "test_helpers.h"

#define MAX_ULP 4.0 /* the bound glibc states for libmvec (from memory) */

/* |got − want| in units in the last place of want; 0 when both are the
 * same value (zeros, infinities) or both NaN. */
static double ulps(double got, double want)
{
    if (isnan(got) || isnan(want))
        return isnan(got) && isnan(want) ? 0.0 : INFINITY;
    if (got == want)
        return 0.0;
    if (!isfinite(got) || !isfinite(want))
        return INFINITY;
    const double ulp = nextafter(fabs(want), INFINITY) - fabs(want);
    return fabs(got - want) / ulp;
}

static void check_exp(const double *x, size_t n)
{
    double *y = malloc(n * sizeof *y);
    assert_non_null(y);
    qc_exp_array(x, y, n);
    for (size_t i = 0; i < n; i++) {
        const double want = exp(x[i]);
        /* results that underflow to zero or are subnormal: exactly exp(3)'s */
        const double tol = fabs(want) < DBL_MIN ? 0.0 : MAX_ULP;
        if (!(ulps(y[i], want) <= tol))
            fail_msg("exp(%.17g) [%zu of %zu]: %.17g, exp(3) %.17g", x[i], i, n, y[i], want);
    }
    /* in place */
    double *z = malloc(n * sizeof *z);
    assert_non_null(z);
    memcpy(z, x, n * sizeof *z);
    qc_exp_array(z, z, n);
    assert_memory_equal(z, y, n * sizeof *z);
    free(y);
    free(z);
}

static void test_exp_edges(void **state)
{
    (void)state;
    const double edges[] = {0.0,     -0.0,     1.0,      -1.0,    -700.0,  -708.0,
                            -708.5,  -720.0,   -745.0,   -745.13, -745.14, -745.2,
                            -745.3,  -1000.0,  -1e300,   709.0,   709.5,   710.0,
                            1e300,   INFINITY, -INFINITY, NAN,    1e-300,  -1e-300};
    const size_t n = sizeof edges / sizeof edges[0];
    /* each edge value at every lane position among ordinary neighbours */
    for (size_t pos = 0; pos < 5; pos++)
        for (size_t e = 0; e < n; e++) {
            double x[7];
            for (size_t i = 0; i < 7; i++)
                x[i] = -3.0 * (double)i;
            x[pos] = edges[e];
            check_exp(x, 7);
        }
    check_exp(edges, n);
}

static void test_exp_random(void **state)
{
    (void)state;
    const size_t n = 4099; /* not a multiple of 2 or 4 */
    double *x = malloc(n * sizeof *x);
    assert_non_null(x);
    for (size_t i = 0; i < n; i++)
        x[i] = -760.0 + 1470.0 * uniform01(); /* [−760, 710] */
    check_exp(x, n);
    for (size_t i = 0; i < n; i++)
        x[i] = -40.0 * uniform01(); /* the range of the memory channels' weights */
    check_exp(x, n);
    free(x);
}

static void test_log_floored(void **state)
{
    (void)state;
    const size_t n = 1027;
    double *x = malloc(n * sizeof *x), *y = malloc(n * sizeof *y);
    assert_true(x && y);
    for (size_t i = 0; i < n; i++)
        x[i] = exp(-700.0 * uniform01());
    x[3] = 0.0;           /* floored */
    x[10] = 4.9e-324;     /* subnormal: the scalar path */
    x[11] = DBL_MIN;
    x[100] = 1.0;
    qc_log_floored(x, y, n, -1234.5);
    for (size_t i = 0; i < n; i++) {
        const double want = x[i] > 0.0 ? log(x[i]) : -1234.5;
        if (!(ulps(y[i], want) <= MAX_ULP))
            fail_msg("log(%.17g) [%zu]: %.17g, log(3) %.17g", x[i], i, y[i], want);
    }
    free(x);
    free(y);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_exp_edges),
        cmocka_unit_test(test_exp_random),
        cmocka_unit_test(test_log_floored),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
