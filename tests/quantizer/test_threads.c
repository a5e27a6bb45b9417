/* test_threads.c — a large channel's rows, Newton derivatives, companding
 * density and merge losses, and the starts of a capacity design and of a
 * level search, are computed in OpenMP threads; the results must be those
 * of one thread to the last bit, whatever the number of threads, and a
 * failing row must give the serial run's message (the first failing
 * row's). A model instance with a state (caches filled as it is used) is
 * never evaluated by two threads at once. Skipped when the library is
 * built without OpenMP. */
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
#include "test_helpers.h"
#include "thread_helpers.h"

#define NLEVELS 300 /* 300 × 300 entries: above the size for threads */
#define FIRST_BAD 150 /* levels from this index on have broken tails */


/* unipolar levels 0, 1, …, NLEVELS − 1 and thresholds between them */
static void levels_and_thresholds(double *levels, double *law, double *t)
{
    for (size_t i = 0; i < NLEVELS; i++) {
        levels[i] = (double)i;
        law[i] = 1.0 / NLEVELS;
        if (i + 1 < NLEVELS)
            t[i] = (double)i + 0.5 + 0.3 * (uniform01() - 0.5);
    }
}

/* The channel of m at the NLEVELS levels and thresholds t is the same,
 * bit for bit, on 1, 2 and 3 threads. */
static void same_channel_any_threads(const qc_model *m, const double *levels,
                                     const double *t)
{
    qc_dmc *ref = NULL;
    for (size_t k = 0; k < sizeof thread_counts / sizeof *thread_counts; k++) {
        set_threads(thread_counts[k]);
        qc_dmc *d;
        assert_int_equal(qc_discretize(m, levels, NLEVELS, t, NLEVELS - 1, &d), QC_OK);
        if (!ref) {
            ref = d;
        } else {
            assert_memory_equal(d->p, ref->p, sizeof *d->p * NLEVELS * NLEVELS);
            qc_dmc_free(d);
        }
    }
    qc_dmc_free(ref);
}

/* The transition matrix of a signal-dependent Gaussian channel. */
static void test_rows_any_threads(void **state)
{
    (void)state;
    need_threads((size_t)NLEVELS * NLEVELS);
    double levels[NLEVELS], law[NLEVELS], t[NLEVELS - 1];
    levels_and_thresholds(levels, law, t);
    const double p[3] = {0.4, 0.05, 0.0};
    qc_model *m;
    assert_int_equal(qc_model_alloc(&qc_model_gauss_sd, p, &m), QC_OK);
    same_channel_any_threads(m, levels, t);
    qc_model_free(m);
}

/* Levels −(m − 1), …, −1, 1, …, m − 1 of m-PAM. */
static void pam_levels(double *levels, size_t m)
{
    for (size_t i = 0; i < m; i++)
        levels[i] = -(double)(m - 1) + 2.0 * (double)i;
}

/* The default request for n levels of model m into `cells` cells. */
static void design_request(qc_design_request *req, const qc_model *m, const double *levels,
                           size_t n, size_t cells)
{
    qc_design_request_default(req);
    req->channel.model = m;
    req->channel.levels = levels;
    req->channel.nlevels = n;
    req->quantizer.cells = cells;
}

/* The whole optimal design of 256-PAM at 8 bits: grid, DP, companding
 * start, Newton steps, threshold moves, tidying and figures. */
static void test_design_any_threads(void **state)
{
    (void)state;
    need_threads(256 * 256);
    enum { M = 256 };
    double levels[M];
    pam_levels(levels, M);
    const double sigma = 4.0;
    qc_model *m;
    assert_int_equal(qc_model_alloc(&qc_model_gauss, &sigma, &m), QC_OK);
    qc_design_result ref = {0};
    for (size_t k = 0; k < sizeof thread_counts / sizeof *thread_counts; k++) {
        set_threads(thread_counts[k]);
        qc_design_request req;
        design_request(&req, m, levels, M, 256);
        qc_design_result res;
        assert_int_equal(qc_design(&req, &res), QC_OK);
        if (k == 0) {
            ref = res;
            continue;
        }
        assert_int_equal(res.nthresholds, ref.nthresholds);
        assert_memory_equal(res.thresholds, ref.thresholds,
                            sizeof *res.thresholds * res.nthresholds);
        assert_memory_equal(&res.rate_bits, &ref.rate_bits, sizeof res.rate_bits);
        assert_memory_equal(&res.unquantized_bits, &ref.unquantized_bits,
                            sizeof res.unquantized_bits);
        qc_design_result_clear(&res);
    }
    qc_design_result_clear(&ref);
    qc_model_free(m);
}

