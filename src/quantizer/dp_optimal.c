/* dp_optimal.c — MI-optimal merging of a channel's ordered outputs into K
 * contiguous cells by dynamic programming.
 *
 * Method: Kurkoski & Yagi, "Quantization of binary-input discrete
 * memoryless channels", IEEE Trans. IT 60(8), 2014 (DP over contiguous
 * groupings; globally optimal for binary input with outputs sorted by
 * likelihood ratio); He, Cai, Song, Mei, "Dynamic programming for
 * sequential deterministic quantization of discrete memoryless channels",
 * IEEE Trans. IT 67(6), 2021 (q-ary inputs; the quadrangle inequality
 * makes every DP layer a totally monotone matrix searched with SMAWK).
 * SMAWK: Aggarwal, Klawe, Moran, Shor, Wilber, "Geometric applications of
 * a matrix-searching algorithm", Algorithmica 2, 1987.
 *
 * I(X;Y_q) = Σ_cells g(cell) with g = Σ_x r(x) p_x log p_x − q log q,
 * p_x = P(cell|x), q = Σ_x r(x) p_x; p_x comes from prefix sums taken
 * from the nearer end of the output range (below or above the median of
 * P(·|x)), so tail cells do not cancel; one sum per boundary and input
 * keeps the working set small.
 * A cell sums only over the inputs whose mass can reach it (those whose
 * last positive output is at or after its start and whose first is
 * before its end; the others add exact zeros), which matters for large
 * alphabets, where a cell sees a few hundred of thousands of levels.
 * Layer k: D_k[n] = max_m D_{k−1}[m] + g(m, n) over the first n outputs.
 * g(m, n) does not depend on the layer, and the layers' SMAWK searches
 * ask for the same cells again and again (PAM-8 on 512 outputs into 256
 * cells: 275909 requests, 13368 distinct cells), so values are kept in a
 * direct-mapped table (memoization: Michie, "'Memo' functions and
 * machine learning", Nature 218, 1968); a value read back is the value
 * computed, so the result is the same to the bit. */
#include "quantizer/quantizer.h"

#include <math.h>
#include <stdint.h>
#include <stdlib.h>

/* A memo slot: g over the cell whose key a·(n + 1) + b is `key` (0:
 * empty; a key is at least 1, as b > a). */
typedef struct {
    uint64_t key;
    double value;
} memo_slot;

typedef struct {
    size_t nx, n; /* inputs with r(x) > 0 only, fine outputs */
    double *r;    /* their probabilities */
    double *tot;  /* per input: Σ_i P(i|x) */
    uint32_t *med; /* per input: first boundary k with Σ_{i<k} P(i|x) ≥ ½ */
    /* (n + 1) × nx, boundary-major: Σ_{i<k} P(i|x) for k < med[x], else
     * Σ_{i≥k} P(i|x) — each prefix taken from its nearer tail, so a cell
     * far out in either tail is a difference of two small sums */
    double *cum;
    /* per boundary k (n + 1 of them): the inputs x ∈ [from[k], upto[k])
     * hold every input with mass at or after k (from) and every input
     * with mass before k (upto); a cell [a, b) needs x ∈ [from[a], upto[b]) */
    uint32_t *from, *upto;
    memo_slot *memo;    /* the memo of cell values, or NULL (memo_init) */
    unsigned memo_bits; /* log2 of its slots */
} cell_fn;

/* g over outputs [a, b), a < b. */
static double cell_value(const cell_fn *f, size_t a, size_t b)
{
    const size_t nx = f->nx;
    const double *ca = f->cum + nx * a, *cb = f->cum + nx * b;
    double s = 0.0, q = 0.0;
    for (size_t x = f->from[a]; x < f->upto[b]; x++) {
        const size_t m = f->med[x];
        double p;
        if (b < m)
            p = cb[x] - ca[x];           /* both below the median */
        else if (a >= m)
            p = ca[x] - cb[x];           /* both above it */
        else
            p = (f->tot[x] - ca[x]) - cb[x]; /* the cell holds the median */
        if (p > 0.0) {
            s += f->r[x] * p * log(p);
            q += f->r[x] * p;
        }
    }
    if (q > 0.0)
        s -= q * log(q);
    return s;
}

#define MEMO_SLOTS_PER_OUTPUT 64 /* slots per fine output, rounded up to 2^k */
#define MEMO_MIN_BITS 10
#define MEMO_SMALL_BITS 12  /* 64 KB of table: on the heap, in cache */
#define MEMO_CACHED_BITS 15 /* 512 KB of table: it stays in cache */
#define MEMO_MANY_CELLS 16  /* cells from which a DP asks for a cell often
                               enough to pay for a table beyond 64 KB */
