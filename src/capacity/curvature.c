/* curvature.c — the curvature of the mutual information in the input
 * law, M(x, z) = Σ_y P(y|x)·P(y|z)/q(y) (the negated Hessian of I(r) in
 * r, over the renormalized rows), which the active-set Newton steps of
 * cost_newton.c form for every pair of their set S at every step: one
 * pair at a time, and the whole set four entries of a row at a time.
 *
 * The division by q(y) in each term is what costs; the set's rows are
 * laid out by output (the transpose of the set's rows: J. J. Dongarra,
 * J. Du Croz, S. Hammarling and I. S. Duff, "A set of level 3 basic
 * linear algebra subprograms", ACM TOMS 16(1), 1990, on blocking a
 * product so that one operand streams), so that four pairs share one
 * pass over the outputs in two SSE2 registers of GCC's generic vector
 * type. Each lane adds its own pair's terms in increasing order of y, as
 * the one-pair loop does, so both give the same bits. */
#include "capacity/engine.h"

#include <stdlib.h>
#include <string.h>

double ba_curvature(const qc_ba_workspace *ws, size_t x, size_t z, int *bad)
{
    const size_t ny = ws->ny;
    size_t lo = ws->lo[x] > ws->lo[z] ? ws->lo[x] : ws->lo[z];
    size_t hi = ws->hi[x] < ws->hi[z] ? ws->hi[x] : ws->hi[z];
    const double *px = ws->p + x * ny, *pz = ws->p + z * ny;
    double sum = 0.0;
    for (size_t y = lo; y < hi; y++) {
        double v = px[y] * pz[y];
        if (v == 0.0)
            continue;
        if (!(ws->q[y] > 0.0)) {
            *bad = 1;
            return 0.0;
        }
        sum += v / ws->q[y];
    }
    return sum * ws->inv_sum[x] * ws->inv_sum[z];
}

/* Two lanes: one SSE2 register on every x86-64 processor (as in
 * kernels.c). */
typedef double v2d __attribute__((vector_size(16)));

static inline v2d load2(const double *p)
{
    v2d v;
    memcpy(&v, p, sizeof v);
    return v;
}

/* Entries (i, j .. j + 3) of the lower triangle, j ≤ i, from the rows of
 * S by output `cols` (kp per output, from output y0). Where a lane's
 * pair does not overlap, one factor is an exact 0 and so is its term,
 * since every output spanned has q > 0. */
static void four_entries(const qc_ba_workspace *ws, const size_t *set, size_t k,
                         const double *cols, size_t kp, size_t y0, size_t i, size_t j,
                         gsl_matrix *a)
{
    const size_t x = set[i], ny = ws->ny;
    const double *px = ws->p + x * ny;
    size_t lo = ny, hi = 0; /* the four pairs' overlaps, joined */
    for (size_t l = j; l < j + 4 && l < k; l++) {
        lo = ws->lo[set[l]] < lo ? ws->lo[set[l]] : lo;
        hi = ws->hi[set[l]] > hi ? ws->hi[set[l]] : hi;
    }
    lo = ws->lo[x] > lo ? ws->lo[x] : lo;
    hi = ws->hi[x] < hi ? ws->hi[x] : hi;
    v2d s0 = {0.0, 0.0}, s1 = {0.0, 0.0};
    for (size_t y = lo; y < hi; y++) {
        const double *c = cols + (y - y0) * kp + j;
        v2d v = {px[y], px[y]}, qy = {ws->q[y], ws->q[y]};
        s0 += v * load2(c) / qy;
        s1 += v * load2(c + 2) / qy;
    }
    double inv[4];
    for (size_t l = 0; l < 4; l++)
        inv[l] = j + l < k ? ws->inv_sum[set[j + l]] : 0.0;
    v2d ix = {ws->inv_sum[x], ws->inv_sum[x]};
    s0 = s0 * ix * load2(inv);
    s1 = s1 * ix * load2(inv + 2);
    const double out[4] = {s0[0], s0[1], s1[0], s1[1]};
    for (size_t l = 0; l < 4 && j + l <= i; l++)
        gsl_matrix_set(a, i, j + l, out[l]);
}

void ba_curvature_matrix(const qc_ba_workspace *ws, const size_t *set, size_t k,
                         double **cols, size_t *cols_len, gsl_matrix *a, int *bad)
{
    const size_t ny = ws->ny, kp = (k + 3) & ~(size_t)3;
    size_t y0 = ny, y1 = 0; /* the outputs S spans */
    for (size_t i = 0; i < k; i++) {
        y0 = ws->lo[set[i]] < y0 ? ws->lo[set[i]] : y0;
        y1 = ws->hi[set[i]] > y1 ? ws->hi[set[i]] : y1;
    }
    int fast = y1 > y0;
    for (size_t y = y0; y < y1 && fast; y++)
        fast = ws->q[y] > 0.0;
    if (fast && *cols_len < kp * (y1 - y0)) {
        free(*cols);
        *cols_len = kp * (y1 - y0);
        if (!(*cols = qc_malloc_array(*cols_len, sizeof **cols)))
            *cols_len = 0;
    }
    if (!fast || !*cols) { /* an output without mass, or no memory */
        for (size_t i = 0; i < k; i++)
            for (size_t j = 0; j <= i; j++)
                gsl_matrix_set(a, i, j, ba_curvature(ws, set[i], set[j], bad));
        return;
    }
    /* (*cols)[(y − y0)·kp + j] = P(y|x_j), 0 in the padding */
    for (size_t y = y0; y < y1; y++) {
        double *c = *cols + (y - y0) * kp;
        for (size_t j = 0; j < kp; j++)
            c[j] = j < k ? ws->p[set[j] * ny + y] : 0.0;
    }
    for (size_t i = 0; i < k; i++)
        for (size_t j = 0; j <= i; j += 4)
            four_entries(ws, set, k, *cols, kp, y0, i, j, a);
}
