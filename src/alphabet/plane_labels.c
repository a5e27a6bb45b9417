/* plane_labels.c — a searched bit labelling for a constellation that has
 * no Gray labels: the binary switching algorithm of Schreckenbach,
 * Görtz, Hagenauer and Bauch (IEEE GLOBECOM 2003), with the cost of
 * Zeger and Gersho (IEEE Trans. Commun. 38(12), 1990): the Hamming
 * distance between labels weighted by the pairwise error probability's
 * exponential bound exp(−d²/(4σ²)). */
#include "alphabet/alphabet.h"
#include "quantcap/plane.h"

#include <gsl/gsl_rng.h>
#include <math.h>
#include <stdlib.h>

#define MAX_SEARCH_POINTS 1024 /* the pair weights are an M × M table */
#define MAX_SWEEPS 100000      /* swaps per start, far above what is needed */
#define GAIN_TOL 1e-12         /* relative cost decrease that counts as a gain */

static unsigned hamming(size_t a, size_t b)
{
    return (unsigned)__builtin_popcountll((unsigned long long)(a ^ b));
}

/* Pair weights c[i·m + j] = (p_i + p_j)·exp(−|x_i − x_j|²/(4σ²)). */
static double *pair_weights(const qc_plane *c, double sigma)
{
    size_t m = c->size;
    double *w = qc_malloc_array(m * m, sizeof *w);
    if (!w)
        return NULL;
    for (size_t i = 0; i < m; i++)
        for (size_t j = 0; j < m; j++) {
            double dx = c->x[i] - c->x[j], dy = c->y[i] - c->y[j];
            w[i * m + j] = i == j ? 0.0
                                  : (c->prob[i] + c->prob[j]) *
                                        exp(-(dx * dx + dy * dy) / (4.0 * sigma * sigma));
        }
    return w;
}

static double total_cost(const double *w, const size_t *lab, size_t m)
{
    double t = 0.0;
    for (size_t i = 0; i < m; i++)
        for (size_t j = i + 1; j < m; j++)
            t += w[i * m + j] * hamming(lab[i], lab[j]);
    return t;
}

/* Change of the cost when point i takes label slot s (a point's slot
 * s < m, or an unused label s ≥ m) and slot s takes i's label. */
static double swap_delta(const double *w, const size_t *lab, size_t m, size_t i, size_t s)
{
    size_t li = lab[i], ls = lab[s];
    double d = 0.0;
    for (size_t k = 0; k < m; k++) {
        if (k == i || k == s)
            continue;
        d += w[i * m + k] * ((double)hamming(ls, lab[k]) - hamming(li, lab[k]));
        if (s < m)
            d += w[s * m + k] * ((double)hamming(li, lab[k]) - hamming(ls, lab[k]));
    }
    return d;
}

typedef struct {
    double cost;
    size_t i;
} ranked;

static int by_cost_desc(const void *a, const void *b)
{
    const ranked *p = a, *q = b;
    if (p->cost != q->cost)
        return p->cost < q->cost ? 1 : -1;
    return (p->i > q->i) - (p->i < q->i);
}

/* One run of the switching algorithm from the labels in lab (nl slots:
 * the m points' labels, then the unused ones). */
static void switching(const double *w, size_t *lab, size_t m, size_t nl, ranked *rank)
{
    double scale = total_cost(w, lab, m);
    for (size_t sweep = 0; sweep < MAX_SWEEPS; sweep++) {
        for (size_t i = 0; i < m; i++) {
            rank[i].i = i;
            rank[i].cost = 0.0;
            for (size_t k = 0; k < m; k++)
                rank[i].cost += w[i * m + k] * hamming(lab[i], lab[k]);
        }
        qsort(rank, m, sizeof *rank, by_cost_desc);
        int moved = 0;
        for (size_t r = 0; r < m && !moved; r++) {
            size_t i = rank[r].i, best = nl;
            double best_d = -GAIN_TOL * fmax(scale, 1e-300);
            for (size_t s = 0; s < nl; s++) {
                if (s == i)
                    continue;
                double d = swap_delta(w, lab, m, i, s);
                if (d < best_d) {
                    best_d = d;
                    best = s;
                }
            }
            if (best < nl) {
                size_t t = lab[i];
                lab[i] = lab[best];
                lab[best] = t;
                moved = 1;
            }
        }
        if (!moved)
            return;
    }
}

