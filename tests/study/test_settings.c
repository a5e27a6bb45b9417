/* test_settings.c — strict number parsing and the design settings
 * vocabulary shared by flags and scenario files. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <math.h>
#include <pthread.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "quantcap.h"
#include "core/parse.h"

#include "test_helpers.h"

#define TOL_ULP 1e-15  /* one rounding of a number of order 1 */

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
    assert_message("value 3: 'x' is not a decimal number");
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
    assert_int_equal(req.quantizer.cells, 8);
    assert_int_equal(req.channel.nlevels, 4);
    assert_int_equal(req.input.objective, QC_OBJECTIVE_CAPACITY);
    /* σ² = E[x²]/snr = 5/10 for uniform PAM-4 levels ±1, ±3 */
    assert_true(fabs(qc_model_param(m, 0) - sqrt(0.5)) < TOL_ULP);
    qc_model_free(m);
    qc_settings_free(s);

    const char *both[] = {"model", "gauss", "sigma", "1", "snr-db", "3", "levels", "-1,1",
                          "bits", "1"};
    assert_int_equal(build_from(both, 10, &m, &req, &s), QC_EINVAL);
    assert_message("not both");
    qc_settings_free(s);

    const char *nores[] = {"model", "gauss", "sigma", "1", "levels", "-1,1"};
    assert_int_equal(build_from(nores, 6, &m, &req, &s), QC_EINVAL);
    assert_message("give 'bits' or 'cells'");
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


/* Settings of `kv` (key, value pairs) built with the model borrowed from
 * `cache`. */
static qc_status build_cached(qc_model_cache *cache, const char *const *kv, size_t n,
                              const qc_model **m, qc_design_request *req, qc_settings **out)
{
    qc_settings *s;
    assert_int_equal(qc_settings_alloc(&s), QC_OK);
    for (size_t i = 0; i + 1 < n; i += 2)
        assert_int_equal(qc_settings_set(s, kv[i], kv[i + 1]), QC_OK);
    *out = s;
    return qc_settings_build_cached(s, cache, m, req);
}

/* The model cache: the same setting gets the same instance back once it
 * is returned (whatever else differs: levels, bits), a different setting
 * or a second borrower at the same time another instance; the request
 * matches qc_settings_build's; a failed build lends nothing and keeps the
 * message. */
