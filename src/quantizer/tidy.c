/* tidy.c — a reproducible choice among equally good thresholds.
 *
 * Where the rate does not depend on where some thresholds sit (a rate
 * saturated at log2 of the number of levels, more cells than the levels
 * can use), a design strategy leaves those thresholds wherever its
 * iteration stopped. The rule applied here (docs/methods.md §4,
 * "Equally good thresholds"):
 *
 *  1. Redundant thresholds: merging two neighbouring cells changes the
 *     exact finite sum I(X;Y_q) by the local amount
 *       Σ_x r(x) [P_a log(P_a/q_a) + P_b log(P_b/q_b) − P_ab log(P_ab/q_ab)]
 *     (the data-processing loss of the merge, ≥ 0). Thresholds are
 *     removed greedily, smallest loss first (ties: lowest index), while
 *     the summed losses stay within half the budget ε.
 *  2. Flat essential thresholds (continuous outputs): each remaining
 *     threshold that a step of 1/100 of its gaps to the neighbours moves
 *     by less than ε moves, in index order, to the middle of the interval
 *     over which it can sit with the rate at least I₀ − ε (found by
 *     bisection), the position farthest from where it starts to matter.
 *     The interval ends are resolved only to where rounding of the rate
 *     (1e-16 relative) meets ε, so the middle is rounded to the coarsest
 *     power-of-two grid with a point within 1e-4 of the interval's width
 *     (qc_simplest_within): 0 rather than 2e-9, 2 rather than 1.9999999994.
 *     The rate at a trial position is the design's rate plus the change of
 *     the two cells beside the threshold (two_cells_share), exact and free
 *     of the rounding of the whole sum.
 *  3. The removed thresholds return one at a time, each splitting the
 *     cell of largest output probability (ties: lowest index) at the
 *     median of the output law in that cell: splitting never lowers the
 *     rate, and the result is the quantizer of largest output entropy
 *     among those greedy splits, every code of the converter used.
 *  4. The rate of the result is checked to be at least I₀ − ε; otherwise
 *     the thresholds are left as they were.
 *
 * Separately, qc_snap_thresholds puts a threshold that lies within a few
 * ulps (of the output's scale) of zero or of a level's mean exactly on
 * it, and, where the levels are their own mirror image (output means
 * symmetric about a centre, variances equal) and the thresholds are too
 * up to 1e-9 of their gaps, makes them exactly symmetric (the middle one
 * at the centre), so that rounding noise of the design does not print as
 * 1e-14 or as thresholds that differ from their mirror images in the
 * last digits. */
#include "quantizer/quantizer.h"

#include <float.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#define TIDY_MAX_THRESHOLDS 4095 /* above: O(nt²) removal is not attempted */
#define TIDY_MAX_CENTERED 255    /* essential thresholds centred at most */
#define FLAT_PROBE 1e-2          /* flatness probe: this share of the gaps */
#define ROUND_SHARE 1e-4         /* middle rounded within this share of the
                                    flat interval (qc_simplest_within) */
#define BISECT_STEPS 200         /* interval halvings (stops at ulp level) */
#define SNAP_ULPS 64.0           /* snapping distance, in ulps of the scale */
#define MIRROR_REL 1e-9          /* mirror-image thresholds: up to this share
                                    of their smallest gap                   */
#define MIRROR_VAR_REL 1e-12     /* mirror-image levels: equal variances to
                                    this share                              */

/* Σ_x r(x) p_x log(p_x / q) for one cell (column). */
static double cell_term(const double *col, const double *r, size_t nx, double q)
{
    double s = 0.0;
    for (size_t x = 0; x < nx; x++)
        if (r[x] > 0.0 && col[x] > 0.0)
            s += r[x] * col[x] * log(col[x] / q);
    return s;
}