double qc_plane_label_cost(const qc_plane *c, double sigma)
{
    if (!c || !c->labels || !(sigma > 0.0) || c->size > MAX_SEARCH_POINTS)
        return NAN;
    double *w = pair_weights(c, sigma);
    if (!w)
        return NAN;
    double t = total_cost(w, c->labels, c->size);
    free(w);
    return t;
}

qc_status qc_plane_search_labels(qc_plane *c, double sigma, size_t restarts,
                                 unsigned long seed, double *cost_out)
{
    if (!(sigma > 0.0) || !isfinite(sigma))
        return qc_fail(QC_EINVAL, "label search: sigma must be a number > 0 (got %g)", sigma);
    size_t m = c->size;
    if (m < 2 || m > MAX_SEARCH_POINTS)
        return qc_fail(QC_EINVAL, "label search: %zu points (expected 2 to %d)", m,
                       MAX_SEARCH_POINTS);
    unsigned nbits = 0;
    while (((size_t)1 << nbits) < m)
        nbits++;
    if (c->labels && c->nbits != nbits)
        return qc_fail(QC_EINVAL, "label search: the given labels have %u bits; %zu points "
                       "take %u", c->nbits, m, nbits);
    size_t nl = (size_t)1 << nbits;
    double *w = pair_weights(c, sigma);
    size_t *lab = qc_malloc_array(nl, sizeof *lab), *best = qc_malloc_array(nl, sizeof *best);
    ranked *rank = qc_malloc_array(m, sizeof *rank);
    gsl_rng *rng = gsl_rng_alloc(gsl_rng_mt19937);
    if (!w || !lab || !best || !rank || !rng) {
        free(w), free(lab), free(best), free(rank);
        if (rng)
            gsl_rng_free(rng);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    gsl_rng_set(rng, seed);
    double best_cost = INFINITY;
    for (size_t run = 0; run <= restarts; run++) {
        /* the current labels (or the identity) first, then random ones */
        for (size_t s = 0; s < nl; s++)
            lab[s] = s;
        if (run == 0 && c->labels) {
            char *used = calloc(nl, 1);
            if (!used) {
                best_cost = NAN;
                break;
            }
            for (size_t i = 0; i < m; i++) {
                lab[i] = c->labels[i];
                used[c->labels[i]] = 1;
            }
            size_t k = m;
            for (size_t l = 0; l < nl; l++)
                if (!used[l])
                    lab[k++] = l;
            free(used);
        } else if (run > 0) {
            for (size_t s = nl - 1; s > 0; s--) {
                size_t r = gsl_rng_uniform_int(rng, s + 1), t = lab[s];
                lab[s] = lab[r];
                lab[r] = t;
            }
        }
        switching(w, lab, m, nl, rank);
        double cost = total_cost(w, lab, m);
        if (cost < best_cost) {
            best_cost = cost;
            for (size_t s = 0; s < nl; s++)
                best[s] = lab[s];
        }
    }
    qc_status st = QC_OK;
    if (isnan(best_cost))
        st = qc_fail(QC_ENOMEM, "out of memory");
    else if (!c->labels && !(c->labels = qc_malloc_array(m, sizeof *c->labels)))
        st = qc_fail(QC_ENOMEM, "out of memory");
    if (st == QC_OK) {
        for (size_t i = 0; i < m; i++)
            c->labels[i] = best[i];
        c->nbits = nbits;
        c->labelling = "searched";
        if (cost_out)
            *cost_out = best_cost;
    }
    free(w), free(lab), free(best), free(rank);
    gsl_rng_free(rng);
    return st;
}