#define MEMO_MAX_BITS 18    /* 4 MB of table at most */
#define MEMO_CHEAP_OUTPUTS 1024 /* cheap cells: a memo up to this many outputs */
#define MEMO_DEAR_LEVELS 16 /* levels per one-output cell, on average, from
                               which a cell costs more than a table miss */

/* g over outputs [a, b), through the memo when there is one: a stored
 * value, or one computed and stored over whatever the slot held
 * (Fibonacci hashing of the key: Knuth, TAOCP vol. 3, §6.4). */
static double cell_cached(cell_fn *f, size_t a, size_t b)
{
    if (!f->memo)
        return cell_value(f, a, b);
    const uint64_t key = (uint64_t)a * (uint64_t)(f->n + 1) + (uint64_t)b;
    const size_t slot = (size_t)((key * UINT64_C(0x9E3779B97F4A7C15)) >> (64 - f->memo_bits));
    memo_slot *m = f->memo + slot;
    if (m->key != key) {
        m->key = key;
        m->value = cell_value(f, a, b);
    }
    return m->value;
}

/* from[] and upto[] of cell_fn from the first and last positive output of
 * each input (an input without one reaches no cell). */
static void reach_init(cell_fn *f, const qc_dmc *d, const double *r)
{
    const size_t n = f->n, nx = f->nx;
    for (size_t k = 0; k <= n; k++) {
        f->from[k] = (uint32_t)nx; /* min x whose last output is k, below */
        f->upto[k] = 0;            /* 1 + max x whose first output is k − 1 */
    }
    for (size_t x = 0, j = 0; x < d->nx; x++) {
        if (!(r[x] > 0.0))
            continue;
        const double *row = d->p + x * n;
        size_t first = 0, last = n;
        while (first < n && !(row[first] > 0.0))
            first++;
        while (last > first && !(row[last - 1] > 0.0))
            last--;
        if (first < last) {
            if (j < f->from[last - 1])
                f->from[last - 1] = (uint32_t)j;
            f->upto[first + 1] = (uint32_t)(j + 1);
        }
        j++;
    }
    /* from[k] = min over inputs whose last output is ≥ k; upto[k] = 1 + max
     * over inputs whose first output is < k */
    for (size_t k = n; k-- > 0;)
        if (f->from[k + 1] < f->from[k])
            f->from[k] = f->from[k + 1];
    for (size_t k = 1; k <= n; k++)
        if (f->upto[k - 1] > f->upto[k])
            f->upto[k] = f->upto[k - 1];
}

/* Input j's sums from its nearer tail (cell_fn's cum) into col[0 .. n],
 * its median boundary and total into f; row: its n fine outputs. */
static void tail_sums(cell_fn *f, size_t j, const double *row, double *col)
{
    const size_t n = f->n;
    long double s = 0.0L;
    size_t k = 0;
    for (; k <= n; k++) { /* from below up to the median */
        if (s >= 0.5L)
            break;
        col[k] = (double)s;
        if (k < n)
            s += row[k];
    }
    f->med[j] = (uint32_t)k;
    long double below = k > 0 ? s : 0.0L;
    s = 0.0L;
    for (size_t i = n + 1; i-- > k;) { /* from above down to it */
        if (i < n)
            s += row[i];
        col[i] = (double)s;
    }
    f->tot[j] = (double)(below + s);
}

/* The memo of a DP into `cells` cells, sized by the grid (the figures
 * behind each rule are in docs/methods.md §4):
 *  - none below 3 cells: their one layer of splits asks for each cell
 *    once;
 *  - MEMO_SLOTS_PER_OUTPUT slots per output, 8 per cell below 8 cells: a
 *    direct-mapped table thrashes when nearly full;
 *  - at most MEMO_SMALL_BITS below MEMO_MANY_CELLS cells and
 *    MEMO_CACHED_BITS from there: a table beyond 64 KB is mapped afresh by
 *    malloc and pays a page fault for each page it touches, which only a
 *    DP of many layers, asking for each cell many times, earns back;
 *  - up to MEMO_MAX_BITS where cells are dear (a cell sums over the levels
 *    that reach it, MEMO_DEAR_LEVELS or more on average);
 *  - none for a grid of cheap cells beyond MEMO_CHEAP_OUTPUTS outputs,
 *    where a table in cache would miss for most requests and save less
 *    than it costs. */
