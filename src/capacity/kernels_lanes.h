/* kernels_lanes.h — the body of the Blahut–Arimoto matrix sweeps
 * (kernels.c), written once for a vector of LANE_VEC doubles and
 * included once per vector width, each copy's names suffixed by
 * LANE_FN. Every accumulator holds four fixed lanes (columns j, j+1,
 * j+2, j+3 of a group of four) whatever the register width, and the
 * lanes are added as (l0 + l1) + (l2 + l3), so every copy gives the
 * same bits. Vectors are moved through memcpy and never passed between
 * functions. No include guard: included on purpose more than once. */

/* LANE_VEC registers per group of four columns */
#define LANE_N (4 / (sizeof(LANE_VEC) / sizeof(double)))
#define LANE_W (sizeof(LANE_VEC) / sizeof(double))
_Static_assert(4 % (sizeof(LANE_VEC) / sizeof(double)) == 0,
               "a vector holds 1, 2 or 4 of the four lanes");
/* lane i (0..3) of an accumulator a[LANE_N], and the four added in order */
#define LANE(a, i) ((a)[(i) / LANE_W][(i) % LANE_W])
#define LANE_SUM(a) ((LANE(a, 0) + LANE(a, 1)) + (LANE(a, 2) + LANE(a, 3)))

/* s[k] += Σ_{j<n} r[k][j]·v[j] for the four rows r[0..3] */
static inline void LANE_FN(dot4)(const double *restrict r0, const double *restrict r1,
                                 const double *restrict r2, const double *restrict r3,
                                 const double *restrict v, size_t n, double s[4])
{
    LANE_VEC a0[LANE_N] = {0}, a1[LANE_N] = {0}, a2[LANE_N] = {0}, a3[LANE_N] = {0};
    size_t j = 0;
    for (; j + 4 <= n; j += 4)
#pragma GCC unroll 4
        for (size_t h = 0; h < LANE_N; h++) {
            const size_t o = j + h * LANE_W;
            LANE_VEC w, x0, x1, x2, x3;
            memcpy(&w, v + o, sizeof w);
            memcpy(&x0, r0 + o, sizeof x0);
            memcpy(&x1, r1 + o, sizeof x1);
            memcpy(&x2, r2 + o, sizeof x2);
            memcpy(&x3, r3 + o, sizeof x3);
            a0[h] += x0 * w;
            a1[h] += x1 * w;
            a2[h] += x2 * w;
            a3[h] += x3 * w;
        }
    double t0 = 0.0, t1 = 0.0, t2 = 0.0, t3 = 0.0;
    for (; j < n; j++) {
        t0 += r0[j] * v[j];
        t1 += r1[j] * v[j];
        t2 += r2[j] * v[j];
        t3 += r3[j] * v[j];
    }
    s[0] += LANE_SUM(a0) + t0;
    s[1] += LANE_SUM(a1) + t1;
    s[2] += LANE_SUM(a2) + t2;
    s[3] += LANE_SUM(a3) + t3;
}

/* Σ_{j<n} r[j]·v[j] */
static inline double LANE_FN(dot1)(const double *restrict r, const double *restrict v,
                                   size_t n)
{
    LANE_VEC a[LANE_N] = {0};
    size_t j = 0;
    for (; j + 4 <= n; j += 4)
#pragma GCC unroll 4
        for (size_t h = 0; h < LANE_N; h++) {
            const size_t o = j + h * LANE_W;
            LANE_VEC x, w;
            memcpy(&x, r + o, sizeof x);
            memcpy(&w, v + o, sizeof w);
            a[h] += x * w;
        }
    double t = 0.0;
    for (; j < n; j++)
        t += r[j] * v[j];
    return LANE_SUM(a) + t;
}

/* y[j] += (c0·r0[j] + c1·r1[j]) + (c2·r2[j] + c3·r3[j]) */
static inline void LANE_FN(axpy4)(const double c[4], const double *restrict r0,
                                  const double *restrict r1, const double *restrict r2,
                                  const double *restrict r3, double *restrict y, size_t n)
{
    LANE_VEC k0, k1, k2, k3;
    for (size_t i = 0; i < LANE_W; i++) {
        k0[i] = c[0];
        k1[i] = c[1];
        k2[i] = c[2];
        k3[i] = c[3];
    }
    size_t j = 0;
    for (; j + LANE_W <= n; j += LANE_W) {
        LANE_VEC x0, x1, x2, x3, acc;
        memcpy(&x0, r0 + j, sizeof x0);
        memcpy(&x1, r1 + j, sizeof x1);
        memcpy(&x2, r2 + j, sizeof x2);
        memcpy(&x3, r3 + j, sizeof x3);
        memcpy(&acc, y + j, sizeof acc);
        acc += (k0 * x0 + k1 * x1) + (k2 * x2 + k3 * x3);
        memcpy(y + j, &acc, sizeof acc);
    }
    for (; j < n; j++)
        y[j] += (c[0] * r0[j] + c[1] * r1[j]) + (c[2] * r2[j] + c[3] * r3[j]);
}

