/* thread_helpers.h — what the tests of OpenMP threads share: the thread
 * counts compared, and setting them with a check that the threaded path
 * is (or is not) taken (qc_parallel_worth, src/core/parallel.c). Include
 * after cmocka.h and a header that declares qc_parallel_worth. */
#ifndef QC_TEST_THREAD_HELPERS_H
#define QC_TEST_THREAD_HELPERS_H

#ifdef _OPENMP
#include <omp.h>
#endif

static const int thread_counts[] = {1, 2, 3};

/* Two threads, and work of `entries` entries takes the threaded path;
 * the test is skipped without OpenMP. */
static inline void need_threads(size_t entries)
{
#ifdef _OPENMP
    omp_set_num_threads(2);
    assert_true(qc_parallel_worth(entries)); /* the threaded path is taken */
#else
    (void)entries;
    skip();
#endif
}

/* n threads; large work is threaded exactly when n > 1. */
static inline void set_threads(int n)
{
#ifdef _OPENMP
    omp_set_num_threads(n);
    assert_int_equal(qc_parallel_worth((size_t)1 << 30), n > 1);
#else
    (void)n;
#endif
}

#endif
