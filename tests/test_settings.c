/* test_settings.c — strict number parsing and the design settings
 * vocabulary shared by flags and scenario files. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "quantcap.h"
#include "core/parse.h"

#define assert_message(needle)                                                     \
    do {                                                                           \
        if (!strstr(qc_last_error(), (needle)))                                    \
            fail_msg("message '%s' lacks '%s'", qc_last_error(), (needle));        \
    } while (0)

static void test_parse_double(void **state)
{
    (void)state;
    double v;
    assert_int_equal(qc_parse_double(" 2.5e-3 ", &v), QC_OK);
    assert_true(v == 2.5e-3);
    assert_int_equal(qc_parse_double("-0", &v), QC_OK);
    const char *bad[] = {"", "abc", "1.5x", "nan", "inf", "-inf", "1e999", "0x", "1 2"};
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++)
        assert_int_equal(qc_parse_double(bad[i], &v), QC_EINVAL);
    char longtext[300];
    memset(longtext, '1', sizeof longtext - 1);
    longtext[sizeof longtext - 1] = '\0';
    assert_int_equal(qc_parse_double(longtext, &v), QC_EINVAL);
    assert_message("too long");
}

static void test_parse_size(void **state)
{
    (void)state;
    size_t z;
    assert_int_equal(qc_parse_size("16", 1, 16, &z), QC_OK);
    assert_int_equal(z, 16);
    assert_int_equal(qc_parse_size("0", 1, 16, &z), QC_EINVAL);
    assert_message("'0' is not a whole number from 1 to 16");
    const char *bad[] = {"17", "-1", "+3", "3.0", "", "99999999999999999999999"};
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++)
        assert_int_equal(qc_parse_size(bad[i], 1, 16, &z), QC_EINVAL);
}

static void test_parse_list(void **state)
{
    (void)state;
    double *v;
    size_t n;
    assert_int_equal(qc_parse_list("-3, -1,1 ,3", &v, &n), QC_OK);
    assert_int_equal(n, 4);
    assert_true(v[0] == -3 && v[3] == 3);
    free(v);
    assert_int_equal(qc_parse_list("1,,2", &v, &n), QC_EINVAL);
    assert_message("value 2 is empty");
    assert_null(v);
    assert_int_equal(qc_parse_list("1,2,x", &v, &n), QC_EINVAL);
    assert_message("value 3 'x' is not a finite number");
    assert_int_equal(qc_parse_list("1,", &v, &n), QC_EINVAL);
    assert_int_equal(qc_parse_list("", &v, &n), QC_EINVAL);
}

static void test_edit_distance(void **state)
{
    (void)state;
    /* Levenshtein distances worked by hand */
    assert_int_equal(qc_edit_distance("bits", "bits"), 0);
    assert_int_equal(qc_edit_distance("bitz", "bits"), 1);
    assert_int_equal(qc_edit_distance("", "abc"), 3);
    assert_int_equal(qc_edit_distance("kitten", "sitting"), 3);
    char longname[80];
    memset(longname, 'a', sizeof longname - 1);
    longname[sizeof longname - 1] = '\0';
    assert_int_equal(qc_edit_distance(longname, "a"), 99);
}

static void test_settings_set(void **state)
{
    (void)state;
    qc_settings *s;
    assert_int_equal(qc_settings_alloc(&s), QC_OK);
    assert_int_equal(qc_settings_set(s, "bits", "3"), QC_OK);
    assert_int_equal(qc_settings_set(s, "bits", "4"), QC_OK); /* replaces */
    assert_string_equal(qc_settings_get(s, "bits"), "4");
    assert_int_equal(qc_settings_set(s, "bits", "17"), QC_EINVAL);
    assert_string_equal(qc_settings_get(s, "bits"), "4"); /* unchanged on failure */
    assert_int_equal(qc_settings_set(s, "bitz", "3"), QC_EINVAL);
    assert_message("unknown key 'bitz' (did you mean 'bits'?)");
    assert_int_equal(qc_settings_set(s, "model", "nosuch"), QC_EINVAL);
    assert_message("unknown model 'nosuch'");
    assert_int_equal(qc_settings_set(s, "objective", "speed"), QC_EINVAL);
    assert_message("expected one of: mi,capacity");
    assert_int_equal(qc_settings_set(s, "sigma", "x"), QC_EINVAL);
    assert_int_equal(qc_settings_set(s, "tol", "0"), QC_EINVAL);
    assert_null(qc_settings_get(s, "levels"));
    qc_settings_free(s);
    qc_settings_free(NULL);
}