/* Loss of merging cells a and b (columns of cols, nx each). */
static double merge_loss(const double *cols, const double *qs, const double *r,
                         size_t nx, size_t a, size_t b, double *tmp)
{
    const double *ca = cols + a * nx, *cb = cols + b * nx;
    for (size_t x = 0; x < nx; x++)
        tmp[x] = ca[x] + cb[x];
    double loss = cell_term(ca, r, nx, qs[a]) + cell_term(cb, r, nx, qs[b]) -
                  cell_term(tmp, r, nx, qs[a] + qs[b]);
    return loss > 0.0 ? loss : 0.0;
}

/* Column c of the channel into cols (nx entries) and its output mass. */
static void column_of(const qc_dmc *ch, const double *r, size_t c, double *cols,
                      double *qs)
{
    const size_t nx = ch->nx, K = ch->ny;
    qs[c] = 0.0;
    for (size_t x = 0; x < nx; x++) {
        cols[c * nx + x] = ch->p[x * K + c];
        qs[c] += r[x] * ch->p[x * K + c];
    }
}

typedef struct {
    const double *cols, *qs, *r;
    size_t nx;
    double *loss;
} losses_ctx;

/* qc_row_fn: the loss of merging cells j and j + 1, the merged column in
 * the scratch. */
static int loss_row(size_t j, double *merged, void *p)
{
    const losses_ctx *c = p;
    c->loss[j] = merge_loss(c->cols, c->qs, c->r, c->nx, j, j + 1, merged);
    return 0;
}

/* Step 1: keep[j] = 0 for removed thresholds; *kept their number. */
static qc_status find_redundant(const qc_dmc *ch, const double *r, size_t nt,
                                double budget, unsigned char *keep, size_t *kept)
{
    const size_t nx = ch->nx, K = nt + 1;
    double *cols = qc_malloc_array(K * nx, sizeof *cols);
    double *qs = qc_malloc_array(K, sizeof *qs);
    double *loss = qc_malloc_array(nt, sizeof *loss);
    double *tmp = qc_malloc_array(nx, sizeof *tmp);
    size_t *next = qc_malloc_array(K, sizeof *next); /* next alive cell */
    size_t *prev = qc_malloc_array(K, sizeof *prev);
    qc_status st = QC_OK;
    if (!cols || !qs || !loss || !tmp || !next || !prev) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto done;
    }
    /* columns and merge losses of a large channel in OpenMP threads, each
     * column's sums in one thread in order */
    const int threads = qc_parallel_worth(K * nx);
    if (threads) {
#pragma omp parallel for schedule(static)
        for (size_t c = 0; c < K; c++)
            column_of(ch, r, c, cols, qs);
    } else {
        for (size_t c = 0; c < K; c++)
            column_of(ch, r, c, cols, qs);
    }
    for (size_t c = 0; c < K; c++) {
        next[c] = c + 1;
        prev[c] = c - 1; /* wraps for c = 0; never read there */
    }
    /* groups of cells are named by their first cell (head); threshold j
     * separates the group ending at cell j from the group with head j + 1 */
    for (size_t j = 0; j < nt; j++)
        keep[j] = 1;
    if (threads) {
        losses_ctx lc = {cols, qs, r, nx, loss};
        if ((st = qc_parallel_rows(nt, nx, loss_row, &lc, NULL)) != QC_OK)
            goto done;
    } else {
        for (size_t j = 0; j < nt; j++)
            loss[j] = merge_loss(cols, qs, r, nx, j, j + 1, tmp);
    }
    *kept = nt;
    double spent = 0.0;
    for (;;) {
        size_t best = nt;
        for (size_t j = 0; j < nt; j++)
            if (keep[j] && (best == nt || loss[j] < loss[best]))
                best = j;
        if (best == nt || spent + loss[best] > budget)
            break;
        /* merge the group with head h2 = best + 1 into its left neighbour h1 */
        size_t h2 = best + 1, h1 = prev[h2];
        spent += loss[best];
        keep[best] = 0;
        (*kept)--;
        for (size_t x = 0; x < nx; x++)
            cols[h1 * nx + x] += cols[h2 * nx + x];
        qs[h1] += qs[h2];
        next[h1] = next[h2];
        if (next[h2] < K) {
            prev[next[h2]] = h1;
            loss[next[h2] - 1] = merge_loss(cols, qs, r, nx, h1, next[h2], tmp);
        }
        if (h1 > 0)
            loss[h1 - 1] = merge_loss(cols, qs, r, nx, prev[h1], h1, tmp);
    }