static void test_model_cache(void **state)
{
    (void)state;
    qc_model_cache *cache;
    assert_int_equal(qc_model_cache_alloc(&cache), QC_OK);
    const char *a[] = {"model", "gauss", "sigma", "0.5", "levels", "-1,1", "bits", "2"};
    const char *a2[] = {"model", "gauss", "sigma", "0.5", "levels", "-3,-1,1,3", "bits", "4"};
    const char *b[] = {"model", "gauss", "sigma", "0.25", "levels", "-1,1", "bits", "2"};
    qc_settings *s1, *s2, *s3;
    const qc_model *m1, *m2, *m3;
    qc_design_request r1, r2, r3;
    assert_int_equal(build_cached(cache, a, 8, &m1, &r1, &s1), QC_OK);
    assert_ptr_equal(r1.channel.model, m1);
    assert_int_equal(r1.quantizer.cells, 4);
    /* m1 still out: the same setting gets a second instance */
    assert_int_equal(build_cached(cache, a2, 8, &m2, &r2, &s2), QC_OK);
    assert_ptr_not_equal(m1, m2);
    assert_true(qc_model_param(m2, 0) == 0.5);
    qc_model_cache_release(cache, m1);
    qc_model_cache_release(cache, m2);
    qc_settings_free(s2);
    /* returned: the same setting (other levels and bits) gets one back */
    assert_int_equal(build_cached(cache, a2, 8, &m3, &r3, &s3), QC_OK);
    assert_true(m3 == m1 || m3 == m2);
    assert_int_equal(r3.quantizer.cells, 16);
    assert_int_equal(r3.channel.nlevels, 4);
    qc_model_cache_release(cache, m3);
    qc_settings_free(s3);
    /* another parameter value: another instance */
    assert_int_equal(build_cached(cache, b, 8, &m3, &r3, &s3), QC_OK);
    assert_ptr_not_equal(m3, m1);
    assert_ptr_not_equal(m3, m2);
    assert_true(qc_model_param(m3, 0) == 0.25);
    qc_model_cache_release(cache, m3);
    qc_settings_free(s3);
    qc_settings_free(s1);

    /* an explicit default is the same setting as an omitted one */
    const qc_model *d1, *d2;
    double given[QC_MODEL_MAX_PARAMS], omitted[QC_MODEL_MAX_PARAMS];
    for (size_t i = 0; i < QC_MODEL_MAX_PARAMS; i++)
        given[i] = omitted[i] = NAN;
    given[0] = omitted[0] = 20.0; /* poisson: signal; background defaults */
    given[1] = qc_model_poisson.params[1].default_value;
    assert_int_equal(qc_model_cache_get(cache, &qc_model_poisson, omitted, NULL, &d1), QC_OK);
    qc_model_cache_release(cache, d1);
    assert_int_equal(qc_model_cache_get(cache, &qc_model_poisson, given, NULL, &d2), QC_OK);
    assert_ptr_equal(d1, d2);
    qc_model_cache_release(cache, d2);

    /* a table: the same file, the same instance; its levels the file's */
    const char *dir = getenv("QC_TEST_DATA");
    if (dir) {
        char path[4096];
        snprintf(path, sizeof path, "%s/../data/table_demo.txt", dir);
        const char *t[] = {"model", "table", "table", path, "bits", "2"};
        assert_int_equal(build_cached(cache, t, 6, &m1, &r1, &s1), QC_OK);
        qc_model_cache_release(cache, m1);
        qc_settings_free(s1);
        assert_int_equal(build_cached(cache, t, 6, &m2, &r2, &s2), QC_OK);
        assert_ptr_equal(m1, m2);
        assert_true(r2.channel.nlevels >= 2);
        qc_model_cache_release(cache, m2);
        qc_settings_free(s2);
    }

    /* failures: nothing lent, the build's message */
    const char *bad[] = {"model", "gauss", "sigma", "-1", "levels", "-1,1", "bits", "2"};
    assert_int_equal(build_cached(cache, bad, 8, &m1, &r1, &s1), QC_EINVAL);
    assert_null(m1);
    assert_message("'sigma' must be > 0");
    qc_settings_free(s1);
    const char *missing[] = {"model", "table", "table", "/nonexistent/quantcap.txt", "bits", "2"};
    assert_int_equal(build_cached(cache, missing, 6, &m1, &r1, &s1), QC_EIO);
    assert_null(m1);
    assert_message("/nonexistent/quantcap.txt");
    qc_settings_free(s1);
    assert_int_equal(qc_settings_alloc(&s1), QC_OK);
    assert_int_equal(qc_settings_build_cached(s1, NULL, &m1, &r1), QC_EINVAL);
    assert_null(m1);
    qc_settings_free(s1);
    qc_model_cache_release(cache, NULL); /* ignored */
    qc_model_cache_free(cache);
    qc_model_cache_free(NULL);
}

/* Threads borrowing instances of one APD setting from one cache, each
 * instance passing between threads and between level sets (as a sweep's
 * points do), compute the same matrices, to the bit, as a fresh instance
 * in this thread. Run under ThreadSanitizer (-Db_sanitize=thread), this is
 * the check that the lending has no data race. */
#define SHARE_THREADS 2
#define SHARE_ROUNDS 6
static const double share_params[QC_MODEL_MAX_PARAMS] = {40.0, 0.0, 15.0, 0.02, 50.0};
static const double share_levels[2][4] = {{0.0, 1.0 / 3.0, 2.0 / 3.0, 1.0},
                                          {0.1, 0.4, 0.7, 1.0}};
static const double share_t[5] = {100.0, 300.0, 500.0, 700.0, 900.0};

typedef struct {
    qc_model_cache *cache;
    const qc_dmc *reference[2];
    size_t seed;
    int failures;
} share_job;

static void *share_worker(void *arg)
{
    share_job *job = arg;
    for (size_t r = 0; r < SHARE_ROUNDS; r++) {
        size_t set = (r + job->seed) % 2;
        const qc_model *m;
        qc_dmc *d;
        if (qc_model_cache_get(job->cache, &qc_model_apd, share_params, NULL, &m) != QC_OK) {
            job->failures++;
            continue;
        }
        if (qc_discretize(m, share_levels[set], 4, share_t, 5, &d) != QC_OK) {
            job->failures++;
        } else {
            if (memcmp(d->p, job->reference[set]->p, 4 * 6 * sizeof *d->p) != 0)
                job->failures++;
            qc_dmc_free(d);
        }
        qc_model_cache_release(job->cache, m);
    }
    return NULL;
}

