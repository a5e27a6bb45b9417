/* relocate.c — moving one threshold to another cell, to leave a local
 * maximum of I(X;Y_q) for a better one. With more cells than levels the
 * rate has several local maxima that differ in how many thresholds sit
 * between each pair of levels, often by 1e-6 bit or less — below what a
 * coarse grid resolves. As in the enhanced LBG algorithm (Patanè &
 * Russo, "The enhanced LBG algorithm", Neural Networks 14(9), 2001), the
 * threshold whose removal costs least is taken out and a new one splits
 * the cell that gains most from a split:
 *  - removal cost of t_j: g(c_j) + g(c_{j+1}) − g(c_j ∪ c_{j+1}), exact,
 *    with g the cell term Σ_x r(x) P log P − q log q of I(X;Y_q);
 *  - split gain of cell [a, b): max over RELOCATE_SPLITS evenly spaced
 *    points y of g([a, y)) + g([y, b)) − g([a, b)) (outer cells end at
 *    the support);
 *  - moves of the RELOCATE_PICK cheapest removals to the cells within
 *    RELOCATE_REACH places of them, largest gain − cost first (at most
 *    RELOCATE_TRIALS of them), are each refined by
 *    Newton steps (refine.c) and the first that raises the rate by more
 *    than rounding (RELOCATE_MIN_GAIN) is kept; then the search starts
 *    again, at most RELOCATE_ROUNDS times. A trial ends early once its
 *    Newton model cannot reach the incumbent's rate, or once it has slid
 *    back beside the incumbent (qc_refine_trial).
 * Only a move that raises the refined rate is kept, so the rate never
 * drops. */
#include "quantizer/quantizer.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#define RELOCATE_SPLITS 3 /* trial split points per cell */
#define RELOCATE_PICK 3   /* cheapest removals tried */
#define RELOCATE_REACH 64 /* cells on either side of a removal tried */
#define RELOCATE_TRIALS 16 /* moves refined per round */
#define RELOCATE_MIN_GAIN 1e-13 /* × the rate: a smaller gain is rounding */
#define RELOCATE_ROUNDS 4

/* Cell term of the probabilities p[x] (nx of them) under the law r. */
static double cell_term(const double *r, const double *p, size_t nx)
{
    double s = 0.0, q = 0.0;
    for (size_t x = 0; x < nx; x++)
        if (r[x] > 0.0 && p[x] > 0.0) {
            s += r[x] * p[x] * log(p[x]);
            q += r[x] * p[x];
        }
    return q > 0.0 ? s - q * log(q) : s;
}

typedef struct {
    size_t j, c;  /* remove threshold j, split cell c */
    double score; /* estimated rate change */
} move;

static int by_score(const void *a, const void *b)
{
    double x = ((const move *)a)->score, y = ((const move *)b)->score;
    return (x < y) - (x > y);
}

/* Indices of the (at most) k smallest (sign +1) or largest (−1) finite
 * entries of v[0..n), best first. */
static size_t pick(const double *v, size_t n, double sign, size_t k, size_t *out)
{
    size_t m = 0;
    for (; m < k; m++) {
        size_t best = n;
        for (size_t i = 0; i < n; i++) {
            int taken = 0;
            for (size_t p = 0; p < m; p++)
                taken |= out[p] == i;
            if (!taken && isfinite(v[i]) && (best == n || sign * v[i] < sign * v[best]))
                best = i;
        }
        if (best == n)
            break;
        out[m] = best;
    }
    return m;
}