done:
    free(cols);
    free(qs);
    free(loss);
    free(tmp);
    free(next);
    free(prev);
    return st;
}

/* Output-law mass of [a, y) under law r (continuous or counts), each
 * level's part taken on the side of its distribution that does not
 * cancel. */
static double mass_between(const qc_model *m, const double *levels, const double *r,
                           size_t nx, double a, double y)
{
    double s = 0.0;
    for (size_t x = 0; x < nx; x++) {
        if (!(r[x] > 0.0))
            continue;
        double ba = isfinite(a) ? qc_model_get_type(m)->below(m, levels[x], a) : 0.0;
        double p;
        if (ba < 0.5)
            p = qc_model_get_type(m)->below(m, levels[x], y) - ba;
        else
            p = qc_model_get_type(m)->above(m, levels[x], a) - qc_model_get_type(m)->above(m, levels[x], y);
        s += r[x] * (p > 0.0 ? p : 0.0);
    }
    return s;
}

/* Median of the output law within the cell [a, b) of mass q; *ok = 0
 * when the cell cannot be split (a single count, or no room). */
static double cell_median(const qc_model *m, const double *levels, const double *r,
                          size_t nx, double a, double b, double q, double lo,
                          double hi, int *ok)
{
    const int counts = qc_model_get_type(m)->output == QC_OUTPUT_COUNTS;
    double L = isfinite(a) ? a : lo, R = isfinite(b) ? b : hi;
    if (counts) {
        L = isfinite(a) ? a : 0.0;
        R = isfinite(b) ? b : hi + 1.0;
        if (R - L < 2.0) {
            *ok = 0;
            return NAN;
        }
        /* smallest count s in (L, R) with mass[a, s) ≥ q/2, within [L+1, R−1] */
        double u = L + 1.0, v = R - 1.0;
        while (v > u) {
            double c = floor(0.5 * (u + v));
            if (mass_between(m, levels, r, nx, a, c + 1.0) >= 0.5 * q)
                v = c;
            else
                u = c + 1.0;
        }
        /* cell [a, s): s = u + 1 puts count u in the lower half */
        double s = u + 1.0 <= R - 1.0 ? u + 1.0 : R - 1.0;
        if (s <= L)
            s = L + 1.0;
        *ok = 1;
        return s;
    }
    if (!(R > L)) {
        *ok = 0;
        return NAN;
    }
    for (int k = 0; k < BISECT_STEPS; k++) {
        double c = 0.5 * (L + R);
        if (!(c > L && c < R))
            break;
        if (mass_between(m, levels, r, nx, a, c) >= 0.5 * q)
            R = c;
        else
            L = c;
    }
    double s = 0.5 * (L + R);
    *ok = (!isfinite(a) || s > a) && (!isfinite(b) || s < b) && isfinite(s);
    return s;
}

double qc_simplest_within(double x, double tol)
{
    if (!(tol > 0.0) || !isfinite(x) || !isfinite(tol))
        return x;
    if (fabs(x) <= tol)
        return 0.0;
    /* coarsest power-of-two grid with a point within tol of x */
    for (double q = ldexp(1.0, ilogb(fabs(x)) + 1); q >= tol; q *= 0.5) {
        double c = round(x / q) * q;
        if (fabs(c - x) <= tol)
            return c;
    }
    return x;
}

/* The two cells on either side of one threshold whose neighbours a and b
 * stay put: the tails of every level at a and b, so that the rate's
 * change when the threshold moves costs one tail pair per level. */
