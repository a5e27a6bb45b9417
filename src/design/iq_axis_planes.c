/* iq_axis_planes.c — the I/Q pair of a constellation that factors over
 * its axes (iq_axes.c), without a phase error, rated axis by axis. Its MI
 * is the sum of the two axes' MIs; when every bit of the labels is a
 * function of one coordinate (Gray labels of square QAM: a product of two
 * Gray codes), each bit sees only its own axis's output, so the BICM GMI
 * adds over the axes too (Caire, Taricco and Biglieri, IEEE Trans. IT
 * 44(3), 1998: a sum over the bits of I(B_b; Y)). The objective and its
 * exact gradient are those of two one-dimensional "planes" (each axis's
 * values on the in-phase axis, its marginal law and its own bits, one
 * quadrature cell), computed by the same 2-D code (qc_iq_channel_rays,
 * qc_iq_rates_compute, qc_product_gradient) on √M points and √K cells
 * instead of M points and K cells. */
#include "design/design_internal.h"

#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

/* Whether every label bit is a function of one coordinate; if so, each
 * axis value's label of its own bits (in their order) into lx (nx) and
 * ly (ny), their counts into *bx and *by. */
static int labels_split(const qc_plane *c, const qc_iq_axes *ax, const size_t *ia,
                        const size_t *ib, size_t *lx, size_t *ly, unsigned *bx, unsigned *by)
{
    size_t *first_x = lx, *first_y = ly; /* a point's label per axis value, then packed */
    for (size_t a = 0; a < ax->nx; a++)
        first_x[a] = SIZE_MAX;
    for (size_t b = 0; b < ax->ny; b++)
        first_y[b] = SIZE_MAX;
    for (size_t i = 0; i < c->size; i++) {
        if (first_x[ia[i]] == SIZE_MAX)
            first_x[ia[i]] = c->labels[i];
        if (first_y[ib[i]] == SIZE_MAX)
            first_y[ib[i]] = c->labels[i];
    }
    size_t xmask = 0, ymask = 0;
    for (unsigned bit = 0; bit < c->nbits; bit++) {
        int of_x = 1, of_y = 1;
        for (size_t i = 0; i < c->size && (of_x || of_y); i++) {
            const size_t v = (c->labels[i] >> bit) & 1;
            of_x = of_x && v == ((first_x[ia[i]] >> bit) & 1);
            of_y = of_y && v == ((first_y[ib[i]] >> bit) & 1);
        }
        if (!of_x && !of_y)
            return 0;
        if (of_x)
            xmask |= (size_t)1 << bit;
        else
            ymask |= (size_t)1 << bit;
    }
    *bx = *by = 0;
    for (unsigned bit = 0; bit < c->nbits; bit++)
        *bx += (unsigned)((xmask >> bit) & 1), *by += (unsigned)((ymask >> bit) & 1);
    if (*bx == 0 || *by == 0) /* labels that do not tell an axis's values apart */
        return 0;
    for (size_t a = 0; a < ax->nx; a++) { /* pack each axis's own bits */
        size_t v = 0;
        for (unsigned bit = 0, k = 0; bit < c->nbits; bit++)
            if ((xmask >> bit) & 1)
                v |= ((first_x[a] >> bit) & 1) << k++;
        lx[a] = v;
    }
    for (size_t b = 0; b < ax->ny; b++) {
        size_t v = 0;
        for (unsigned bit = 0, k = 0; bit < c->nbits; bit++)
            if ((ymask >> bit) & 1)
                v |= ((first_y[b] >> bit) & 1) << k++;
        ly[b] = v;
    }
    return 1;
}