static qc_status memo_init(cell_fn *f, size_t cells)
{
    if (cells < 3)
        return QC_OK; /* one layer of splits asks for each cell once */
    const size_t per_output = cells < MEMO_SLOTS_PER_OUTPUT / 8 ? 8 * cells
                                                                : MEMO_SLOTS_PER_OUTPUT;
    double reach = 0.0; /* levels summed over per one-output cell */
    for (size_t k = 0; k < f->n; k++)
        reach += f->upto[k + 1] > f->from[k] ? (double)(f->upto[k + 1] - f->from[k]) : 0.0;
    const int dear = reach >= MEMO_DEAR_LEVELS * (double)f->n;
    if (!dear && f->n + 1 > MEMO_CHEAP_OUTPUTS)
        return QC_OK;
    const unsigned cap = dear                      ? MEMO_MAX_BITS
                         : cells >= MEMO_MANY_CELLS ? MEMO_CACHED_BITS
                                                    : MEMO_SMALL_BITS;
    f->memo_bits = MEMO_MIN_BITS;
    while (f->memo_bits < cap && ((size_t)1 << f->memo_bits) < per_output * (f->n + 1))
        f->memo_bits++;
    f->memo = qc_calloc((size_t)1 << f->memo_bits, sizeof *f->memo);
    if (!f->memo)
        return qc_fail(QC_ENOMEM, "out of memory for the DP's table of %zu cells",
                       (size_t)1 << f->memo_bits);
    return QC_OK;
}

#define CUM_BLOCK 8 /* inputs whose sums are written to cum together */

static qc_status cell_fn_init(cell_fn *f, const qc_dmc *d, const double *r, size_t cells)
{
    const size_t n = d->ny;
    size_t nx = 0;
    for (size_t x = 0; x < d->nx; x++)
        nx += r[x] > 0.0;
    f->nx = nx;
    f->n = n;
    f->r = qc_malloc_array(nx, sizeof *f->r);
    f->tot = qc_malloc_array(nx, sizeof *f->tot);
    f->med = qc_malloc_array(nx, sizeof *f->med);
    f->cum = qc_malloc_array((n + 1) * nx, sizeof *f->cum);
    f->from = qc_malloc_array(2 * (n + 1), sizeof *f->from);
    f->upto = f->from ? f->from + n + 1 : NULL;
    double *cols = qc_malloc_array(CUM_BLOCK * (n + 1), sizeof *cols);
    if (!f->r || !f->tot || !f->med || !f->cum || !f->from || !cols) {
        free(cols);
        return qc_fail(QC_ENOMEM, "out of memory for a %zu x %zu fine channel",
                       d->nx, n);
    }
    /* the sums of CUM_BLOCK inputs at a time, each input's in its own
     * column, then written boundary by boundary into the boundary-major
     * cum: whole cache lines instead of one double per line */
    size_t j = 0;
    for (size_t x = 0; x < d->nx;) {
        const size_t j0 = j;
        for (; x < d->nx && j - j0 < CUM_BLOCK; x++)
            if (r[x] > 0.0) {
                f->r[j] = r[x];
                tail_sums(f, j, d->p + x * n, cols + (j - j0) * (n + 1));
                j++;
            }
        for (size_t k = 0; k <= n; k++)
            for (size_t b = 0; b < j - j0; b++)
                f->cum[nx * k + j0 + b] = cols[b * (n + 1) + k];
    }
    free(cols);
    reach_init(f, d, r);
    return memo_init(f, cells);
}

static void cell_fn_free(cell_fn *f)
{
    free(f->r);
    free(f->tot);
    free(f->med);
    free(f->cum);
    free(f->from);
    free(f->memo);
}

/* ---- SMAWK row maxima of one layer ---------------------------------- */

typedef struct {
    cell_fn *f;
    const double *prev; /* D_{k−1}[m] */
    double *val;        /* D_k[n] */
    uint32_t *arg;      /* leftmost argmax m of row n */
} layer;

/* Entry (row n, column m). Columns m ≥ n are not splits; they get values
 * below every real entry and decreasing along the row, which keeps the
 * matrix totally monotone (no ties among them). */
static double entry(const layer *L, uint32_t n, uint32_t m)
{
    if (m < n)
        return L->prev[m] + cell_cached(L->f, m, n);
    return -1e100 * (double)(1 + m - n);
}

/* Row maxima of the rows × cols submatrix into L->val, L->arg. `pool`
 * holds at least 3·nr entries of scratch, `vpool` at least nr. */
