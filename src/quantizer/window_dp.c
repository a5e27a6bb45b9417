/* window_dp.c — the fine stage of the coarse-to-fine MI-optimal threshold
 * search: each threshold of a coarse design may move within a window
 * around it (from the coarse boundary below it to the one above, cut into
 * `split` steps on each side), and a dynamic programme over contiguous
 * cells (Kurkoski & Yagi, IEEE Trans. IT 60(8), 2014; He, Cai, Song, Mei,
 * IEEE Trans. IT 67(6), 2021) picks the best threshold in every window
 * jointly:
 *   V_0(a) = g(−∞, a),  V_j(b) = max_{a ∈ W_{j−1}, a < b} V_{j−1}(a) + g(a, b),
 *   I = max_{a ∈ W_{nt−1}} V_{nt−1}(a) + g(a, ∞),
 * with g the cell term of I(X;Y_q) as in dp_optimal.c. Every window holds
 * its coarse threshold, so the coarse design is one of the candidates and
 * the result is never worse than it. Cell probabilities come from the
 * model's tail-accurate CDFs at the candidates, with the same choice of
 * tail as discretize.c. */
#include "quantizer/quantizer.h"

#include <math.h>
#include <stdlib.h>

typedef struct {
    size_t nx;             /* levels */
    const double *r;       /* input law */
    const double *lo, *hi; /* per candidate: P(Y < y|x), P(Y ≥ y|x), nx each */
} tails;

/* Cell term g over [a, b); a = NULL: from −∞; b = NULL: to +∞. */
static double cell_term(const tails *T, const double *alo, const double *ahi,
                        const double *blo, const double *bhi)
{
    double s = 0.0, q = 0.0;
    for (size_t x = 0; x < T->nx; x++) {
        if (!(T->r[x] > 0.0))
            continue;
        double p;
        if (!alo)
            p = blo[x];
        else if (!blo)
            p = ahi[x];
        else if (ahi[x] < blo[x])
            p = ahi[x] - bhi[x]; /* upper side: both tails small */
        else
            p = blo[x] - alo[x];
        if (p > 0.0) {
            s += T->r[x] * p * log(p);
            q += T->r[x] * p;
        }
    }
    if (q > 0.0)
        s -= q * log(q);
    return s;
}

qc_status qc_window_dp(const qc_model *model, const double *levels, const double *input,
                       size_t nlevels, size_t nt, const double *left, const double *mid,
                       const double *right, size_t split, double *t_out, double *mi_nats)
{
    if (nt == 0 || split < 1)
        return qc_fail(QC_EINVAL, "window search: no thresholds or no steps");
    const size_t c = 2 * split - 1, nc = nt * c, nx = nlevels;
    for (size_t j = 0; j < nt; j++)
        if (!(left[j] < mid[j] && mid[j] < right[j]) || (j > 0 && !(mid[j] > mid[j - 1])))
            return qc_fail(QC_EINVAL, "window search: window %zu is not ordered", j + 1);
    double *y = qc_malloc_array(nc, sizeof *y);
    double *lo = qc_malloc_array(nc * nx, sizeof *lo);
    double *hi = qc_malloc_array(nc * nx, sizeof *hi);
    double *v = qc_malloc_array(nc, sizeof *v);
    size_t *arg = qc_malloc_array(nc, sizeof *arg);
    qc_status st = QC_OK;
    if (!y || !lo || !hi || !v || !arg) {
        st = qc_fail(QC_ENOMEM, "out of memory for the window search of %zu thresholds",
                     nt);
        goto done;
    }
    const qc_model_type *ty = qc_model_get_type(model);
    for (size_t j = 0; j < nt; j++) {
        double *yj = y + j * c;
        for (size_t u = 1; u < split; u++) {
            yj[u - 1] = left[j] + (mid[j] - left[j]) * (double)u / (double)split;
            yj[split + u - 1] = mid[j] + (right[j] - mid[j]) * (double)u / (double)split;
        }
        yj[split - 1] = mid[j]; /* the coarse threshold itself, exactly */
        for (size_t u = 0; u < c; u++)
            for (size_t x = 0; x < nx; x++) {
                double a = ty->below(model, levels[x], yj[u]);
                double b = ty->above(model, levels[x], yj[u]);
                if (!isfinite(a) || !isfinite(b) || a < 0.0 || b < 0.0) {
                    st = qc_fail(QC_ENUMERIC,
                                 "model '%s' returned an invalid tail probability at "
                                 "level %g, threshold %g",
                                 ty->name, levels[x], yj[u]);
                    goto done;
                }
                lo[(j * c + u) * nx + x] = a;
                hi[(j * c + u) * nx + x] = b;
            }
    }
    tails T = {nx, input, lo, hi};
#define LO(k) (lo + (k) * nx)
#define HI(k) (hi + (k) * nx)
    for (size_t u = 0; u < c; u++)
        v[u] = cell_term(&T, NULL, NULL, LO(u), HI(u));
    for (size_t j = 1; j < nt; j++) {
        const size_t p0 = (j - 1) * c, c0 = j * c;
        for (size_t b = 0; b < c; b++) {
            double best = -INFINITY;
            size_t ba = 0;
            for (size_t a = 0; a < c && y[p0 + a] < y[c0 + b]; a++) {
                if (!(v[p0 + a] > -INFINITY))
                    continue;
                double val =
                    v[p0 + a] + cell_term(&T, LO(p0 + a), HI(p0 + a), LO(c0 + b), HI(c0 + b));
                if (val > best) {
                    best = val;
                    ba = a;
                }
            }
            v[c0 + b] = best;
            arg[c0 + b] = ba;
        }
    }
    const size_t l0 = (nt - 1) * c;
    double best = -INFINITY;
    size_t ba = split - 1;
    for (size_t a = 0; a < c; a++) {
        if (!(v[l0 + a] > -INFINITY))
            continue;
        double val = v[l0 + a] + cell_term(&T, LO(l0 + a), HI(l0 + a), NULL, NULL);
        if (val > best) {
            best = val;
            ba = a;
        }
    }
#undef LO
#undef HI
    if (!isfinite(best)) {
        st = qc_fail(QC_ENUMERIC, "window search: the rate is not finite");
        goto done;
    }
    for (size_t j = nt; j-- > 0;) {
        t_out[j] = y[j * c + ba];
        if (j > 0)
            ba = arg[j * c + ba];
    }
    if (mi_nats)
        *mi_nats = best > 0.0 ? best : 0.0;
done:
    free(y);
    free(lo);
    free(hi);
    free(v);
    free(arg);
    return st;
}
