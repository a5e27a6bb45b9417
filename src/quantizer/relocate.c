/* relocate.c — moving one threshold to another slot, to leave a local
 * maximum of I(X;Y_q) for a better one. With more cells than levels the
 * rate has several local maxima that differ in how many thresholds sit in
 * each slot (between the outputs of two neighbouring levels sent, or
 * beyond the outermost; a level's output is placed at its mean), often
 * by 1e-6 bit or less — below what a grid resolves. As in the enhanced
 * LBG algorithm (Patanè & Russo, "The enhanced LBG algorithm", Neural
 * Networks 14(9), 2001), a threshold leaves the slot where it is worth
 * least for one where one more is worth more.
 * A slot's worth is rated locally: I(X;Y_q) is a sum of cell terms
 * g(c) = Σ_x r(x) P_c(x) log P_c(x) − q_c log q_c, each fixed by its
 * cell's two ends, so with a slot's neighbours held a change of its
 * thresholds changes the rate exactly by the change of the cells between
 * them, which costs a few thresholds' worth of work. Each round rates,
 * slot by slot, one threshold fewer (the one whose merge costs least
 * taken out) and one more (started in the middle of the slot's widest
 * gap), each after SLOT_STEPS Newton steps with the neighbours held
 * (qc_refine_held). For slots that are not neighbours, drop + add is the
 * exact rate change of the composed thresholds; held neighbours make it
 * low, by about as much for every move, so it ranks the moves and the
 * RELOCATE_TRIALS best are refined whole (qc_refine_trial, from the
 * composed thresholds). The first that raises the rate by more than
 * rounding (RELOCATE_MIN_GAIN) is kept; rounds repeat while one is, at
 * most RELOCATE_ROUNDS. Only a move that raises the refined rate is
 * kept, so the rate never drops. When the channel at the current
 * thresholds is its own mirror image (PAM in Gaussian noise, say), the
 * slots of the right half take the mirrored ratings and thresholds of
 * those of the left, and the mirror of a move that did not gain, which
 * would end in the mirror of its result at the same rate, is passed over
 * (and still counted among the RELOCATE_TRIALS, so that the moves refined
 * are the same). A trial ends once it comes near a local maximum already
 * known (the incumbents of every round and, on a channel that is its own
 * mirror image, their mirror images): it would end there. */
#include "quantizer/quantizer.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#define RELOCATE_TRIALS 12      /* moves refined whole per round */
#define RELOCATE_MIN_GAIN 1e-13 /* × the rate: a smaller gain is rounding */
#define RELOCATE_ROUNDS 8
#define SLOT_STEPS 2 /* Newton iterations that rate a slot's change: enough
                         to rank the moves, which are then refined whole */
#define OUTER_START 2.0 /* × the noise scale: a new outermost threshold's start
                           beyond its neighbour */

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

/* The thresholds between the outputs of two neighbouring levels sent (or
 * beyond the outermost), and the rate changes of one fewer and one more
 * there. */
typedef struct {
    double lo, hi;          /* the outputs of the levels around it (±∞ outside) */
    size_t first, n;        /* its thresholds t[first .. first + n) */
    double drop, add;       /* rate change, nats (−∞: not possible) */
    double *t_drop, *t_add; /* their thresholds: n − 1 and n + 1 */
} slot;