static void smawk(const layer *L, uint32_t *pool, double *vpool, const uint32_t *rows,
                  size_t nr, const uint32_t *cols, size_t nc)
{
    if (nr == 0)
        return;
    /* REDUCE: keep at most nr columns that can hold a row maximum.
     * kval[i] caches entry(rows[i], keep[i]), so each comparison costs
     * one new cell evaluation; a column pushed after a pop takes the
     * value of the comparison that popped, which was its own entry. The
     * cache outlives the recursion (which works above vpool + nr) and
     * serves the interpolation below. Together these spare about one
     * entry in seven (PAM-4, N = 16384: 7.3 → 6.2 per row and layer). */
    uint32_t *keep = pool;
    double *kval = vpool;
    size_t top = 0;
    const int cached = nc > nr; /* whether kval was filled */
    if (nc <= nr) { /* nothing to eliminate (each layer's square top call) */
        for (size_t i = 0; i < nc; i++)
            keep[i] = cols[i];
        top = nc;
        nc = 0;
    }
    for (size_t i = 0; i < nc; i++) {
        uint32_t c = cols[i];
        double popped = 0.0; /* entry(rows[top], c) after a pop */
        int have_popped = 0;
        while (top > 0) {
            double v = entry(L, rows[top - 1], c);
            if (kval[top - 1] >= v)
                break;
            top--;
            popped = v;
            have_popped = 1;
        }
        if (top < nr) {
            kval[top] = have_popped ? popped : entry(L, rows[top], c);
            keep[top++] = c;
        }
    }
    /* Odd rows recursively. */
    size_t nodd = nr / 2;
    uint32_t *odd = pool + nr;
    for (size_t i = 0; i < nodd; i++)
        odd[i] = rows[2 * i + 1];
    smawk(L, pool + nr + nodd, vpool + nr, odd, nodd, keep, top);
    /* Even rows between the maxima of their odd neighbours. */
    size_t ci = 0;
    for (size_t i = 0; i < nr; i += 2) {
        uint32_t r = rows[i];
        uint32_t last = i + 1 < nr ? L->arg[rows[i + 1]] : keep[top - 1];
        uint32_t best = keep[ci];
        double bv = cached && ci == i ? kval[i] : entry(L, r, best);
        /* ci < top guards against a matrix that is not totally monotone
         * (quadrangle inequality violated): the result is then only a
         * good split, never an out-of-range access. */
        while (keep[ci] != last && ci + 1 < top) {
            ci++;
            double v = cached && ci == i ? kval[i] : entry(L, r, keep[ci]);
            if (v > bv) {
                bv = v;
                best = keep[ci];
            }
        }
        L->arg[r] = best;
        L->val[r] = bv;
    }
}

/* ---- the dynamic programme ------------------------------------------ */

static qc_status check_law(const double *r, size_t n)
{
    double s = 0.0;
    for (size_t i = 0; i < n; i++) {
        if (!(r[i] >= 0.0) || !isfinite(r[i]))
            return qc_fail(QC_EINVAL, "input probability %zu is %g, expected >= 0",
                           i + 1, r[i]);
        s += r[i];
    }
    if (fabs(s - 1.0) > 1e-9)
        return qc_fail(QC_EINVAL, "input probabilities sum to %.17g, expected 1",
                       s);
    return QC_OK;
}

