/* test_schedule.c — the order in which a sweep's threads take its points
 * (src/study/sweep_schedule.c): every point once, the points of one model
 * setting kept together, threads on different settings first, and a
 * thread that would have to build another instance of a model for a few
 * short points left to another thread staying out of it. The threads are
 * played here by calls in turn, so every order is reproducible. */
#include <stdarg.h>
#include <stddef.h>
#include <setjmp.h>
#include <cmocka.h>

#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "quantcap.h"

static void pause_ms(long ms)
{
    struct timespec ts = {ms / 1000, (ms % 1000) * 1000000L};
    nanosleep(&ts, NULL);
}

/* One thread: the settings in the order they first appear, grid order
 * within each; points not to do are skipped. */
static void test_one_thread_order(void **state)
{
    (void)state;
    /* grid points 0..9; settings interleaved as a bits-outer grid gives */
    const size_t setting[10] = {7, 3, 7, 3, 7, 3, SIZE_MAX, 9, 3, SIZE_MAX};
    const size_t todo[9] = {0, 1, 2, 3, 5, 6, 7, 8, 9}; /* point 4 was resumed */
    const size_t want[9] = {0, 2, 1, 3, 5, 8, 6, 9, 7};
    qc_sweep_schedule *s;
    assert_int_equal(qc_sweep_schedule_alloc(todo, 9, setting, 1, 1, &s), QC_OK);
    for (size_t k = 0; k < 9; k++)
        assert_int_equal(qc_sweep_schedule_next(s, 0), want[k]);
    assert_int_equal(qc_sweep_schedule_next(s, 0), SIZE_MAX);
    assert_int_equal(qc_sweep_schedule_next(s, 0), SIZE_MAX);
    qc_sweep_schedule_free(s);
    /* nothing to do */
    assert_int_equal(qc_sweep_schedule_alloc(todo, 0, setting, 2, 1, &s), QC_OK);
    assert_int_equal(qc_sweep_schedule_next(s, 1), SIZE_MAX);
    qc_sweep_schedule_free(s);
}

/* Three threads in turn over 60 points of 7 settings: each point exactly
 * once, and the first point of each thread of a setting of its own. */
static void test_every_point_once(void **state)
{
    (void)state;
    enum { N = 60, W = 3 };
    size_t setting[N], todo[N], seen[N] = {0}, first[W];
    for (size_t i = 0; i < N; i++) {
        setting[i] = (i * 5 + i / 7) % 7;
        todo[i] = i;
    }
    qc_sweep_schedule *s;
    assert_int_equal(qc_sweep_schedule_alloc(todo, N, setting, W, 1, &s), QC_OK);
    size_t got = 0;
    unsigned running = W;
    int done[W] = {0};
    for (unsigned w = 0; running > 0; w = (w + 1) % W) {
        if (done[w])
            continue;
        size_t p = qc_sweep_schedule_next(s, w);
        if (p == SIZE_MAX) {
            done[w] = 1;
            running--;
            continue;
        }
        assert_true(p < N);
        seen[p]++;
        if (got < W)
            first[got] = setting[p];
        got++;
    }
    assert_int_equal(got, N);
    for (size_t i = 0; i < N; i++)
        assert_int_equal(seen[i], 1);
    assert_true(first[0] != first[1] && first[0] != first[2] && first[1] != first[2]);
    qc_sweep_schedule_free(s);
}

/* Two threads. Thread 1's setting has one point, its build: done, it
 * joins thread 0's setting (no point without a build timed yet, so no
 * estimate). Then with two points of setting 1: when thread 1 is done,
 * thread 0 has been building its model for 700 ms with 7 points to
 * follow, and points take about 1 ms: a second build would cost more
 * than sharing them saves (thread 1's own build took only 1 ms: the build
 * still running counts), so thread 1 stops and thread 0 takes them all.
 * The outcome holds for points of up to 100 ms, so late wake-ups on a
 * loaded machine do not change it. Without the timing rule it joins. */
static void test_join_rule(void **state)
{
    (void)state;
    const size_t setting[10] = {0, 0, 0, 0, 0, 0, 0, 0, 1, 1};
    const size_t todo[10] = {0, 1, 2, 3, 4, 5, 6, 7, 8, 9};
    qc_sweep_schedule *s;
    assert_int_equal(qc_sweep_schedule_alloc(todo, 9, setting, 2, 1, &s), QC_OK);
    assert_int_equal(qc_sweep_schedule_next(s, 0), 0); /* builds setting 0 */
    assert_int_equal(qc_sweep_schedule_next(s, 1), 8); /* builds setting 1 */
    pause_ms(20);
    assert_int_equal(qc_sweep_schedule_next(s, 1), 1); /* joins */
    qc_sweep_schedule_free(s);

    assert_int_equal(qc_sweep_schedule_alloc(todo, 10, setting, 2, 1, &s), QC_OK);
    assert_int_equal(qc_sweep_schedule_next(s, 0), 0); /* builds setting 0 */
    pause_ms(700);
    assert_int_equal(qc_sweep_schedule_next(s, 1), 8); /* builds setting 1 */
    pause_ms(1);
    assert_int_equal(qc_sweep_schedule_next(s, 1), 9); /* a build of 1 ms */
    pause_ms(1);
    /* 7 × 1 ms < 700 ms: thread 0's build so far, not thread 1's */
    assert_int_equal(qc_sweep_schedule_next(s, 1), SIZE_MAX);
    for (size_t p = 1; p < 8; p++)
        assert_int_equal(qc_sweep_schedule_next(s, 0), p);
    assert_int_equal(qc_sweep_schedule_next(s, 0), SIZE_MAX);
    qc_sweep_schedule_free(s);

    /* untimed (workers that ask ahead, as other processes do): it joins */
    assert_int_equal(qc_sweep_schedule_alloc(todo, 10, setting, 2, 0, &s), QC_OK);
    assert_int_equal(qc_sweep_schedule_next(s, 0), 0);
    pause_ms(280);
    assert_int_equal(qc_sweep_schedule_next(s, 1), 8);
    pause_ms(1);
    assert_int_equal(qc_sweep_schedule_next(s, 1), 9);
    pause_ms(1);
    assert_int_equal(qc_sweep_schedule_next(s, 1), 1);
    qc_sweep_schedule_free(s);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_one_thread_order),
        cmocka_unit_test(test_every_point_once),
        cmocka_unit_test(test_join_rule),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
