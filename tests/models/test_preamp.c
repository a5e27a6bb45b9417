/* test_preamp.c — the `preamp` model (Y = ncx2(2m, 2x)/2, energies in
 * ASE energy per mode, mean m + x, variance m + 2x) at many modes: tails
 * that add to 1 and keep relative accuracy far out, the density, and the
 * unquantized and quantized rates of a design from 300 to 1e6 modes. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <math.h>

#include "test_helpers.h"
#include "quantcap.h"

#define TOL_SUM 1e-13   /* |P(Y < t) + P(Y ≥ t) − 1|                      */
#define TOL_SCIPY 1e-9  /* relative, against scipy.stats.ncx2             */
#define TOL_MI 1e-8     /* relative, unquantized rate against scipy quad  */

static qc_model *preamp(double modes)
{
    double p[QC_MODEL_MAX_PARAMS] = {modes};
    qc_model *m = NULL;
    assert_int_equal(qc_model_alloc(&qc_model_preamp, p, &m), QC_OK);
    return m;
}

/* Both tails add to 1, each is monotone in its own half, the density is positive
 * and finite, over mean ± 12 sd, m = 300 … 1e6, x = 0 … 1e6. */
static void test_tails_consistent(void **state)
{
    (void)state;
    const double modes[] = {300.0, 1e3, 1e4, 1e5, 3e5, 1e6};
    const double xs[] = {0.0, 1.0, 30.0, 1e3, 1e6};
    for (size_t i = 0; i < sizeof modes / sizeof *modes; i++) {
        qc_model *m = preamp(modes[i]);
        for (size_t k = 0; k < sizeof xs / sizeof *xs; k++) {
            double x = xs[k], mean = modes[i] + x, sd = sqrt(modes[i] + 2.0 * x);
            double prev = 0.0;
            for (double z = -12.0; z <= 12.0; z += 0.5) {
                double t = mean + z * sd;
                double b = qc_model_get_type(m)->below(m, x, t), a = qc_model_get_type(m)->above(m, x, t);
                double f = qc_model_get_type(m)->density(m, x, t);
                assert_true(isfinite(b) && isfinite(a));
                assert_true(fabs(b + a - 1.0) <= TOL_SUM);
                /* each tail is monotone where it is the small one (the
                 * other side is 1 − that tail, good to ~1e-15 absolute) */
                if (z <= 0.0)
                    assert_true(b >= prev);
                else
                    assert_true(a <= prev);
                assert_true(isfinite(f) && f > 0.0);
                prev = z < 0.0 ? b : a;
            }
        }
        qc_model_free(m);
    }
}

/* Far tails and the density at many modes against scipy.stats.ncx2
 * (Debian python3-scipy 1.10, Boost's noncentral chi-square):
 * P(Y < t) = ncx2.cdf(2t, 2m, 2x), P(Y ≥ t) = ncx2.sf(2t, 2m, 2x),
 * f(t) = 2·ncx2.pdf(2t, 2m, 2x). */
static void test_against_scipy(void **state)
{
    (void)state;
    static const struct {
        double m, x, t, below, above, density;
    } ref[] = {
        /* t = mean − 10 sd and mean + 10 sd */
        {1e3, 30.0, 1030.0 - 10.0 * sqrt(1060.0), 7.140190661865119e-30, NAN,
         NAN},
        {1e6, 1e3, 1001000.0 - 10.0 * sqrt(1002000.0), 5.4466474348270324e-24, NAN,
         5.549550003066875e-26},
        {1e6, 1e3, 1001000.0 + 10.0 * sqrt(1002000.0), NAN, 1.0606992246196123e-23,
         1.0595420503296406e-25},
        {3e5, 1.0, 300001.0 + 2.0 * sqrt(300002.0), NAN, 0.022848615406668858,
         9.869260839886484e-05},
        {1e6, 1e6, 2e6 + 5.0 * sqrt(3e6), NAN, 2.9592630365037224e-07,
         8.828522105238627e-10},
    };
    for (size_t i = 0; i < sizeof ref / sizeof *ref; i++) {
        qc_model *m = preamp(ref[i].m);
        if (!isnan(ref[i].below))
            assert_near(qc_model_get_type(m)->below(m, ref[i].x, ref[i].t) / ref[i].below, 1.0,
                        TOL_SCIPY);
        if (!isnan(ref[i].above))
            assert_near(qc_model_get_type(m)->above(m, ref[i].x, ref[i].t) / ref[i].above, 1.0,
                        TOL_SCIPY);
        if (!isnan(ref[i].density))
            assert_near(qc_model_get_type(m)->density(m, ref[i].x, ref[i].t) / ref[i].density,
                        1.0, TOL_SCIPY);
        qc_model_free(m);
    }
}

/* Designs of two equiprobable levels, 2 bits: they succeed, the quantized
 * rate stays below the unquantized one, and that matches
 * scipy.integrate.quad over 2·ncx2.pdf(2y, 2m, 2x) (tests/models/check_preamp.py
 * computes the same values). Before, 1000 modes gave 0.5 bit unquantized
 * and 3e5 or 1e6 modes failed. */
static void test_design_many_modes(void **state)
{
    (void)state;
    static const struct {
        double m, x0, x1, unquantized_bits;
    } cases[] = {
        {1e3, 0.0, 1.0, 0.0001801342751252099},
        {1e3, 1.0, 2.0, 0.00017977512952852567},
        {1e4, 0.0, 10.0, 0.0017993217090369411},
        {3e5, 0.0, 1000.0, 0.427550853608757},
        {1e6, 0.0, 3000.0, 0.7590205300064783},
    };
    for (size_t i = 0; i < sizeof cases / sizeof *cases; i++) {
        qc_model *m = preamp(cases[i].m);
        double levels[] = {cases[i].x0, cases[i].x1};
        qc_design_request req;
        qc_design_request_default(&req);
        req.channel.model = m;
        req.channel.levels = levels;
        req.channel.nlevels = 2;
        req.quantizer.cells = 4;
        qc_design_result res = {0};
        assert_int_equal(qc_design(&req, &res), QC_OK);
        assert_true(res.rate_bits <= res.unquantized_bits + res.unquantized_err_bits);
        assert_true(res.rate_bits > 0.5 * res.unquantized_bits);
        assert_near(res.unquantized_bits / cases[i].unquantized_bits, 1.0, TOL_MI);
        qc_design_result_clear(&res);
        qc_model_free(m);
    }
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_tails_consistent),
        cmocka_unit_test(test_against_scipy),
        cmocka_unit_test(test_design_many_modes),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
