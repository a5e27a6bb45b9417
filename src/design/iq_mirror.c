/* iq_mirror.c — an I/Q pair's thresholds made exactly symmetric where the
 * constellation is its own mirror image across an axis. Reflecting the
 * in-phase coordinate about a line x = c (or the quadrature one about
 * y = c) maps the points, their law and, for the GMI, their labels up to
 * one fixed bit flip onto themselves; the circular noise and a phase
 * error of even law do not change under it. The MI and the GMI of the
 * mirrored thresholds are then those of the thresholds themselves, and a
 * search that ends at a symmetric optimum ends there only to its own
 * rounding: 64-QAM's middle threshold came out as 7.9e-13 instead of 0.
 * Thresholds that mirror one another about c to within MIRROR_REL of
 * their smallest gap are set exactly symmetric, the middle one (an odd
 * count) on c; otherwise they are left as they are. The rate moves by the
 * square of that shift, below rounding. */
#include "design/design_internal.h"

#include <math.h>

#define MIRROR_REL 1e-9    /* thresholds this share of their gap from mirroring */
#define POINT_REL 1e-12    /* coordinates, laws: equal to this share of the span */

/* Whether coordinate axis (0 in-phase, 1 quadrature) of c mirrors about
 * the middle of its extremes, returned in *centre (0 where it is within
 * the points' rounding of 0: PSK's sines are not exactly opposite); with labels (gmi) the mirror
 * image's label must be the label with one fixed set of bits flipped. */
static int axis_mirrors(const qc_plane *c, int axis, int gmi, double *centre)
{
    const double *u = axis ? c->y : c->x, *v = axis ? c->x : c->y;
    double ulo = INFINITY, uhi = -INFINITY, lo = INFINITY, hi = -INFINITY;
    for (size_t i = 0; i < c->size; i++) {
        ulo = fmin(ulo, u[i]);
        uhi = fmax(uhi, u[i]);
        lo = fmin(lo, fmin(u[i], v[i]));
        hi = fmax(hi, fmax(u[i], v[i]));
    }
    const double mean = 0.5 * (ulo + uhi), tol = POINT_REL * fmax(hi - lo, 1e-300);
    size_t flip = 0;
    int flip_known = 0;
    for (size_t i = 0; i < c->size; i++) {
        size_t j = 0;
        while (j < c->size && !(fabs(u[j] - (2.0 * mean - u[i])) <= tol &&
                                fabs(v[j] - v[i]) <= tol))
            j++;
        if (j == c->size ||
            !(fabs(c->prob[j] - c->prob[i]) <= POINT_REL * fmax(c->prob[i], c->prob[j])))
            return 0;
        if (gmi && c->labels) {
            const size_t f = c->labels[i] ^ c->labels[j];
            if (flip_known && f != flip)
                return 0;
            flip = f;
            flip_known = 1;
        }
    }
    *centre = fabs(mean) <= tol ? 0.0 : mean; /* the points' own rounding */
    return 1;
}

/* Whether t[0 .. n−1] mirror one another about centre to within
 * MIRROR_REL of their smallest gap. */
static int nearly_mirrored(const double *t, size_t n, double centre)
{
    double gap = INFINITY;
    for (size_t k = 1; k < n; k++)
        gap = fmin(gap, t[k] - t[k - 1]);
    if (n == 1)
        gap = fabs(t[0] - centre) > 0.0 ? fabs(t[0] - centre) : 1.0;
    for (size_t k = 0; k < n; k++)
        if (!(fabs(t[k] + t[n - 1 - k] - 2.0 * centre) <= MIRROR_REL * gap))
            return 0;
    return 1;
}

static void make_mirrored(double *t, size_t n, double centre)
{
    for (size_t k = 0; k < n / 2; k++) {
        const double half = 0.5 * (t[n - 1 - k] - t[k]);
        t[k] = centre - half;
        t[n - 1 - k] = centre + half;
    }
    if (n % 2)
        t[n / 2] = centre;
}

int qc_iq_snap_mirror(const qc_plane *c, int gmi, int shared, double *ti, size_t nti,
                      double *tq, size_t ntq)
{
    double ci = 0.0, cq = 0.0;
    const int mi = nti > 0 && axis_mirrors(c, 0, gmi, &ci);
    const int mq = ntq > 0 && axis_mirrors(c, 1, gmi, &cq);
    int moved = 0;
    if (shared) { /* one set of thresholds for both axes: both must agree */
        if (mi && mq && nti == ntq && fabs(ci - cq) <= MIRROR_REL * fmax(fabs(ci), 1.0) &&
            nearly_mirrored(ti, nti, ci)) {
            make_mirrored(ti, nti, ci);
            for (size_t k = 0; k < ntq; k++)
                tq[k] = ti[k];
            moved = 2;
        }
        return moved;
    }
    if (mi && nearly_mirrored(ti, nti, ci)) {
        make_mirrored(ti, nti, ci);
        moved++;
    }
    if (mq && nearly_mirrored(tq, ntq, cq)) {
        make_mirrored(tq, ntq, cq);
        moved++;
    }
    return moved;
}