qc_status qc_iq_axis_planes_build(const qc_plane *c, int with_labels, qc_iq_axis_planes *out,
                                  int *ok)
{
    memset(out, 0, sizeof *out);
    *ok = 0;
    qc_iq_axes ax;
    const int product = qc_iq_plane_axes(c, &ax);
    const size_t n = c->size;
    size_t *idx = product > 0 ? qc_malloc_array(2 * n, sizeof *idx) : NULL;
    const size_t nv = ax.nx + ax.ny;
    out->store = product > 0 ? qc_malloc_array(3 * nv, sizeof *out->store) : NULL;
    out->labels = product > 0 ? qc_malloc_array(nv, sizeof *out->labels) : NULL;
    qc_status st = QC_OK;
    if (product < 0 || (product > 0 && (!idx || !out->store || !out->labels)))
        st = qc_fail(QC_ENOMEM, "out of memory");
    else if (product > 0) {
        qc_iq_point_axes(c, &ax, idx, idx + n);
        unsigned bx = 0, by = 0;
        const int labelled = with_labels && c->labels;
        if (!labelled || labels_split(c, &ax, idx, idx + n, out->labels, out->labels + ax.nx,
                                      &bx, &by)) {
            const size_t counts[2] = {ax.nx, ax.ny};
            const double *values[2] = {ax.x, ax.y}, *laws[2] = {ax.px, ax.py};
            const unsigned bits[2] = {bx, by};
            double *s = out->store;
            for (int k = 0; k < 2; k++) {
                qc_plane *p = &out->plane[k];
                p->size = counts[k];
                p->x = s, p->y = s + counts[k], p->prob = s + 2 * counts[k];
                s += 3 * counts[k];
                memcpy(p->x, values[k], counts[k] * sizeof *p->x);
                memset(p->y, 0, counts[k] * sizeof *p->y);
                memcpy(p->prob, laws[k], counts[k] * sizeof *p->prob);
                p->prob_given = 1;
                p->labels = labelled ? out->labels + (k ? ax.nx : 0) : NULL;
                p->nbits = labelled ? bits[k] : 0;
                p->labelling = c->labelling;
            }
            *ok = 1;
        }
    }
    free(idx);
    qc_iq_axes_free(&ax);
    if (!*ok)
        qc_iq_axis_planes_free(out);
    return st;
}

void qc_iq_axis_planes_free(qc_iq_axis_planes *a)
{
    if (a) {
        free(a->store);
        free(a->labels);
        memset(a, 0, sizeof *a);
    }
}

int qc_iq_axis_planes_same(const qc_iq_axis_planes *a)
{
    const qc_plane *x = &a->plane[0], *y = &a->plane[1];
    if (x->size != y->size)
        return 0;
    for (size_t i = 0; i < x->size; i++)
        if (x->x[i] != y->x[i] ||
            fabs(x->prob[i] - y->prob[i]) > QC_IQ_PRODUCT_LAW_TOL * (x->prob[i] + y->prob[i]))
            return 0;
    return 1;
}

/* The one-axis cells of axis k (0 in-phase, 1 quadrature) of an I/Q pair. */
static qc_iq_cells axis_cells(const qc_iq_cells *q, int k)
{
    qc_iq_cells one = {.kind = QC_IQ_PRODUCT, .ti = k ? q->tq : q->ti, .nti = k ? q->ntq : q->nti};
    return one;
}

double qc_iq_axes_objective(const qc_iq_axis_planes *a, const qc_iq_noise *noise,
                            const qc_iq_cells *q, int gmi, qc_dmc **keep, qc_status *st)
{
    double total = 0.0;
    *st = QC_OK;
    for (int k = 0; k < 2 && *st == QC_OK; k++) {
        const qc_iq_cells one = axis_cells(q, k);
        qc_dmc *ch = NULL;
        qc_iq_rates r;
        if ((*st = qc_iq_channel_rays(&a->plane[k], noise, &one, &ch, NULL, NULL, NULL)) == QC_OK &&
            (*st = qc_iq_rates_compute(&a->plane[k], ch, 0, 0.0, &r)) == QC_OK)
            total += gmi ? r.gmi_bits : r.mi_bits;
        if (keep && *st == QC_OK)
            keep[k] = ch;
        else
            qc_dmc_free(ch);
    }
    return *st == QC_OK ? total : NAN;
}

qc_status qc_iq_axes_gradient(const qc_iq_axis_planes *a, const qc_iq_noise *noise,
                              const qc_iq_cells *q, qc_dmc *const *ch, int gmi, double *g_i,
                              double *g_q)
{
    qc_status st = QC_OK;
    double none[1];
    for (int k = 0; k < 2 && st == QC_OK; k++) {
        const qc_iq_cells one = axis_cells(q, k);
        st = qc_product_gradient(&a->plane[k], noise, &one, ch[k], gmi, k ? g_q : g_i, none);
    }
    return st;
}