typedef struct {
    const qc_model *model;
    const double *levels, *r;
    size_t nx;
    double *la, *ha, *lb, *hb; /* tails at a and b (nx each) */
} two_cells;

static void two_cells_ends(two_cells *p, double a, double b)
{
    for (size_t x = 0; x < p->nx; x++) {
        if (!(p->r[x] > 0.0))
            continue;
        if (isfinite(a)) {
            qc_tails_at(p->model, p->levels[x], a, &p->la[x], &p->ha[x]);
        } else {
            p->la[x] = 0.0;
            p->ha[x] = 1.0;
        }
        if (isfinite(b)) {
            qc_tails_at(p->model, p->levels[x], b, &p->lb[x], &p->hb[x]);
        } else {
            p->lb[x] = 1.0;
            p->hb[x] = 0.0;
        }
    }
}

/* The two cells' share Σ_x r(x) P log(P/q) of I(X;Y_q) with the threshold
 * at c: the rate moves with c by exactly the change of this share. */
static double two_cells_share(const two_cells *p, double c)
{
    double s = 0.0, qa = 0.0, qb = 0.0;
    for (size_t x = 0; x < p->nx; x++) {
        /* a level with no mass in [a, b) adds nothing */
        if (!(p->r[x] > 0.0) || !(p->lb[x] > 0.0) || !(p->ha[x] > 0.0))
            continue;
        double lc, hc;
        qc_tails_at(p->model, p->levels[x], c, &lc, &hc);
        double pa = fmax(qc_cell_between(p->la[x], p->ha[x], lc, hc), 0.0);
        double pb = fmax(qc_cell_between(lc, hc, p->lb[x], p->hb[x]), 0.0);
        if (pa > 0.0) {
            s += p->r[x] * pa * log(pa);
            qa += p->r[x] * pa;
        }
        if (pb > 0.0) {
            s += p->r[x] * pb * log(pb);
            qb += p->r[x] * pb;
        }
    }
    if (qa > 0.0)
        s -= qa * log(qa);
    if (qb > 0.0)
        s -= qb * log(qb);
    return s;
}

/* The rate with the threshold at c, from the rate `rate` with it where the
 * two cells' share is share0. */
static double rate_at(const two_cells *p, double rate, double share0, double c)
{
    return rate + (two_cells_share(p, c) - share0);
}

/* Step 2: move essential threshold e[j] to the middle of its flat
 * interval (rate ≥ floor). *rate is the rate of e, updated when e[j]
 * moves; the rate at a trial position is *rate plus the change of the two
 * neighbouring cells' share, which is exact and free of the rounding of
 * the whole sum (the whole rate is checked once more at the end). */
static void center_one(two_cells *p, double *e, size_t m, size_t j, double lo, double hi,
                       double *rate, double floor_nats)
{
    const double t0 = e[j];
    double left = j > 0 ? e[j - 1] : lo, right = j + 1 < m ? e[j + 1] : hi;
    if (!(left < t0))
        left = t0;
    if (!(right > t0))
        right = t0;
    /* a threshold the rate pins down (it changes by more than the budget
     * a small step away) stays where the design put it */
    const double step = FLAT_PROBE * fmin(t0 - left, right - t0);
    if (!(step > 0.0))
        return;
    two_cells_ends(p, j > 0 ? e[j - 1] : -INFINITY, j + 1 < m ? e[j + 1] : INFINITY);
    const double share0 = two_cells_share(p, t0);
    for (int side = 0; side < 2; side++)
        if (!(rate_at(p, *rate, share0, side ? t0 + step : t0 - step) >= floor_nats))
            return;
    double ends[2];
    for (int side = 0; side < 2; side++) {
        double good = t0, bad = side ? right : left;
        if (rate_at(p, *rate, share0, bad) >= floor_nats) {
            ends[side] = bad;
            continue;
        }
        for (int k = 0; k < BISECT_STEPS; k++) {
            double c = 0.5 * (good + bad);
            if (c == good || c == bad)
                break;
            if (rate_at(p, *rate, share0, c) >= floor_nats)
                good = c;
            else
                bad = c;
        }
        ends[side] = good;
    }
    double mid = qc_simplest_within(0.5 * (ends[0] + ends[1]),
                                    ROUND_SHARE * (ends[1] - ends[0]));
    double v = rate_at(p, *rate, share0, mid);
    if (v >= floor_nats && (j == 0 || mid > e[j - 1]) && (j + 1 == m || mid < e[j + 1])) {
        e[j] = mid;
        *rate = v;
    }
}