static void test_model_cache_threads(void **state)
{
    (void)state;
    qc_dmc *reference[2];
    for (size_t set = 0; set < 2; set++) {
        qc_model *fresh;
        assert_int_equal(qc_model_alloc(&qc_model_apd, share_params, &fresh), QC_OK);
        assert_int_equal(qc_discretize(fresh, share_levels[set], 4, share_t, 5, &reference[set]),
                         QC_OK);
        qc_model_free(fresh);
    }
    qc_model_cache *cache;
    assert_int_equal(qc_model_cache_alloc(&cache), QC_OK);
    share_job jobs[SHARE_THREADS];
    pthread_t th[SHARE_THREADS];
    for (size_t i = 0; i < SHARE_THREADS; i++) {
        jobs[i] = (share_job){.cache = cache, .reference = {reference[0], reference[1]},
                              .seed = i};
        assert_int_equal(pthread_create(&th[i], NULL, share_worker, &jobs[i]), 0);
    }
    for (size_t i = 0; i < SHARE_THREADS; i++) {
        assert_int_equal(pthread_join(th[i], NULL), 0);
        assert_int_equal(jobs[i].failures, 0);
    }
    qc_model_cache_free(cache);
    qc_dmc_free(reference[0]);
    qc_dmc_free(reference[1]);
}

/* One number grammar: decimal only; hexadecimal, inf and nan are refused
 * with a message saying a decimal number was expected. */
static void test_decimal_only(void **state)
{
    (void)state;
    double v;
    const char *good[] = {"16", "+1.5", "-.5", "5.", "3e-9", "1E+3"};
    const double want[] = {16, 1.5, -0.5, 5, 3e-9, 1e3};
    for (size_t i = 0; i < sizeof good / sizeof good[0]; i++) {
        assert_int_equal(qc_parse_double(good[i], &v), QC_OK);
        assert_true(v == want[i]);
    }
    const char *bad[] = {"0x10", "0X1p4", "infinity", "INF", "NaN", "nan(1)", "1e", "e5",
                         ".", "1.2.3", "--1"};
    for (size_t i = 0; i < sizeof bad / sizeof bad[0]; i++) {
        assert_int_equal(qc_parse_double(bad[i], &v), QC_EINVAL);
        assert_message("is not a decimal number");
    }
    double *list;
    size_t n;
    assert_int_equal(qc_parse_list("1,0x2", &list, &n), QC_EINVAL);
    assert_message("value 2: '0x2' is not a decimal number");
    qc_settings *s;
    assert_int_equal(qc_settings_alloc(&s), QC_OK);
    assert_int_equal(qc_settings_set(s, "snr-db", "0x10"), QC_EINVAL);
    assert_message("'0x10' is not a decimal number");
    qc_settings_free(s);
}

/* Renamed keys are refused, naming the new key. */
static void test_renamed_keys(void **state)
{
    (void)state;
    const char *pairs[][2] = {{"peak", "peak-limit"},       {"power", "power-limit"},
                              {"mean", "mean-limit"},       {"power-dbm", "received-dbm"},
                              {"gain", "apd-gain"},         {"k", "apd-k"}};
    qc_settings *s;
    assert_int_equal(qc_settings_alloc(&s), QC_OK);
    for (size_t i = 0; i < sizeof pairs / sizeof pairs[0]; i++) {
        char want[64];
        assert_string_equal(qc_setting_renamed(pairs[i][0]), pairs[i][1]);
        assert_string_equal(qc_setting_suggest(pairs[i][0]), pairs[i][1]);
        assert_int_equal(qc_settings_set(s, pairs[i][0], "1"), QC_EINVAL);
        snprintf(want, sizeof want, "did you mean '%s'?", pairs[i][1]);
        assert_message(want);
        assert_true(qc_setting_known(pairs[i][1]));
    }
    assert_null(qc_setting_renamed("sigma"));
    qc_settings_free(s);
}

/* A model-specific key that the chosen model does not take is refused,
 * naming the key and the model; the rule comes from the type tables. */
