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
 * every x86-64 processor. */
#include "capacity/engine.h"

#include <string.h>

/* Column blocks hold 64 to 512 doubles (0.5 to 4 KiB) of the output
 * law and of its logarithm. */
#define COL_BLOCK 512
#define MIN_BLOCK 64

/* Two lanes: one SSE2 register on every x86-64 processor. Each
 * accumulator below is a pair of them (four fixed lanes). */
typedef double v2d __attribute__((vector_size(16)));

static inline v2d load2(const double *p)
{
    v2d v;
    memcpy(&v, p, sizeof v);
    return v;
}

static inline void store2(double *p, v2d v) { memcpy(p, &v, sizeof v); }

static inline double hsum(v2d lo, v2d hi) { return (lo[0] + lo[1]) + (hi[0] + hi[1]); }

/* s[k] += Σ_{j<n} r[k][j]·v[j] for the four rows r[0..3] */
static void dot4(const double *restrict r0, const double *restrict r1,
                 const double *restrict r2, const double *restrict r3,
                 const double *restrict v, size_t n, double s[4])
{
    v2d a0 = {0}, a1 = {0}, a2 = {0}, a3 = {0};
    v2d b0 = {0}, b1 = {0}, b2 = {0}, b3 = {0};
    size_t j = 0;
    for (; j + 4 <= n; j += 4) {
        v2d w = load2(v + j), u = load2(v + j + 2);
        a0 += load2(r0 + j) * w;
        b0 += load2(r0 + j + 2) * u;
        a1 += load2(r1 + j) * w;
        b1 += load2(r1 + j + 2) * u;
        a2 += load2(r2 + j) * w;
        b2 += load2(r2 + j + 2) * u;
        a3 += load2(r3 + j) * w;
        b3 += load2(r3 + j + 2) * u;
    }
    double t0 = 0.0, t1 = 0.0, t2 = 0.0, t3 = 0.0;
    for (; j < n; j++) {
        t0 += r0[j] * v[j];
        t1 += r1[j] * v[j];
        t2 += r2[j] * v[j];
        t3 += r3[j] * v[j];
    }
    s[0] += hsum(a0, b0) + t0;
    s[1] += hsum(a1, b1) + t1;
    s[2] += hsum(a2, b2) + t2;
    s[3] += hsum(a3, b3) + t3;
}

/* Σ_{j<n} r[j]·v[j] */
static double dot1(const double *restrict r, const double *restrict v, size_t n)
{
    v2d a = {0}, b = {0};
    size_t j = 0;
    for (; j + 4 <= n; j += 4) {
        a += load2(r + j) * load2(v + j);
        b += load2(r + j + 2) * load2(v + j + 2);
    }
    double t = 0.0;
    for (; j < n; j++)
        t += r[j] * v[j];
    return hsum(a, b) + t;
}

/* y[j] += (c0·r0[j] + c1·r1[j]) + (c2·r2[j] + c3·r3[j]) */
static void axpy4(const double c[4], const double *restrict r0,
                  const double *restrict r1, const double *restrict r2,
                  const double *restrict r3, double *restrict y, size_t n)
{
    const v2d k0 = {c[0], c[0]}, k1 = {c[1], c[1]};
    const v2d k2 = {c[2], c[2]}, k3 = {c[3], c[3]};
    size_t j = 0;
    for (; j + 2 <= n; j += 2)
        store2(y + j, load2(y + j) + ((k0 * load2(r0 + j) + k1 * load2(r1 + j)) +
                                      (k2 * load2(r2 + j) + k3 * load2(r3 + j))));
    for (; j < n; j++)
        y[j] += (c[0] * r0[j] + c[1] * r1[j]) + (c[2] * r2[j] + c[3] * r3[j]);
}

/* y[j] += c·r[j] */
static void axpy1(double c, const double *restrict r, double *restrict y, size_t n)
{
    const v2d k = {c, c};
    size_t j = 0;
    for (; j + 2 <= n; j += 2)
        store2(y + j, load2(y + j) + k * load2(r + j));
    for (; j < n; j++)
        y[j] += c * r[j];
}

/* One row's piece [a, b) of the current block, row by row. */
static void piece(const qc_ba_workspace *ws, size_t x, size_t a, size_t b,
                  const double *coef, const double *v, double *out)
{
    if (a >= b)
        return;
    const double *row = ws->p + x * ws->ny;
    if (coef)
        axpy1(coef[x], row + a, out + a, b - a);
    else
        out[x] += dot1(row + a, v + a, b - a);
}

/* The matrix part a block of L2_BUDGET bytes of rows keeps in the
 * second-level cache between the output-law and the score sweeps of one
 * block (256 KiB: half of the smallest second-level cache of current
 * x86-64 cores (common practice)). */
#define L2_BUDGET (256u * 1024u)

static inline size_t row_at(const size_t *rows, size_t i) { return rows ? rows[i] : i; }

/* One block [b0, b1) of a sweep over rows (NULL: all nx rows): with
 * coef, out[y] += Σ coef[x]·P(y|x); without, out[x] += Σ_y P(y|x)·v(y). */
static void block_sweep(const qc_ba_workspace *ws, const size_t *rows, size_t nrows,
                        const double *coef, const double *v, double *out,
                        size_t b0, size_t b1)
{
    const size_t ny = ws->ny;
    size_t g = 0;
    for (; g + 4 <= nrows; g += 4) {
        size_t lo[4], hi[4], x[4], clo = b0, chi = b1;
        for (int k = 0; k < 4; k++) {
            x[k] = row_at(rows, g + k);
            lo[k] = ws->lo[x[k]] > b0 ? ws->lo[x[k]] : b0;
            hi[k] = ws->hi[x[k]] < b1 ? ws->hi[x[k]] : b1;
            if (lo[k] > clo)
                clo = lo[k];
            if (hi[k] < chi)
                chi = hi[k];
        }
        if (clo >= chi) {
            for (int k = 0; k < 4; k++)
                piece(ws, x[k], lo[k], hi[k], coef, v, out);
            continue;
        }
        const double *r[4];
        for (int k = 0; k < 4; k++) {
            r[k] = ws->p + x[k] * ny + clo;
            piece(ws, x[k], lo[k], clo, coef, v, out);
            piece(ws, x[k], chi, hi[k], coef, v, out);
        }
        if (coef) {
            double c[4] = {coef[x[0]], coef[x[1]], coef[x[2]], coef[x[3]]};
            axpy4(c, r[0], r[1], r[2], r[3], out + clo, chi - clo);
        } else {
            double s[4] = {0.0, 0.0, 0.0, 0.0};
            dot4(r[0], r[1], r[2], r[3], v + clo, chi - clo, s);
            for (int k = 0; k < 4; k++)
                out[x[k]] += s[k];
        }
    }
    for (; g < nrows; g++) {
        size_t xg = row_at(rows, g);
        size_t a = ws->lo[xg] > b0 ? ws->lo[xg] : b0;
        size_t b = ws->hi[xg] < b1 ? ws->hi[xg] : b1;
        piece(ws, xg, a, b, coef, v, out);
    }
}

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
