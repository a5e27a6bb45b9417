/* kernels.c — the two matrix sweeps of a Blahut–Arimoto iteration
 * (Blahut, IEEE Trans. IT 18(4), 1972; Arimoto, IEEE Trans. IT 18(1),
 * 1972): the row sums Σ_y P(y|x)·v(y) (scores against log q) and the
 * weighted row sum Σ_x c_x·P(·|x) (an output law).
 *
 * Both sweep the matrix in column blocks of COL_BLOCK cells, so the
 * block of v or of the output law stays in the first-level cache while
 * the rows' pieces stream past, and take rows four at a time, so each
 * element of v or of the output law is loaded (and stored) once per
 * four rows. This is the loop blocking of M. S. Lam, E. E. Rothberg and
 * M. E. Wolf, "The cache performance and optimizations of blocked
 * algorithms", ASPLOS 1991. Only the span [lo, hi) of a row's nonzero
 * entries is visited. Lanes of four fixed partial sums use GCC's
 * generic vector types; the order of every addition is fixed by the
 * code, not by the instruction set, so the results are the same on
 * every x86-64 processor. The kernels (kernels_lanes.h) are compiled
 * with two lanes per register for any processor and, by GCC on x86-64,
 * again with four for processors with AVX2, chosen when a sweep starts. */
#include "capacity/engine.h"

#include <string.h>

/* Column blocks hold 64 to 512 doubles (0.5 to 4 KiB) of the output
 * law and of its logarithm. */
#define COL_BLOCK 512
#define MIN_BLOCK 64

static inline size_t row_at(const size_t *rows, size_t i) { return rows ? rows[i] : i; }

/* Two lanes per register: SSE2, on every x86-64 processor. */
typedef double v2d __attribute__((vector_size(16)));
#define LANE_VEC v2d
#define LANE_FN(name) name##_sse2
#include "capacity/kernels_lanes.h"
#undef LANE_VEC
#undef LANE_FN

#if defined(__x86_64__) && defined(__GNUC__) && !defined(__clang__)
#define QC_SWEEP_AVX2 1
/* Four lanes per register, for processors with AVX2. */
#pragma GCC push_options
#pragma GCC target("avx2")
typedef double v4d __attribute__((vector_size(32)));
#define LANE_VEC v4d
#define LANE_FN(name) name##_avx2
#include "capacity/kernels_lanes.h"
#undef LANE_VEC
#undef LANE_FN
#pragma GCC pop_options
#endif

/* One block [b0, b1) of a sweep over rows (NULL: all nx rows): with
 * coef, out[y] += Σ coef[x]·P(y|x); without, out[x] += Σ_y P(y|x)·v(y).
 * Both copies give the same bits. */
static void block_sweep(const qc_ba_workspace *ws, const size_t *rows, size_t nrows,
                        const double *coef, const double *v, double *out,
                        size_t b0, size_t b1)
{
#ifdef QC_SWEEP_AVX2
    if (__builtin_cpu_supports("avx2")) {
        block_sweep_avx2(ws, rows, nrows, coef, v, out, b0, b1);
        return;
    }
#endif
    block_sweep_sse2(ws, rows, nrows, coef, v, out, b0, b1);
}

/* The matrix part a block of L2_BUDGET bytes of rows keeps in the
 * second-level cache between the output-law and the score sweeps of one
 * block (256 KiB: half of the smallest second-level cache of current
 * x86-64 cores (common practice)). */
#define L2_BUDGET (256u * 1024u)

void ba_sweep_law(qc_ba_workspace *ws, const size_t *rows, size_t nrows,
                  const double *coef, double log_floor)
{
    const size_t nx = ws->nx, ny = ws->ny;
    /* block width: nx rows × width doubles within L2_BUDGET, a multiple
     * of four, at least MIN_BLOCK and at most COL_BLOCK */
    size_t width = L2_BUDGET / (sizeof(double) * nx) / 4 * 4;
    if (width < MIN_BLOCK)
        width = MIN_BLOCK;
    if (width > COL_BLOCK)
        width = COL_BLOCK;
    memset(ws->q, 0, ny * sizeof *ws->q);
    memset(ws->dsum, 0, nx * sizeof *ws->dsum);
    for (size_t b0 = 0; b0 < ny; b0 += width) {
        const size_t b1 = ny - b0 > width ? b0 + width : ny;
        block_sweep(ws, rows, nrows, coef, NULL, ws->q, b0, b1);
        qc_log_floored(ws->q + b0, ws->logq + b0, b1 - b0, log_floor);
        block_sweep(ws, NULL, nx, NULL, ws->logq, ws->dsum, b0, b1);
    }
}

void ba_row_sums(const qc_ba_workspace *ws, const double *v, double *out)
{
    memset(out, 0, ws->nx * sizeof *out);
    for (size_t b0 = 0; b0 < ws->ny; b0 += COL_BLOCK) {
        const size_t b1 = ws->ny - b0 > COL_BLOCK ? b0 + COL_BLOCK : ws->ny;
        block_sweep(ws, NULL, ws->nx, NULL, v, out, b0, b1);
    }
}