qc_status qc_tidy_thresholds(const qc_model *model, const double *levels,
                             const double *input, size_t nlevels, size_t nt,
                             double eps_nats, double *t)
{
    return qc_tidy_thresholds_screened(model, levels, input, nlevels, nt, eps_nats,
                                       nlevels >= QC_CLIP_MIN_LEVELS, t);
}

/* Whether t[0..nt) increases strictly. */
static int increasing(const double *t, size_t nt)
{
    for (size_t j = 1; j < nt; j++)
        if (!(t[j] > t[j - 1]))
            return 0;
    return 1;
}

qc_status qc_tidy_thresholds_screened(const qc_model *model, const double *levels,
                                      const double *input, size_t nlevels, size_t nt,
                                      double eps_nats, int screen, double *t)
{
    if (nt < 1 || nt > TIDY_MAX_THRESHOLDS || !(eps_nats > 0.0))
        return QC_OK;
    const int counts = qc_model_get_type(model)->output == QC_OUTPUT_COUNTS;
    qc_cell_mi *w = NULL, *we = NULL;
    unsigned char *keep = qc_malloc_array(nt + 1, sizeof *keep);
    double *e = qc_malloc_array(nt, sizeof *e);
    double *q = qc_malloc_array(nt + 1, sizeof *q);
    double *tails = NULL;
    qc_status st = QC_OK;
    if (!keep || !e || !q) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto done;
    }
    double i0;
    if ((st = qc_cell_mi_alloc(model, levels, input, nlevels, nt, &w)) != QC_OK)
        goto done;
    /* step 1. More thresholds than are centred, none of them redundant,
     * are left as they are; none is redundant when removing any costs the
     * clipped rate more than the budget plus twice the clipping's error
     * (the exact rate then loses more than the budget), so the screen's
     * pass (0) can end the rule without an exact rate. */
    const int screened = screen && !counts && nt > TIDY_MAX_CENTERED && increasing(t, nt);
    size_t m = nt;
    for (int pass = screened ? 0 : 1; pass < 2; pass++) {
        w->clip = pass == 0;
        st = qc_cell_mi_eval(w, t, &i0, NULL);
        w->clip = 0;
        const double clip_err = pass == 0 ? QC_CLIP_RATE_NATS : 0.0;
        m = nt;
        if (st != QC_OK || (st = find_redundant(w->channel, input, nt,
                                                0.5 * eps_nats + 2.0 * clip_err, keep, &m)) !=
                               QC_OK)
            goto done;
        if (m == nt && nt > TIDY_MAX_CENTERED)
            goto done;
    }
    const double floor_nats = i0 - eps_nats;
    size_t k = 0;
    for (size_t j = 0; j < nt; j++)
        if (keep[j])
            e[k++] = t[j];
    double lo, hi;
    qc_levels_support(model, levels, nlevels, &lo, &hi);
    if (m > 0) {
        if ((st = qc_cell_mi_alloc(model, levels, input, nlevels, m, &we)) != QC_OK)
            goto done;
        if (!counts && m <= TIDY_MAX_CENTERED) {
            double rate;
            if ((st = qc_cell_mi_eval(we, e, &rate, NULL)) != QC_OK)
                goto done;
            tails = qc_malloc_array(4 * nlevels, sizeof *tails);
            if (!tails) {
                st = qc_fail(QC_ENOMEM, "out of memory");
                goto done;
            }
            two_cells p = {model, levels, input, nlevels, tails, tails + nlevels,
                           tails + 2 * nlevels, tails + 3 * nlevels};
            for (size_t j = 0; j < m; j++)
                center_one(&p, e, m, j, lo, hi, &rate, floor_nats);
        }
        /* step 3: cell masses of the essential quantizer, then greedy splits */
        double ie;
        if ((st = qc_cell_mi_eval(we, e, &ie, NULL)) != QC_OK)
            goto done;
        memcpy(q, we->q, (m + 1) * sizeof *q);
    } else {
        q[0] = 1.0; /* no threshold matters: one cell holds everything */
    }
    unsigned char *stuck = keep; /* reused: 1 = this cell cannot be split */
    memset(stuck, 0, nt + 1);
    while (m < nt) {
        size_t best = m + 1;
        for (size_t c = 0; c <= m; c++)
            if (!stuck[c] && (best > m || q[c] > q[best]))
                best = c;
        if (best > m)
            goto done; /* no cell can take another threshold: keep the design */
        double a = best > 0 ? e[best - 1] : -INFINITY, b = best < m ? e[best] : INFINITY;
        int ok;
        double s = cell_median(model, levels, input, nlevels, a, b, q[best], lo, hi, &ok);
        if (!ok) {
            stuck[best] = 1;
            continue;
        }
        double qa = mass_between(model, levels, input, nlevels, a, s);
        memmove(e + best + 1, e + best, (m - best) * sizeof *e);
        memmove(q + best + 1, q + best, (m + 1 - best) * sizeof *q);
        memmove(stuck + best + 2, stuck + best + 1, (m - best) * sizeof *stuck);
        e[best] = s;
        q[best + 1] = q[best] - qa > 0.0 ? q[best] - qa : 0.0;
        q[best] = qa;
        stuck[best + 1] = 0;
        m++;
    }
    /* step 4: the rate must not have dropped by more than ε */
    double i1;
    if ((st = qc_thresholds_check(model, e, nt)) != QC_OK) {
        st = QC_OK; /* not strictly increasing after all: keep the design */
        goto done;
    }
    if ((st = qc_cell_mi_eval(w, e, &i1, NULL)) != QC_OK)
        goto done;
    if (i1 >= floor_nats)
        memcpy(t, e, nt * sizeof *t);