static int by_value(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

/* Where the output of each level sent lies (its mean; the middle of its
 * support when the model gives no moments), sorted, into lv; their
 * number. Levels and outputs may have different units (intensity and
 * electrons), so the slots are bounded by these. */
static size_t sent_levels(const qc_cell_mi *w, double *lv)
{
    const qc_model_type *ty = qc_model_get_type(w->model);
    size_t n = 0;
    for (size_t x = 0; x < w->nlevels; x++) {
        if (!(w->input[x] > 0.0))
            continue;
        double mean, var;
        if (!ty->moments || ty->moments(w->model, w->levels[x], &mean, &var) != QC_OK ||
            !isfinite(mean))
            mean = 0.5 * (w->sup_lo[x] + w->sup_hi[x]);
        if (isfinite(mean))
            lv[n++] = mean;
    }
    qsort(lv, n, sizeof *lv, by_value);
    return n;
}

/* The rate of the cells between slot s's neighbours (t[first − 1] and
 * t[first + n], held) with `inner` (m thresholds) between them; refine:
 * Newton steps on inner first (qc_refine_held), which it then holds. */
static qc_status slot_rate(const qc_cell_mi *w, double scale, const double *t, const slot *s,
                           double *inner, size_t m, int refine, double *rate)
{
    const int left = s->first > 0, right = s->first + s->n < w->nt;
    const size_t nu = m + (size_t)left + (size_t)right;
    qc_cell_mi *sub = NULL;
    double *u = qc_malloc_array(nu, sizeof *u);
    if (!u)
        return qc_fail(QC_ENOMEM, "out of memory for a slot of %zu thresholds", m);
    qc_status st = qc_cell_mi_alloc(w->model, w->levels, w->input, w->nlevels, nu, &sub);
    if (st == QC_OK) {
        sub->clip = w->clip;
        if (left)
            u[0] = t[s->first - 1];
        memcpy(u + left, inner, m * sizeof *u);
        if (right)
            u[nu - 1] = t[s->first + s->n];
        st = refine ? qc_refine_held(sub, scale, left, right, SLOT_STEPS, u, rate, NULL)
                    : qc_cell_mi_eval(sub, u, rate, NULL);
        if (refine)
            memcpy(inner, u + left, m * sizeof *u);
    }
    qc_cell_mi_free(sub);
    free(u);
    return st;
}

/* Slot s with one threshold fewer: the one whose merge costs least
 * (exactly, from the channel w holds at t) taken out, the rest refined. */
static qc_status slot_drop(const qc_cell_mi *w, double scale, const double *t, slot *s,
                           double base)
{
    const size_t nx = w->nlevels, K = w->nt + 1;
    const double *P = w->channel->p, *r = w->input;
    s->drop = -INFINITY;
    if (s->n == 0)
        return QC_OK;
    double *pa = qc_malloc_array(3 * nx, sizeof *pa);
    if (!pa)
        return qc_fail(QC_ENOMEM, "out of memory");
    double *pb = pa + nx, *pm = pb + nx;
    size_t cheapest = s->first;
    double least = INFINITY;
    for (size_t j = s->first; j < s->first + s->n; j++) {
        for (size_t x = 0; x < nx; x++) {
            pa[x] = P[x * K + j];
            pb[x] = P[x * K + j + 1];
            pm[x] = pa[x] + pb[x];
        }
        double cost = cell_term(r, pa, nx) + cell_term(r, pb, nx) - cell_term(r, pm, nx);
        if (cost < least) {
            least = cost;
            cheapest = j;
        }
    }
    free(pa);
    size_t m = 0;
    for (size_t j = s->first; j < s->first + s->n; j++)
        if (j != cheapest)
            s->t_drop[m++] = t[j];
    double rate;
    qc_status st = slot_rate(w, scale, t, s, s->t_drop, m, 1, &rate);
    if (st == QC_OK && isfinite(rate))
        s->drop = rate - base;
    return st;
}

/* Slot s with one threshold more, started in the middle of its widest
 * gap (the levels around it bound the slot), refined. */
static qc_status slot_add(const qc_cell_mi *w, double scale, const double *t, slot *s,
                          double base)
{
    const double *own = t + s->first;
    double a = s->lo, b = s->hi;
    if (!isfinite(a))
        a = (s->n ? own[0] : b) - OUTER_START * scale;
    if (!isfinite(b))
        b = (s->n ? own[s->n - 1] : a) + OUTER_START * scale;
    s->add = -INFINITY;
    /* the widest of the gaps a | own[0] | … | own[n − 1] | b */
    size_t at = 0;
    double widest = -INFINITY;
    for (size_t k = 0; k <= s->n; k++) {
        double from = k ? own[k - 1] : a, to = k < s->n ? own[k] : b;
        if (to - from > widest) {
            widest = to - from;
            at = k;
        }
    }
    if (!(widest > 0.0))
        return QC_OK;
    memcpy(s->t_add, own, at * sizeof *own);
    s->t_add[at] = 0.5 * ((at ? own[at - 1] : a) + (at < s->n ? own[at] : b));
    memcpy(s->t_add + at + 1, own + at, (s->n - at) * sizeof *own);
    double rate;
    qc_status st = slot_rate(w, scale, t, s, s->t_add, s->n + 1, 1, &rate);
    if (st == QC_OK && isfinite(rate))
        s->add = rate - base;
    return st;
}

/* Thresholds t among the slots: their ends and the start of each. */
static void fill_slots(const double *lv, size_t nlv, const double *t, size_t nt,
                       slot *sl, double *store)
{
    size_t j = 0;
    for (size_t g = 0; g <= nlv; g++) {
        slot *s = sl + g;
        s->lo = g ? lv[g - 1] : -INFINITY;
        s->hi = g < nlv ? lv[g] : INFINITY;
        s->first = j;
        while (j < nt && (g == nlv || t[j] <= s->hi))
            j++;
        s->n = j - s->first;
        /* drop: n − 1 thresholds, add: n + 1, side by side */
        s->t_drop = store + 2 * s->first + g;
        s->t_add = s->t_drop + (s->n ? s->n - 1 : 0);
    }
}

/* The thresholds of t with slot A's replaced by its drop and slot B's by
 * its add, in order, into tt; 0 if two of them coincide. */
static int compose(const slot *sl, size_t nslots, const double *t, size_t A, size_t B,
                   double *tt, size_t nt)
{
    size_t n = 0;
    for (size_t g = 0; g < nslots; g++) {
        const slot *s = sl + g;
        const double *from = g == A ? s->t_drop : g == B ? s->t_add : t + s->first;
        size_t m = g == A ? s->n - 1 : g == B ? s->n + 1 : s->n;
        memcpy(tt + n, from, m * sizeof *tt);
        n += m;
    }
    qsort(tt, nt, sizeof *tt, by_value); /* neighbouring slots may overlap */
    for (size_t j = 0; j < nt; j++)
        if (!isfinite(tt[j]) || (j > 0 && !(tt[j] > tt[j - 1])))
            return 0;
    return 1;
}

typedef struct {
    size_t from, to; /* a threshold leaves slot `from` for slot `to` */
    double change;   /* drop[from] + add[to], nats */
} move;

/* Largest change first; ties in the order of the slots. */
static int by_change(const void *a, const void *b)
{
    const move *p = a, *q = b;
    if (p->change != q->change)
        return (p->change < q->change) - (p->change > q->change);
    if (p->from != q->from)
        return (p->from > q->from) - (p->from < q->from);
    return (p->to > q->to) - (p->to < q->to);
}

/* Whether each slot holds as many thresholds as its mirror image. */
static int slots_mirrored(const slot *sl, size_t nslots)
{
    for (size_t g = 0; g < nslots; g++)
        if (sl[g].n != sl[nslots - 1 - g].n)
            return 0;
    return 1;
}

/* Slot s's rate changes and thresholds as the mirror image (about mid2/2)
 * of slot from's. */
static void mirror_slot(const slot *from, slot *s, double mid2)
{
    s->drop = from->drop;
    s->add = from->add;
    const size_t nd = s->n ? s->n - 1 : 0;
    if (isfinite(s->drop))
        for (size_t k = 0; k < nd; k++)
            s->t_drop[k] = mid2 - from->t_drop[nd - 1 - k];
    if (isfinite(s->add))
        for (size_t k = 0; k <= s->n; k++)
            s->t_add[k] = mid2 - from->t_add[s->n - k];
}

/* Thresholds t (nt of them), a local maximum, and with `mirror` also
 * their mirror image about mid2/2, appended to those known,
 * seen[0 .. *nseen·nt). */
static void remember(const double *t, size_t nt, int mirror, double mid2, double *seen,
                     size_t *nseen)
{
    memcpy(seen + (*nseen)++ * nt, t, nt * sizeof *t);
    if (mirror) {
        for (size_t j = 0; j < nt; j++)
            seen[*nseen * nt + j] = mid2 - t[nt - 1 - j];
        (*nseen)++;
    }
}

/* Whether the mirror image of move i is among the moves before it. */
static int mirror_tried(const move *mv, size_t i, size_t nslots)
{
    const size_t from = nslots - 1 - mv[i].from, to = nslots - 1 - mv[i].to;
    for (size_t k = 0; k < i; k++)
        if (mv[k].from == from && mv[k].to == to)
            return 1;
    return 0;
}

/* The (at most) k slots of largest finite drop (adds 0) or add (adds 1),
 * ties to the lower slot, into out; their number. The best k − 1 moves
 * by drop + add all leave one of the k best drops for one of the k best
 * adds: a move outside them has k − 1 moves at least as good ahead of
 * it. */
static size_t best_slots(const slot *sl, size_t nslots, int adds, size_t k, size_t *out)
{
    size_t m = 0;
    for (size_t g = 0; g < nslots; g++) {
        double v = adds ? sl[g].add : sl[g].drop;
        if (!isfinite(v))
            continue;
        size_t at = m < k ? m++ : k; /* insert below the better ones */
        while (at > 0 && v > (adds ? sl[out[at - 1]].add : sl[out[at - 1]].drop)) {
            if (at < k)
                out[at] = out[at - 1];
            at--;
        }
        if (at < k)
            out[at] = g;
    }
    return m;
}

qc_status qc_relocate_thresholds(qc_cell_mi *w, double scale, double *t, double *mi_nats,
                                 size_t *iterations)
{
    const size_t nt = w->nt, nx = w->nlevels;
    if (nt < 2 || !(nx > 0))
        return QC_OK;
    /* one block: lv[nx], tt[nt], the slots' thresholds store[2·nt + nx + 1],
     * the local maxima known: each round's incumbent and, on a channel that
     * is its own mirror image, its mirror image, seen[2·RELOCATE_ROUNDS·nt] */
    double *lv = qc_malloc_array(nx + nt + 2 * nt + nx + 1 + 2 * RELOCATE_ROUNDS * nt,
                                 sizeof *lv);
    const size_t nlv = lv ? sent_levels(w, lv) : 0, nslots = nlv + 1;
    slot *sl = qc_malloc_array(nslots, sizeof *sl);
    if (!lv || !sl) {
        free(lv);
        free(sl);
        return qc_fail(QC_ENOMEM, "out of memory for moving %zu thresholds", nt);
    }
    size_t give[RELOCATE_TRIALS + 1], take[RELOCATE_TRIALS + 1];
    move mv[(RELOCATE_TRIALS + 1) * (RELOCATE_TRIALS + 1)];
    double *tt = lv + nx, *store = tt + nt, *seen = store + 2 * nt + nx + 1;
    size_t nseen = 0;
    qc_status st = QC_OK;
    double mi = *mi_nats;
    int model_mirrored = 0; /* the channel is its own mirror image about mid2/2 */
    const double mid2 = nlv ? lv[0] + lv[nlv - 1] : 0.0;
    for (int round = 0; round < RELOCATE_ROUNDS && st == QC_OK; round++) {
        if ((st = qc_cell_mi_eval(w, t, &mi, NULL)) != QC_OK)
            break;
        fill_slots(lv, nlv, t, nt, sl, store);
        const int symmetric = qc_cell_mi_mirrored(w, t);
        if (round == 0 && !symmetric && nlv > 0)
            st = qc_cell_mi_model_mirrored(w, t, mid2, &model_mirrored);
        model_mirrored |= symmetric;
        remember(t, nt, model_mirrored && !symmetric, mid2, seen, &nseen);
        const int mirrored = symmetric && slots_mirrored(sl, nslots);
        /* each slot's rate changes, exact for the cells between its
         * held neighbours (for a mirror image, those of the slots of its
         * left half mirrored) */
        for (size_t g = 0; g < nslots && st == QC_OK; g++) {
            if (mirrored && nslots - 1 - g < g) {
                mirror_slot(sl + nslots - 1 - g, sl + g, t[0] + t[nt - 1]);
                continue;
            }
            double base;
            st = slot_rate(w, scale, t, sl + g, t + sl[g].first, sl[g].n, 0, &base);
            if (st == QC_OK)
                st = slot_drop(w, scale, t, sl + g, base);
            if (st == QC_OK)
                st = slot_add(w, scale, t, sl + g, base);
        }
        if (st != QC_OK)
            break;
        /* the best moves, from the best drops to the best adds */
        size_t ng = best_slots(sl, nslots, 0, RELOCATE_TRIALS + 1, give);
        size_t nk = best_slots(sl, nslots, 1, RELOCATE_TRIALS + 1, take), nm = 0;
        for (size_t a = 0; a < ng; a++)
            for (size_t b = 0; b < nk; b++)
                if (give[a] != take[b])
                    mv[nm++] = (move){give[a], take[b], sl[give[a]].drop + sl[take[b]].add};
        qsort(mv, nm, sizeof *mv, by_change);
        int moved = 0;
        for (size_t i = 0; i < nm && i < RELOCATE_TRIALS && !moved && st == QC_OK; i++) {
            if (mirrored && mirror_tried(mv, i, nslots))
                continue;
            if (!compose(sl, nslots, t, mv[i].from, mv[i].to, tt, nt))
                continue;
            double v;
            size_t more = 0;
            st = qc_refine_trial(w, scale, mi, seen, nseen, tt, &v, &more);
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
    free(lv);
    free(sl);
    return st;
}
