/* iq_axes.c — whether a constellation in the plane factors over its two
 * axes: its points are every pair of an in-phase value and a quadrature
 * value, once each, and its law is the product of its marginals (square
 * QAM, uniform or shaped by a product law such as p ∝ exp(−ν|x|²)).
 * Through circular Gaussian noise without a phase error such a
 * constellation is two independent one-dimensional channels, whose
 * mutual informations add (the chain rule: Cover & Thomas, Elements of
 * Information Theory, 2nd ed., 2006, §2.5), for the I/Q pair's cells
 * (iq_design.c) as for the unquantized receiver (iq_rate.c); the I/Q
 * pair's rates and gradient axis by axis are iq_axis_planes.c's. */
#include "design/design_internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

static int by_value(const void *a, const void *b)
{
    const double x = *(const double *)a, y = *(const double *)b;
    return (x > y) - (x < y);
}

/* The distinct values of v[0 .. n − 1], sorted, into out; their count. */
static size_t distinct(const double *v, size_t n, double *out)
{
    memcpy(out, v, n * sizeof *out);
    qsort(out, n, sizeof *out, by_value);
    size_t m = 0;
    for (size_t i = 0; i < n; i++)
        if (m == 0 || out[i] > out[m - 1])
            out[m++] = out[i];
    return m;
}

static size_t index_of(const double *sorted, size_t n, double v)
{
    const double *at = bsearch(&v, sorted, n, sizeof *sorted, by_value);
    return at ? (size_t)(at - sorted) : n;
}

int qc_iq_plane_axes(const qc_plane *c, qc_iq_axes *ax)
{
    const size_t n = c->size;
    memset(ax, 0, sizeof *ax);
    ax->x = qc_malloc_array(4 * n, sizeof *ax->x);
    unsigned char *seen = ax->x ? calloc(n, 1) : NULL;
    if (!seen) {
        free(ax->x);
        ax->x = NULL;
        return -1;
    }
    ax->px = ax->x + n, ax->y = ax->x + 2 * n, ax->py = ax->x + 3 * n;
    ax->nx = distinct(c->x, n, ax->x);
    ax->ny = distinct(c->y, n, ax->y);
    int product = ax->nx >= 2 && ax->ny >= 2 && ax->nx * ax->ny == n;
    memset(ax->px, 0, n * sizeof *ax->px);
    memset(ax->py, 0, n * sizeof *ax->py);
    for (size_t i = 0; product && i < n; i++) {
        const size_t a = index_of(ax->x, ax->nx, c->x[i]), b = index_of(ax->y, ax->ny, c->y[i]);
        product = a < ax->nx && b < ax->ny && !seen[a * ax->ny + b];
        if (product) {
            seen[a * ax->ny + b] = 1;
            ax->px[a] += c->prob[i];
            ax->py[b] += c->prob[i];
        }
    }
    for (size_t i = 0; product && i < n; i++) {
        const double p = c->prob[i];
        const double pq = ax->px[index_of(ax->x, ax->nx, c->x[i])] *
                          ax->py[index_of(ax->y, ax->ny, c->y[i])];
        product = fabs(p - pq) <= QC_IQ_PRODUCT_LAW_TOL * (p + pq);
    }
    free(seen);
    return product;
}

void qc_iq_axes_free(qc_iq_axes *ax)
{
    if (ax) {
        free(ax->x);
        memset(ax, 0, sizeof *ax);
    }
}

void qc_iq_point_axes(const qc_plane *c, const qc_iq_axes *ax, size_t *ia, size_t *ib)
{
    for (size_t i = 0; i < c->size; i++) {
        ia[i] = index_of(ax->x, ax->nx, c->x[i]);
        ib[i] = index_of(ax->y, ax->ny, c->y[i]);
    }
}