done:
    qc_cell_mi_free(w);
    qc_cell_mi_free(we);
    free(keep);
    free(e);
    free(q);
    free(tails);
    return st;
}

/* A level's output mean and variance, for sorting by mean. */
typedef struct {
    double mean, var;
} level_moments;

static int by_mean(const void *a, const void *b)
{
    const double x = ((const level_moments *)a)->mean, y = ((const level_moments *)b)->mean;
    return (x > y) - (x < y);
}

/* *centre: the centre of the levels' output means when the level set is
 * its own mirror image about it (the k-th lowest mean and the k-th highest
 * at equal distances, to d, with equal variances, to MIRROR_VAR_REL); 0
 * when it is not, or a level has no moments, or memory runs out (the
 * thresholds are then only not made symmetric). */
static int mirror_centre(const qc_model *model, const double *levels, size_t nlevels, double d,
                         double *centre)
{
    level_moments *lm = qc_malloc_array(nlevels, sizeof *lm);
    if (!lm || nlevels == 0) {
        free(lm);
        return 0;
    }
    int ok = 1;
    for (size_t i = 0; i < nlevels && ok; i++)
        ok = qc_model_moments(model, levels[i], &lm[i].mean, &lm[i].var) == QC_OK &&
             isfinite(lm[i].mean) && isfinite(lm[i].var);
    if (ok) {
        qsort(lm, nlevels, sizeof *lm, by_mean);
        *centre = 0.5 * (lm[0].mean + lm[nlevels - 1].mean);
        for (size_t i = 0, k = nlevels - 1; i < k && ok; i++, k--)
            ok = fabs(lm[i].mean + lm[k].mean - 2.0 * *centre) <= d &&
                 fabs(lm[i].var - lm[k].var) <= MIRROR_VAR_REL * fmax(lm[i].var, lm[k].var);
    }
    free(lm);
    return ok;
}