/* Progress reports of a design: they must never go back, and come from
 * the thread that asked for the design. */
typedef struct {
    size_t last, total, reports, backwards, foreign;
} progress_log;

static void log_progress(void *user, size_t done, size_t total)
{
    progress_log *p = user;
#pragma omp critical(test_threads_progress)
    {
#ifdef _OPENMP
        p->foreign += omp_get_thread_num() != 0;
#endif
        p->backwards += done < p->last;
        p->last = done;
        p->total = total;
        p->reports++;
    }
}

/* The capacity design of the optimal strategy alternates from three
 * starts, in threads when it can: the same thresholds, law, bounds and
 * counts whatever the number of threads, and progress reported from the
 * calling thread only, never going back and ending at its total. */
static void test_capacity_design_any_threads(void **state)
{
    (void)state;
    need_threads((size_t)1 << 30);
    enum { M = 16 };
    double levels[M];
    pam_levels(levels, M);
    const double sigma = 1.0;
    qc_model *m;
    assert_int_equal(qc_model_alloc(&qc_model_gauss, &sigma, &m), QC_OK);
    qc_design_result ref = {0};
    for (size_t k = 0; k < sizeof thread_counts / sizeof *thread_counts; k++) {
        set_threads(thread_counts[k]);
        qc_design_request req;
        design_request(&req, m, levels, M, 32);
        req.input.objective = QC_OBJECTIVE_CAPACITY;
        progress_log log = {0};
        req.numerics.progress = log_progress;
        req.numerics.progress_user = &log;
        qc_design_result res;
        assert_int_equal(qc_design(&req, &res), QC_OK);
        assert_int_equal(log.backwards, 0);
        assert_int_equal(log.foreign, 0);
        assert_true(log.reports > 1);
        assert_int_equal(log.last, log.total);
        if (k == 0) {
            ref = res;
            continue;
        }
        assert_int_equal(res.nthresholds, ref.nthresholds);
        assert_memory_equal(res.thresholds, ref.thresholds,
                            sizeof *res.thresholds * res.nthresholds);
        assert_memory_equal(res.input, ref.input, sizeof *res.input * M);
        assert_memory_equal(&res.rate_bits, &ref.rate_bits, sizeof res.rate_bits);
        assert_memory_equal(&res.upper_bound_bits, &ref.upper_bound_bits,
                            sizeof res.upper_bound_bits);
        assert_int_equal(res.iterations, ref.iterations);
        assert_int_equal(res.design_iterations, ref.design_iterations);
        qc_design_result_clear(&res);
    }
    qc_design_result_clear(&ref);
    qc_model_free(m);
}

/* Level optimization runs its first two starts in threads when it can:
 * the same levels, law, rate and count of designs whatever the number of
 * threads, for the MI objective and for the capacity objective (whose
 * designs each form their own per-level costs), and progress reported
 * from the calling thread only. */
static void test_level_search_any_threads(void **state)
{
    (void)state;
    need_threads((size_t)1 << 30);
    const double sigma = 0.4;
    qc_model *m;
    assert_int_equal(qc_model_alloc(&qc_model_gauss, &sigma, &m), QC_OK);
    qc_constraints box;
    qc_constraints_none(&box);
    box.peak = 2.0;
    box.power = 1.5;
    for (int capacity = 0; capacity <= 1; capacity++) {
        qc_design_result ref = {0};
        for (size_t k = 0; k < sizeof thread_counts / sizeof *thread_counts; k++) {
            set_threads(thread_counts[k]);
            const double levels[4] = {-1.2, -0.4, 0.4, 1.2};
            qc_design_request req;
            design_request(&req, m, levels, 4, capacity ? 4 : 8);
            req.input.constraints = &box;
            req.input.optimize_levels = 1;
            req.input.level_starts = 2;
            req.input.objective = capacity ? QC_OBJECTIVE_CAPACITY : QC_OBJECTIVE_MI;
            progress_log log = {0};
            req.numerics.progress = log_progress;
            req.numerics.progress_user = &log;
            qc_design_result res;
            assert_int_equal(qc_design(&req, &res), QC_OK);
            assert_int_equal(log.backwards, 0);
            assert_int_equal(log.foreign, 0);
            assert_true(res.level_evaluations > 2);
            if (k == 0) {
                ref = res;
                continue;
            }
            assert_int_equal(res.level_evaluations, ref.level_evaluations);
            assert_memory_equal(res.levels, ref.levels, sizeof *res.levels * 4);
            assert_memory_equal(res.input, ref.input, sizeof *res.input * 4);
            assert_memory_equal(res.thresholds, ref.thresholds,
                                sizeof *res.thresholds * res.nthresholds);
            assert_memory_equal(&res.rate_bits, &ref.rate_bits, sizeof res.rate_bits);
            qc_design_result_clear(&res);
        }
        qc_design_result_clear(&ref);
    }
    qc_model_free(m);
}