qc_status qc_relocate_thresholds(qc_cell_mi *w, double scale, double *t, double *mi_nats,
                                 size_t *iterations)
{
    const size_t nt = w->nt, K = nt + 1, nx = w->nlevels;
    if (nt < 2)
        return QC_OK;
    const qc_model_type *ty = qc_model_get_type(w->model);
    const double *r = w->input;
    double lo, hi;
    qc_levels_support(w->model, w->levels, nx, &lo, &hi);
    /* one block: cost[nt], gain[K], split[K], tt[nt], pa[3·nx] and the
     * CDFs at the cell ends ca[2·(nt + 2)·nx] */
    double *cost = qc_malloc_array(2 * nt + 2 * K + 3 * nx + 2 * (nt + 2) * nx, sizeof *cost);
    if (!cost)
        return qc_fail(QC_ENOMEM, "out of memory for moving %zu thresholds", nt);
    double *gain = cost + nt, *split = gain + K, *tt = split + K, *pa = tt + nt;
    double *ca = pa + 3 * nx;
    double *pb = pa + nx, *pm = pa + 2 * nx;
    qc_status st = QC_OK;
    double mi = *mi_nats;
    for (int round = 0; round < RELOCATE_ROUNDS && st == QC_OK; round++) {
        if ((st = qc_cell_mi_eval(w, t, &mi, NULL)) != QC_OK)
            break;
        const double *P = w->channel->p;
        for (size_t j = 0; j < nt; j++) {
            for (size_t x = 0; x < nx; x++) {
                pa[x] = P[x * K + j];
                pb[x] = P[x * K + j + 1];
                pm[x] = pa[x] + pb[x];
            }
            cost[j] = cell_term(r, pa, nx) + cell_term(r, pb, nx) - cell_term(r, pm, nx);
        }
        /* CDFs below and above every cell end e_0 = lo, e_{j+1} = t_j,
         * e_K = hi */
        for (size_t e = 0; e <= K; e++) {
            double y = e == 0 ? fmin(lo, t[0] - scale) : e == K ? fmax(hi, t[nt - 1] + scale)
                                                               : t[e - 1];
            for (size_t x = 0; x < nx; x++)
                if (r[x] > 0.0) { /* the cell terms pass over the others */
                    ca[(2 * e) * nx + x] = ty->below(w->model, w->levels[x], y);
                    ca[(2 * e + 1) * nx + x] = ty->above(w->model, w->levels[x], y);
                }
        }
        for (size_t c = 0; c < K; c++) {
            double a = c == 0 ? fmin(lo, t[0] - scale) : t[c - 1];
            double b = c == nt ? fmax(hi, t[nt - 1] + scale) : t[c];
            for (size_t x = 0; x < nx; x++)
                pm[x] = P[x * K + c];
            double whole = cell_term(r, pm, nx);
            gain[c] = -INFINITY;
            split[c] = NAN;
            const double *alo = ca + 2 * c * nx, *ahi = alo + nx;
            const double *blo = ca + 2 * (c + 1) * nx, *bhi = blo + nx;
            for (size_t u = 1; u <= RELOCATE_SPLITS; u++) {
                double y = a + (b - a) * (double)u / (double)(RELOCATE_SPLITS + 1);
                if (!(y > a && y < b))
                    continue;
                for (size_t x = 0; x < nx; x++) {
                    if (!(r[x] > 0.0))
                        continue;
                    double ylo = ty->below(w->model, w->levels[x], y);
                    double yhi = ty->above(w->model, w->levels[x], y);
                    /* same tail choice as discretize.c; outer cells
                     * reach to ±∞ */
                    pa[x] = c == 0 ? ylo : ahi[x] < ylo ? ahi[x] - yhi : ylo - alo[x];
                    pb[x] = c == nt ? yhi : yhi < blo[x] ? yhi - bhi[x] : blo[x] - ylo;
                    pa[x] = fmax(pa[x], 0.0);
                    pb[x] = fmax(pb[x], 0.0);
                }
                double v = cell_term(r, pa, nx) + cell_term(r, pb, nx) - whole;
                if (isfinite(v) && v > gain[c]) {
                    gain[c] = v;
                    split[c] = y;
                }
            }
        }
        size_t cj[RELOCATE_PICK];
        size_t nj = pick(cost, nt, 1.0, RELOCATE_PICK, cj);
        move mv[RELOCATE_PICK * 2 * RELOCATE_REACH];
        size_t nm = 0;
        for (size_t a = 0; a < nj; a++)
            for (size_t c = cj[a] > RELOCATE_REACH ? cj[a] - RELOCATE_REACH : 0;
                 c <= cj[a] + RELOCATE_REACH + 1 && c < K; c++)
                if (c != cj[a] && c != cj[a] + 1 && isfinite(gain[c]))
                    mv[nm++] = (move){cj[a], c, gain[c] - cost[cj[a]]};
        qsort(mv, nm, sizeof *mv, by_score);
        int moved = 0;
        for (size_t i = 0; i < nm && i < RELOCATE_TRIALS && !moved && st == QC_OK; i++) {
            /* t without t_j, with split[c] in its place in the order */
            size_t n = 0;
            for (size_t k = 0; k < nt; k++) {
                if (k == mv[i].j)
                    continue;
                if (n < nt && k == mv[i].c)
                    tt[n++] = split[mv[i].c];
                tt[n++] = t[k];
            }
            if (mv[i].c == nt)
                tt[n++] = split[mv[i].c];
            /* a split of the cell just above a removed threshold lands
             * one place later; sort the one misplaced entry */
            for (size_t k = 1; k < nt; k++)
                for (size_t m = k; m > 0 && tt[m] < tt[m - 1]; m--) {
                    double s = tt[m];
                    tt[m] = tt[m - 1];
                    tt[m - 1] = s;
                }
            double v;
            size_t more = 0;
            st = qc_refine_trial(w, scale, mi, t, tt, &v, &more);
            if (iterations)
                *iterations += more;
            if (st == QC_OK && v > mi + RELOCATE_MIN_GAIN * mi) {
                memcpy(t, tt, nt * sizeof *t);
                mi = v;
                moved = 1;
            }
        }
        if (!moved)
            break;
    }
    if (st == QC_OK) /* leave the workspace's channel at the result */
        st = qc_cell_mi_eval(w, t, &mi, NULL);
    if (st == QC_OK)
        *mi_nats = mi;
    free(cost);
    return st;
}