qc_status qc_dp_quantize(const qc_dmc *fine, const double *input, size_t cells,
                         qc_dp_method method, size_t *cuts, double *mi_nats)
{
    if (!fine || !fine->p || !input || !cuts)
        return qc_fail(QC_EINVAL, "qc_dp_quantize: missing channel, law or output");
    const size_t n = fine->ny, K = cells;
    if (K < 1 || K > n)
        return qc_fail(QC_EINVAL,
                       "cannot merge %zu fine outputs into %zu cells: need 1 <= "
                       "cells <= %zu",
                       n, K, n);
    if (method != QC_DP_FAST && method != QC_DP_PLAIN)
        return qc_fail(QC_EINVAL, "unknown DP method %d", (int)method);
    if (n > UINT32_MAX)
        return qc_fail(QC_EINVAL, "fine grid of %zu outputs is too large", n);
    qc_status st = check_law(input, fine->nx);
    if (st != QC_OK)
        return st;

    const size_t width = n - K + 1; /* rows per layer */
    cell_fn f = {0};
    double *prev = NULL, *cur = NULL;
    uint32_t *arg = NULL, *rows = NULL, *cols = NULL, *pool = NULL;
    double *vpool = NULL;
    uint32_t *split = NULL; /* (K − 1) × width: argmax of layers 2..K */
    st = cell_fn_init(&f, fine, input, K);
    if (st != QC_OK)
        goto done;
    prev = qc_malloc_array(n + 1, sizeof *prev);
    cur = qc_malloc_array(n + 1, sizeof *cur);
    arg = qc_malloc_array(n + 1, sizeof *arg);
    rows = qc_malloc_array(width, sizeof *rows);
    cols = qc_malloc_array(width, sizeof *cols);
    pool = qc_malloc_array(4 * width + 8, sizeof *pool);
    vpool = qc_malloc_array(2 * width + 8, sizeof *vpool);
    split = qc_malloc_array(K > 1 ? (K - 1) * width : 1, sizeof *split);
    if (!prev || !cur || !arg || !rows || !cols || !pool || !vpool || !split) {
        st = qc_fail(QC_ENOMEM,
                     "out of memory for the DP of %zu outputs into %zu cells", n,
                     K);
        goto done;
    }
    /* Layer 1: one cell over outputs [0, m). */
    for (size_t m = 1; m <= width; m++)
        prev[m] = cell_cached(&f, 0, m);
    for (size_t k = 2; k <= K; k++) {
        /* rows n ∈ [k, k + width − 1] (the last layer needs only n = N),
         * columns m ∈ [k − 1, k + width − 2]. */
        size_t r0 = k == K ? n : k, r1 = k + width - 1;
        size_t nr = r1 - r0 + 1;
        layer L = {&f, prev, cur, arg};
        if (method == QC_DP_FAST) {
            for (size_t i = 0; i < nr; i++)
                rows[i] = (uint32_t)(r0 + i);
            for (size_t i = 0; i < width; i++)
                cols[i] = (uint32_t)(k - 1 + i);
            smawk(&L, pool, vpool, rows, nr, cols, width);
        } else {
            for (size_t r = r0; r <= r1; r++) {
                double bv = -INFINITY;
                size_t best = k - 1;
                for (size_t m = k - 1; m < r; m++) {
                    double v = prev[m] + cell_cached(&f, m, r);
                    if (v > bv) {
                        bv = v;
                        best = m;
                    }
                }
                cur[r] = bv;
                arg[r] = (uint32_t)best;
            }
        }
        uint32_t *sp = split + (k - 2) * width;
        for (size_t r = r0; r <= r1; r++)
            sp[r - k] = arg[r];
        double *t = prev;
        prev = cur;
        cur = t;
    }
    /* Trace back the splits. */
    cuts[0] = 0;
    cuts[K] = n;
    for (size_t k = K; k >= 2; k--)
        cuts[k - 1] = split[(k - 2) * width + (cuts[k] - k)];
    for (size_t k = 0; k < K; k++)
        if (!(cuts[k] < cuts[k + 1])) {
            st = qc_fail(QC_ENUMERIC, "DP produced an empty cell %zu", k + 1);
            goto done;
        }
    if (mi_nats) {
        double mi = prev[n];
        if (!isfinite(mi)) {
            st = qc_fail(QC_ENUMERIC, "DP value is not finite");
            goto done;
        }
        *mi_nats = mi > 0.0 ? mi : 0.0;
    }
done:
    cell_fn_free(&f);
    free(prev);
    free(cur);
    free(arg);
    free(rows);
    free(cols);
    free(pool);
    free(vpool);
    free(split);
    return st;
}

qc_status qc_dmc_merge(const qc_dmc *fine, const size_t *cuts, size_t cells,
                       qc_dmc **out)
{
    *out = NULL;
    if (!fine || !cuts || cells < 1)
        return qc_fail(QC_EINVAL, "qc_dmc_merge: missing channel or cuts");
    if (cuts[0] != 0 || cuts[cells] != fine->ny)
        return qc_fail(QC_EINVAL, "cuts must run from 0 to %zu (got %zu to %zu)",
                       fine->ny, cuts[0], cuts[cells]);
    for (size_t k = 0; k < cells; k++)
        if (!(cuts[k] < cuts[k + 1]))
            return qc_fail(QC_EINVAL,
                           "cuts must be strictly increasing: cut %zu (%zu) is not "
                           "below cut %zu (%zu)",
                           k, cuts[k], k + 1, cuts[k + 1]);
    qc_dmc *d;
    qc_status st = qc_dmc_alloc(fine->nx, cells, &d);
    if (st != QC_OK)
        return st;
    for (size_t x = 0; x < fine->nx; x++)
        for (size_t k = 0; k < cells; k++) {
            double s = 0.0;
            for (size_t i = cuts[k]; i < cuts[k + 1]; i++)
                s += fine->p[x * fine->ny + i];
            d->p[x * cells + k] = s;
        }
    *out = d;
    return QC_OK;
}