/* Starts 1 and 2 of four fail, each with its own message. */
static qc_status failing_start(size_t i, void *ctx)
{
    int *ran = ctx;
#pragma omp atomic
    ran[i]++;
    if (i == 1)
        return qc_fail(QC_ENUMERIC, "start one broke");
    if (i == 2)
        return qc_fail(QC_EINVAL, "start two broke");
    return QC_OK;
}

/* Independent starts run in threads report the first failing start in
 * their order, with its message, as one after another would; every start
 * runs once. */
static void test_starts_first_failure(void **state)
{
    (void)state;
    need_threads((size_t)1 << 30);
    for (size_t k = 0; k < sizeof thread_counts / sizeof *thread_counts; k++) {
        set_threads(thread_counts[k]);
        int ran[4] = {0};
        qc_clear_error();
        assert_int_equal(qc_parallel_starts(4, 1, failing_start, ran), QC_ENUMERIC);
        assert_string_equal(qc_last_error(), "start one broke");
        for (size_t i = 0; i < 4; i++)
            assert_int_equal(ran[i], 1);
    }
}

/* A model whose tails are not numbers from level FIRST_BAD on. */
static qc_model_type broken;

static void broken_tails(const qc_model *m, double x, double t, double *below,
                         double *above)
{
    qc_model_gauss.tails(m, x, t, below, above);
    if (x >= FIRST_BAD)
        *below = *above = NAN;
}

static void test_failing_row_message(void **state)
{
    (void)state;
    need_threads((size_t)NLEVELS * NLEVELS);
    broken = qc_model_gauss;
    broken.name = "broken";
    broken.tails = broken_tails;
    double levels[NLEVELS], law[NLEVELS], t[NLEVELS - 1];
    levels_and_thresholds(levels, law, t);
    const double sigma = 0.5;
    qc_model *m;
    assert_int_equal(qc_model_alloc(&broken, &sigma, &m), QC_OK);
    char first[1024] = "";
    for (size_t k = 0; k < sizeof thread_counts / sizeof *thread_counts; k++) {
        set_threads(thread_counts[k]);
        qc_dmc *d = NULL;
        assert_int_equal(qc_discretize(m, levels, NLEVELS, t, NLEVELS - 1, &d),
                         QC_ENUMERIC);
        assert_null(d);
        if (k == 0) {
            snprintf(first, sizeof first, "%s", qc_last_error());
            assert_non_null(strstr(first, "level 150,")); /* the first bad row */
        } else {
            assert_string_equal(qc_last_error(), first);
        }
    }
    qc_model_free(m);
}

/* Which instances several threads may evaluate at once: those without a
 * state. The APD model and a law with added converter noise fill caches
 * as they are used; their channels are then computed in one thread, and
 * still give the same bits. */
static void test_stateful_models_serial(void **state)
{
    (void)state;
    need_threads((size_t)NLEVELS * NLEVELS);
    const double sigma = 0.5;
    qc_model *g, *noisy;
    assert_int_equal(qc_model_alloc(&qc_model_gauss, &sigma, &g), QC_OK);
    assert_true(qc_model_thread_safe(g));
    assert_int_equal(qc_model_add_noise(g, 0.3, &noisy), QC_OK);
    assert_false(qc_model_thread_safe(noisy));
    double levels[NLEVELS], law[NLEVELS], t[NLEVELS - 1];
    levels_and_thresholds(levels, law, t);
    same_channel_any_threads(noisy, levels, t);
    qc_model_free(noisy);
    qc_model_free(g);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_rows_any_threads),
        cmocka_unit_test(test_design_any_threads),
        cmocka_unit_test(test_capacity_design_any_threads),
        cmocka_unit_test(test_level_search_any_threads),
        cmocka_unit_test(test_starts_first_failure),
        cmocka_unit_test(test_failing_row_message),
        cmocka_unit_test(test_stateful_models_serial),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