/* y[j] += c·r[j] */
static inline void LANE_FN(axpy1)(double c, const double *restrict r, double *restrict y,
                                  size_t n)
{
    LANE_VEC k;
    for (size_t i = 0; i < LANE_W; i++)
        k[i] = c;
    size_t j = 0;
    for (; j + LANE_W <= n; j += LANE_W) {
        LANE_VEC x, acc;
        memcpy(&x, r + j, sizeof x);
        memcpy(&acc, y + j, sizeof acc);
        acc += k * x;
        memcpy(y + j, &acc, sizeof acc);
    }
    for (; j < n; j++)
        y[j] += c * r[j];
}

/* One row's piece [a, b) of the current block, row by row. */
static inline void LANE_FN(piece)(const qc_ba_workspace *ws, size_t x, size_t a, size_t b,
                                  const double *coef, const double *v, double *out)
{
    if (a >= b)
        return;
    const double *row = ws->p + x * ws->ny;
    if (coef)
        LANE_FN(axpy1)(coef[x], row + a, out + a, b - a);
    else
        out[x] += LANE_FN(dot1)(row + a, v + a, b - a);
}

/* One block [b0, b1) of a sweep over rows (NULL: all nx rows): with
 * coef, out[y] += Σ coef[x]·P(y|x); without, out[x] += Σ_y P(y|x)·v(y).
 * Rows go four at a time; each row's sum is its pieces outside the span
 * the four share, then that span. */
static void LANE_FN(block_sweep)(const qc_ba_workspace *ws, const size_t *rows,
                                 size_t nrows, const double *coef, const double *v,
                                 double *out, size_t b0, size_t b1)
{
    const size_t ny = ws->ny;
    size_t g = 0;
    for (; g + 4 <= nrows; g += 4) {
        size_t lo[4], hi[4], x[4], clo = b0, chi = b1;
        for (int k = 0; k < 4; k++) {
            x[k] = row_at(rows, g + (size_t)k);
            lo[k] = ws->lo[x[k]] > b0 ? ws->lo[x[k]] : b0;
            hi[k] = ws->hi[x[k]] < b1 ? ws->hi[x[k]] : b1;
            if (lo[k] > clo)
                clo = lo[k];
            if (hi[k] < chi)
                chi = hi[k];
        }
        if (clo >= chi) {
            for (int k = 0; k < 4; k++)
                LANE_FN(piece)(ws, x[k], lo[k], hi[k], coef, v, out);
            continue;
        }
        const double *r[4];
        for (int k = 0; k < 4; k++) {
            r[k] = ws->p + x[k] * ny + clo;
            LANE_FN(piece)(ws, x[k], lo[k], clo, coef, v, out);
            LANE_FN(piece)(ws, x[k], chi, hi[k], coef, v, out);
        }
        if (coef) {
            double c[4] = {coef[x[0]], coef[x[1]], coef[x[2]], coef[x[3]]};
            LANE_FN(axpy4)(c, r[0], r[1], r[2], r[3], out + clo, chi - clo);
        } else {
            double s[4] = {0.0, 0.0, 0.0, 0.0};
            LANE_FN(dot4)(r[0], r[1], r[2], r[3], v + clo, chi - clo, s);
            for (int k = 0; k < 4; k++)
                out[x[k]] += s[k];
        }
    }
    for (; g < nrows; g++) {
        size_t xg = row_at(rows, g);
        size_t a = ws->lo[xg] > b0 ? ws->lo[xg] : b0;
        size_t b = ws->hi[xg] < b1 ? ws->hi[xg] : b1;
        LANE_FN(piece)(ws, xg, a, b, coef, v, out);
    }
}

#undef LANE_N
#undef LANE_W
#undef LANE
#undef LANE_SUM
