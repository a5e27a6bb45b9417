/* test_kernels.c — the matrix sweeps of the Blahut–Arimoto engine
 * (src/capacity/kernels.c) on channels whose rows have ragged spans of
 * nonzero entries: the copy for every x86-64 processor (two lanes per
 * register) and the AVX2 copy (four) give the same bits, and both agree
 * with a plain long-double sum (the AVX2 copy is GCC's, on x86-64; the
 * comparison is skipped, and says so, where it is missing). The source
 * file is compiled into this
 * test so that both copies, which are static, can be called directly;
 * its two public functions then come from here, not from the library. */
#include <setjmp.h>
#include <stdarg.h>
#include <stddef.h>
#include <stdint.h>
#include <cmocka.h>

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "../../src/capacity/kernels.c"

#define TEST_RNG_SEED 0x6b3e1a9d27c4f011ULL /* random spans and entries */
#include "test_helpers.h"

/* Sums of at most 1031 terms of one sign: each is within n·u of the
 * exact sum, u = 2^-53 (Higham, Accuracy and Stability of Numerical
 * Algorithms, 2nd ed., 2002, §4.2). */
#define TOL_REL 2e-13

typedef void sweep_fn(const qc_ba_workspace *, const size_t *, size_t, const double *,
                      const double *, double *, size_t, size_t);

/* A workspace over an nx × ny matrix whose row x is nonzero on a random
 * span [lo, hi) (at least one entry), entries in (0, 1]. */
static qc_ba_workspace *ragged(size_t nx, size_t ny, double **p_out)
{
    double *p = calloc(nx * ny, sizeof *p);
    assert_non_null(p);
    qc_ba_workspace *ws = NULL;
    assert_int_equal(qc_ba_workspace_alloc(nx, ny, &ws), QC_OK);
    ws->nx = nx;
    ws->ny = ny;
    ws->p = p;
    for (size_t x = 0; x < nx; x++) {
        size_t lo = uniform_index(ny), hi = uniform_between(lo + 1, ny);
        /* every fourth row spans all columns, as rows of a dense channel do */
        if (x % 4 == 0) {
            lo = 0;
            hi = ny;
        }
        for (size_t y = lo; y < hi; y++)
            p[x * ny + y] = uniform01();
        ws->lo[x] = lo;
        ws->hi[x] = hi;
    }
    *p_out = p;
    return ws;
}

/* One block [b0, b1) by the sweep f, both kinds: the weighted row sum
 * over the rows listed (out_law, ny) and the row sums against v
 * (out_dot, nx). */
static void run_block(sweep_fn *f, const qc_ba_workspace *ws, const size_t *rows,
                      size_t nrows, const double *coef, const double *v, double *out_law,
                      double *out_dot, size_t b0, size_t b1)
{
    memset(out_law, 0, ws->ny * sizeof *out_law);
    memset(out_dot, 0, ws->nx * sizeof *out_dot);
    f(ws, rows, nrows, coef, NULL, out_law, b0, b1);
    f(ws, NULL, ws->nx, NULL, v, out_dot, b0, b1);
}

/* Both sums of the block in long double, term by term. */
static void reference(const qc_ba_workspace *ws, const size_t *rows, size_t nrows,
                      const double *coef, const double *v, long double *law,
                      long double *dot, size_t b0, size_t b1)
{
    for (size_t y = 0; y < ws->ny; y++)
        law[y] = 0.0L;
    for (size_t g = 0; g < nrows; g++)
        for (size_t y = b0; y < b1; y++)
            law[y] += (long double)coef[rows[g]] * ws->p[rows[g] * ws->ny + y];
    for (size_t x = 0; x < ws->nx; x++) {
        dot[x] = 0.0L;
        for (size_t y = b0; y < b1; y++)
            dot[x] += (long double)ws->p[x * ws->ny + y] * v[y];
    }
}