/* Thresholds that are the mirror image of each other about the centre of
 * a level set that is its own mirror image, up to MIRROR_REL of their
 * smallest gap (rounding of the design's sums and steps), are made so
 * exactly; all of them or none. */
static void mirror_thresholds(const qc_model *model, const double *levels, size_t nlevels,
                              size_t nt, double d, double *t)
{
    double c;
    if (nt == 0 || !mirror_centre(model, levels, nlevels, d, &c))
        return;
    for (size_t j = 0, k = nt - 1; j <= k; j++, k--) {
        double gap = INFINITY;
        if (j > 0)
            gap = fmin(gap, t[j] - t[j - 1]);
        if (j + 1 < nt)
            gap = fmin(gap, t[j + 1] - t[j]);
        if (!isfinite(gap))
            gap = fabs(t[j] - c);
        if (!(fabs(t[j] + t[k] - 2.0 * c) <= fmax(MIRROR_REL * gap, d)))
            return;
        if (k == 0)
            break;
    }
    for (size_t j = 0, k = nt - 1; j <= k; j++, k--) {
        const double half = 0.5 * (t[k] - t[j]);
        t[j] = j == k ? c : c - half;
        t[k] = j == k ? c : c + half;
        if (k == 0)
            break;
    }
}

void qc_snap_thresholds(const qc_model *model, const double *levels, size_t nlevels,
                        size_t nt, double *t)
{
    if (qc_model_get_type(model)->output == QC_OUTPUT_COUNTS)
        return;
    /* the output's scale: largest |mean| and standard deviation of the
     * levels (the support when the model has no moments) */
    double scale = 0.0;
    for (size_t i = 0; i < nlevels; i++) {
        double mean, var;
        if (qc_model_moments(model, levels[i], &mean, &var) == QC_OK && isfinite(mean) &&
            isfinite(var)) {
            scale = fmax(scale, fmax(fabs(mean), sqrt(fmax(var, 0.0))));
        } else {
            double a, b;
            qc_model_get_type(model)->support(model, levels[i], &a, &b);
            scale = fmax(scale, fmax(fabs(a), fabs(b)));
        }
    }
    const double d = SNAP_ULPS * DBL_EPSILON * scale;
    for (size_t j = 0; j < nt; j++) {
        double target = t[j];
        if (fabs(t[j]) <= d)
            target = 0.0;
        for (size_t i = 0; i < nlevels; i++) {
            double mean, var;
            if (qc_model_moments(model, levels[i], &mean, &var) == QC_OK &&
                fabs(t[j] - mean) <= d && fabs(t[j] - mean) < fabs(t[j] - target))
                target = mean;
        }
        if ((j == 0 || target > t[j - 1]) && (j + 1 == nt || target < t[j + 1]))
            t[j] = target;
    }
    mirror_thresholds(model, levels, nlevels, nt, d, t);
}

size_t qc_cells_usable(const qc_model *model, const double *levels, size_t nlevels,
                       size_t cells)
{
    if (qc_model_get_type(model)->output != QC_OUTPUT_COUNTS)
        return cells;
    double lo, hi;
    qc_levels_support(model, levels, nlevels, &lo, &hi);
    if (!isfinite(lo) || !isfinite(hi) || !(hi >= lo))
        return cells;
    double span = hi - fmax(lo, 0.0) + 1.0; /* cells {≤ lo}, lo + 1, …, {≥ hi} */
    if (span < 2.0)
        span = 2.0; /* a quantizer has at least two cells */
    return span < (double)cells ? (size_t)span : cells;
}