static qc_status build_from(const char *const *kv, size_t n, qc_model **m, qc_design_request *req,
                            qc_settings **out)
{
    qc_settings *s;
    assert_int_equal(qc_settings_alloc(&s), QC_OK);
    for (size_t i = 0; i + 1 < n; i += 2)
        assert_int_equal(qc_settings_set(s, kv[i], kv[i + 1]), QC_OK);
    *out = s;
    return qc_settings_build(s, m, req);
}

static void test_settings_build(void **state)
{
    (void)state;
    qc_settings *s;
    qc_model *m;
    qc_design_request req;
    const char *ok[] = {"model", "gauss", "snr-db", "10", "levels", "-3,-1,1,3", "bits", "3",
                        "objective", "capacity"};
    assert_int_equal(build_from(ok, 10, &m, &req, &s), QC_OK);
    assert_int_equal(req.cells, 8);
    assert_int_equal(req.nlevels, 4);
    assert_int_equal(req.objective, QC_OBJECTIVE_CAPACITY);
    /* σ² = E[x²]/snr = 5/10 for uniform PAM-4 levels ±1, ±3 */
    assert_true(fabs(m->params[0] - sqrt(0.5)) < 1e-15);
    qc_model_free(m);
    qc_settings_free(s);

    const char *both[] = {"model", "gauss", "sigma", "1", "snr-db", "3", "levels", "-1,1",
                          "bits", "1"};
    assert_int_equal(build_from(both, 10, &m, &req, &s), QC_EINVAL);
    assert_message("not both");
    qc_settings_free(s);

    const char *nores[] = {"model", "gauss", "sigma", "1", "levels", "-1,1"};
    assert_int_equal(build_from(nores, 6, &m, &req, &s), QC_EINVAL);
    assert_message("exactly one of 'bits' and 'cells'");
    qc_settings_free(s);

    const char *count[] = {"model", "gauss", "sigma", "1", "levels", "-1,1", "bits", "2",
                           "thresholds", "0"};
    assert_int_equal(build_from(count, 10, &m, &req, &s), QC_EINVAL);
    assert_message("1 thresholds make 2 cells");
    qc_settings_free(s);

    const char *probs[] = {"model", "gauss", "sigma", "1", "levels", "-1,1", "bits", "2",
                           "probabilities", "1"};
    assert_int_equal(build_from(probs, 10, &m, &req, &s), QC_EINVAL);
    assert_message("1 values for 2 levels");
    qc_settings_free(s);

    const char *nomodel[] = {"levels", "-1,1", "bits", "2"};
    assert_int_equal(build_from(nomodel, 4, &m, &req, &s), QC_EINVAL);
    assert_message("no model given");
    qc_settings_free(s);

    const char *badsigma[] = {"model", "gauss", "sigma", "-1", "levels", "-1,1", "bits", "2"};
    assert_int_equal(build_from(badsigma, 8, &m, &req, &s), QC_EINVAL);
    assert_message("'sigma' must be > 0");
    qc_settings_free(s);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_parse_double),   cmocka_unit_test(test_parse_size),
        cmocka_unit_test(test_parse_list),     cmocka_unit_test(test_edit_distance),
        cmocka_unit_test(test_settings_set),
        cmocka_unit_test(test_settings_build),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