static void expect_close(const double *got, const long double *want, size_t n,
                         const char *what, size_t nx, size_t ny)
{
    for (size_t i = 0; i < n; i++)
        if (!(fabsl((long double)got[i] - want[i]) <= TOL_REL * fabsl(want[i])))
            fail_msg("%s [%zu] of %zu x %zu: %.17g, reference %.17Lg", what, i, nx, ny,
                     got[i], want[i]);
}

/* Whether this build and processor have the AVX2 copy. */
static int have_avx2(void)
{
#ifdef QC_SWEEP_AVX2
    return __builtin_cpu_supports("avx2");
#else
    return 0;
#endif
}

/* The copy for any processor against the long-double sums and, where the
 * AVX2 copy runs (check_avx2), that copy against it bit for bit. */
static void check_copies(int check_avx2)
{
    static const size_t shapes[][2] = {{1, 1},  {3, 7},    {4, 4},   {5, 9},
                                       {8, 17}, {13, 517}, {64, 96}, {37, 1031}};
    for (size_t s = 0; s < sizeof shapes / sizeof shapes[0]; s++) {
        const size_t nx = shapes[s][0], ny = shapes[s][1];
        double *p;
        qc_ba_workspace *ws = ragged(nx, ny, &p);
        double *coef = malloc(nx * sizeof *coef), *v = malloc(ny * sizeof *v);
        double *law2 = malloc(ny * sizeof *law2), *dot2 = malloc(nx * sizeof *dot2);
        double *law4 = malloc(ny * sizeof *law4), *dot4 = malloc(nx * sizeof *dot4);
        long double *lref = malloc(ny * sizeof *lref), *dref = malloc(nx * sizeof *dref);
        size_t *rows = malloc(nx * sizeof *rows);
        assert_true(coef && v && law2 && dot2 && law4 && dot4 && lref && dref && rows);
        size_t nrows = 0;
        for (size_t x = 0; x < nx; x++) {
            coef[x] = uniform01();
            if (uniform01() < 0.8) /* a law sweep visits the rows with mass */
                rows[nrows++] = x;
        }
        for (size_t y = 0; y < ny; y++)
            v[y] = -40.0 * uniform01(); /* as log q */
        /* the whole matrix as one block, and a block inside it */
        const size_t blocks[2][2] = {{0, ny}, {ny / 3, ny - ny / 5}};
        for (int b = 0; b < 2; b++) {
            const size_t b0 = blocks[b][0], b1 = blocks[b][1];
            if (b0 >= b1)
                continue;
            run_block(block_sweep_sse2, ws, rows, nrows, coef, v, law2, dot2, b0, b1);
            reference(ws, rows, nrows, coef, v, lref, dref, b0, b1);
            expect_close(law2, lref, ny, "weighted row sum", nx, ny);
            expect_close(dot2, dref, nx, "row sum", nx, ny);
#ifdef QC_SWEEP_AVX2
            if (check_avx2) {
                run_block(block_sweep_avx2, ws, rows, nrows, coef, v, law4, dot4, b0, b1);
                if (memcmp(law2, law4, ny * sizeof *law2) != 0 ||
                    memcmp(dot2, dot4, nx * sizeof *dot2) != 0)
                    fail_msg("%zu x %zu, block [%zu, %zu): the AVX2 copy's bits differ",
                             nx, ny, b0, b1);
            }
#else
            (void)check_avx2;
#endif
        }
        ws->p = NULL;
        qc_ba_workspace_free(ws);
        free(p);
        free(coef);
        free(v);
        free(law2);
        free(dot2);
        free(law4);
        free(dot4);
        free(lref);
        free(dref);
        free(rows);
    }
}

static void test_baseline_copy(void **state)
{
    (void)state;
    check_copies(0);
}

static void test_avx2_copy_same_bits(void **state)
{
    (void)state;
    if (!have_avx2()) {
        print_message("no AVX2 copy in this build or on this processor: not compared\n");
        skip();
    }
    check_copies(1);
}

int main(void)
{
    const struct CMUnitTest tests[] = {
        cmocka_unit_test(test_baseline_copy),
        cmocka_unit_test(test_avx2_copy_same_bits),
    };
    return cmocka_run_group_tests(tests, NULL, NULL);
}