static void test_keys_apply(void **state)
{
    (void)state;
    qc_settings *s;
    qc_model *m;
    qc_design_request req;
    struct {
        const char *kv[16];
        size_t n;
        const char *msg;
    } refused[] = {
        {{"model", "poisson", "signal", "2", "alphabet", "upam:2", "bits", "1", "snr-db", "3"},
         10, "'snr-db' does not apply to model 'poisson'"},
        {{"model", "apd-gauss", "alphabet", "upam:2", "bits", "1", "received-dbm", "-30",
          "slot-time", "1e-10", "responsivity", "0.8", "thermal-density", "10", "bandwidth",
          "1e9"},
         16, "'bandwidth' does not apply to model 'apd-gauss'"},
        {{"model", "preamp", "modes", "4", "levels", "0,1", "bits", "1", "osnr-db", "3"}, 10,
         "'osnr-db' does not apply to model 'preamp'"},
        {{"model", "gauss", "sigma", "1", "levels", "0,1", "bits", "1", "wavelength-nm",
          "1550"},
         10, "'wavelength-nm' does not apply to model 'gauss'"},
    };
    for (size_t i = 0; i < sizeof refused / sizeof refused[0]; i++) {
        assert_int_equal(build_from(refused[i].kv, refused[i].n, &m, &req, &s), QC_EINVAL);
        assert_message(refused[i].msg);
        qc_settings_free(s);
    }
    /* every key a type lists is a known setting */
    const qc_model_type *const *types = qc_model_types();
    for (size_t t = 0; types[t]; t++)
        for (size_t i = 0; types[t]->keys && types[t]->keys[i]; i++)
            assert_true(qc_setting_known(types[t]->keys[i]));

    /* apd-gain and apd-k: the model's parameters when given alone */
    const char *direct[] = {"model", "apd-gauss", "signal", "100", "sigma-th", "10",
                            "apd-gain", "7", "apd-k", "0.25", "levels", "0,1", "bits", "1"};
    assert_int_equal(build_from(direct, 14, &m, &req, &s), QC_OK);
    assert_true(qc_model_param(m, qc_model_param_index(qc_model_get_type(m), "apd-gain")) == 7.0);
    assert_true(qc_model_param(m, qc_model_param_index(qc_model_get_type(m), "apd-k")) == 0.25);
    qc_model_free(m);
    qc_settings_free(s);
}

/* Photon counting takes a responsivity as the quantum efficiency at the
 * wavelength: eta = R h c / (q lambda). */
static void test_poisson_responsivity(void **state)
{
    (void)state;
    qc_settings *s;
    qc_model *m;
    qc_design_request req;
    /* scipy.constants: 1 A/W at 1550 nm is eta = 0.7998980544077436 */
    /* GSL's gsl_const_mksa.h holds an older CODATA set than scipy: the
     * constants differ by parts in 1e7 */
    const double eta_1550 = 0.7998980544077436, tol = 1e-6;
    const char *by_r[] = {"model", "poisson", "alphabet", "upam:2", "bits", "1",
                          "received-dbm", "-60", "slot-time", "1e-9", "wavelength-nm",
                          "1550", "responsivity", "1"};
    const char *by_eta[] = {"model", "poisson", "alphabet", "upam:2", "bits", "1",
                            "received-dbm", "-60", "slot-time", "1e-9", "wavelength-nm",
                            "1550", "efficiency", "1"};
    assert_int_equal(build_from(by_r, 14, &m, &req, &s), QC_OK);
    double with_r = qc_model_param(m, 0);
    qc_model_free(m);
    qc_settings_free(s);
    assert_int_equal(build_from(by_eta, 14, &m, &req, &s), QC_OK);
    double with_eta1 = qc_model_param(m, 0);
    qc_model_free(m);
    qc_settings_free(s);
    assert_true(fabs(with_r / with_eta1 - eta_1550) < tol);
}

/* Given thresholds set the number of cells; a contradicting count is
 * refused naming both keys. */
static void test_thresholds_count(void **state)
{
    (void)state;
    qc_settings *s;
    qc_model *m;
    qc_design_request req;
    const char *alone[] = {"model", "gauss", "sigma", "1", "levels", "-1,1", "quantizer",
                           "fixed", "thresholds", "-2,0,2"};
    assert_int_equal(build_from(alone, 10, &m, &req, &s), QC_OK);
    assert_int_equal(req.quantizer.cells, 4);
    assert_int_equal(req.quantizer.nthresholds, 3);
    qc_model_free(m);
    qc_settings_free(s);
    const char *cells[] = {"model", "gauss", "sigma", "1", "levels", "-1,1", "cells", "3",
                           "thresholds", "-2,0,2"};
    assert_int_equal(build_from(cells, 10, &m, &req, &s), QC_EINVAL);
    assert_message("thresholds and cells disagree");
    qc_settings_free(s);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_parse_double),   cmocka_unit_test(test_parse_size),
        cmocka_unit_test(test_parse_list),     cmocka_unit_test(test_edit_distance),
        cmocka_unit_test(test_settings_set),
        cmocka_unit_test(test_settings_build),
        cmocka_unit_test(test_model_cache),
        cmocka_unit_test(test_model_cache_threads),
        cmocka_unit_test(test_decimal_only),
        cmocka_unit_test(test_renamed_keys),
        cmocka_unit_test(test_keys_apply),
        cmocka_unit_test(test_poisson_responsivity),
        cmocka_unit_test(test_thresholds_count),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
