/* iq_gradient.c — the exact gradient of the MI and of the BICM GMI of a
 * two-dimensional quantizer with respect to its boundaries, in circular
 * Gaussian noise with or without a residual phase error: the I/Q pair's
 * thresholds, and a polar quantizer's (A amplitude rings × P phase
 * sectors) ring radii and sector starts.
 *
 * For the I/Q pair, P(i, k | x) = A_i(x)·B_k(y), the two axes' Gaussian
 * CDF differences, so a threshold t between columns i and i + 1 moves
 * probability at the rate φ((t − x)/σ)/σ·B_k(y) from column i + 1 into
 * column i of each row k (and likewise for the quadrature thresholds).
 * For the polar quantizer:
 *
 * Moving a boundary moves probability between the two cells beside it at
 * the rate of the point's density integrated along the boundary (Leibniz's
 * rule): across the circle of radius r within sector [α, β),
 *   A = ∫_α^β f(r, φ) r dφ
 *     = r/(2πσ²) e^{−(r−s)²/2σ²} ∫_{α−θx}^{β−θx} e^{−κ(1−cos t)} dt,
 * κ = r·s/σ², the last integral by the Fourier series of the von Mises
 * kernel, e^{κ(cos t − 1)} = Ĩ_0(κ) + 2 Σ_k Ĩ_k(κ) cos kt (Ĩ_k = e^{−κ} I_k,
 * GSL's scaled Bessel functions; Abramowitz & Stegun 9.6.34), or by
 * adaptive quadrature where that series grows long; and across the ray at
 * angle φ within ring [r0, r1), R = ∫ f(r, φ) r dr, the ring's closed form
 * of iq_polar.c. A phase error convolves the density in the angle with
 * its law, which multiplies the k-th Fourier coefficient by the law's
 * c_k (Mardia & Jupp, Directional Statistics, 2000, §3.5): the arc
 * series then takes Ĩ_k·c_k (ending where c_k does, so no quadrature),
 * and the ray's density is the series of the ring's angular law with
 * the same c_k (qc_polar_rays). For the I/Q pair the rotated point's
 * derivatives are averaged over the error like its cells (iq_phase.c).
 * Then for either rate, with P_c|x the matrix and Q_c the output law,
 *   dI/dθ   = Σ_x r_x Σ_c (dP_c|x/dθ) log(P_c|x / Q_c),
 *   dGMI/dθ = Σ_x r_x Σ_c (dP_c|x/dθ) Σ_b log(Q_c,b,b(x) / Q_c),
 * Q_c,b,v the mass of cell c with bit b of the label equal to v (the
 * terms from the derivative of the logarithms sum to zero because every
 * row's changes do). The GMI is Böcherer's bit-metric rate H(X) −
 * Σ_b H(B_b|Y) (src/core/gmi.c). */
#include "design/design_internal.h"
#include "quantcap/info.h"
#include "quantcap/iq.h"

#include <gsl/gsl_errno.h>
#include <gsl/gsl_integration.h>
#include <gsl/gsl_math.h>
#include <gsl/gsl_sf_bessel.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#define SERIES_WIDTHS 10.0  /* Ĩ_k/Ĩ_0 ≈ e^{−k²/2κ}: terms up to 10√κ (e^{−50}) */
#define SERIES_EXTRA 20     /* … and 20 more                                   */
#define SERIES_MAX 2048     /* longer series: adaptive quadrature instead      */
#define ARC_TOL 1e-13       /* quadrature: relative error of the arc integral  */
#define ARC_LIMIT 100       /* its subintervals                                */

/* e^{−κ(1 − cos t)} = e^{−2κ sin²(t/2)}, free of cancellation. */
static double vm_kernel(double t, void *vk)
{
    const double h = sin(0.5 * t);
    return exp(-2.0 * *(const double *)vk * h * h);
}

/* Σ_k Ĩ_k sin(k t)/k, k = 1 .. n − 1, sines by the three-term recurrence. */
static double sine_sum(const double *ik, size_t n, double t)
{
    double s_prev = 0.0, s = sin(t), twoc = 2.0 * cos(t), acc = 0.0;
    for (size_t k = 1; k < n; k++) {
        if (k % 64 == 0)
            s = sin((double)k * t), s_prev = sin((double)(k - 1) * t);
        acc += ik[k] * s / (double)k;
        const double next = twoc * s - s_prev;
        s_prev = s;
        s = next;
    }
    return acc;
}

/* The phase error's characteristic function c_k, k < kcut (beyond it
 * negligible); NULL without a phase error. */
typedef struct {
    const double *ck;
    size_t kcut;
} phase_law;

/* The arc integrals of one point across one circle: out[p] for sector p,
 * the sectors' starts relative to the point's angle in rel[0 .. np − 1]
 * and widths in wid[]. */
static qc_status arc_row(double s, double sigma, double r, const double *rel,
                         const double *wid, size_t np, const phase_law *law, double *ik,
                         size_t ik_cap, gsl_integration_workspace *ws, double *out)
{
    const double z = (r - s) / sigma;
    const double lead = r / (2.0 * M_PI * sigma * sigma) * exp(-0.5 * z * z);
    const double kappa = r * s / (sigma * sigma);
    if (lead == 0.0 || kappa == 0.0) {
        for (size_t p = 0; p < np; p++)
            out[p] = lead * wid[p];
        return QC_OK;
    }
    size_t n = (size_t)ceil(SERIES_WIDTHS * sqrt(kappa)) + SERIES_EXTRA;
    if (law && law->kcut < n)
        n = law->kcut > 1 ? law->kcut : 1;
    if ((law || n <= SERIES_MAX) && n <= ik_cap) {
        int gs = gsl_sf_bessel_In_scaled_array(0, (int)n - 1, kappa, ik);
        if (gs != GSL_SUCCESS && gs != GSL_EUNDRFLW)
            return qc_fail(QC_ENOCONV, "iq design: Bessel functions at %g (%s)", kappa,
                           gsl_strerror(gs));
        for (size_t k = 1; law && k < n; k++) /* the phase error's convolution */
            ik[k] *= law->ck[k];
        /* the sectors tile the circle: each one's end is the next one's
         * start (2π on, for the last), so one sum per boundary */
        const double first = sine_sum(ik, n, rel[0]);
        double start = first;
        for (size_t p = 0; p < np; p++) {
            const double end = p + 1 < np ? sine_sum(ik, n, rel[p + 1]) : first;
            out[p] = lead * (ik[0] * wid[p] + 2.0 * (end - start));
            start = end;
        }
        return QC_OK;
    }
    /* a narrow kernel: adaptive quadrature with break points at its peaks */
    double k = kappa;
    gsl_function f = {vm_kernel, &k};
    for (size_t p = 0; p < np; p++) {
        double pts[8], v, err;
        const size_t m = qc_polar_peak_breaks(rel[p], rel[p] + wid[p], 8.0 / sqrt(kappa), pts);
        int gs = gsl_integration_qagp(&f, pts, m, 0.0, ARC_TOL, ARC_LIMIT, ws, &v, &err);
        if (gs != GSL_SUCCESS && gs != GSL_EROUND)
            return qc_fail(QC_ENOCONV, "iq design: the arc integral at kappa %g (%s)", kappa,
                           gsl_strerror(gs));
        out[p] = lead * v;
    }
    return QC_OK;
}

/* Each cell's score per point, sc[x·ny + c], in bits: r_x log(P_c|x/Q_c)
 * (MI) or r_x Σ_b log(Q_c,b,b(x)/Q_c) (GMI); 0 where a mass underflowed.
 * NULL when out of memory (the caller fails). */
static double *scores(const qc_plane *c, const qc_dmc *ch, int gmi)
{
    const size_t nx = ch->nx, ny = ch->ny, nb = gmi ? c->nbits : 0;
    double *sc = qc_malloc_array(nx * ny, sizeof *sc);
    double *q = qc_malloc_array(ny, sizeof *q);
    double *qb = qc_malloc_array(ny * 2 * (nb ? nb : 1), sizeof *qb);
    if (!sc || !q || !qb) {
        free(sc), free(q), free(qb);
        return NULL;
    }
    qc_output_law(ch, c->prob, q);
    if (gmi) {
        memset(qb, 0, ny * 2 * nb * sizeof *qb);
        for (size_t x = 0; x < nx; x++)
            for (size_t y = 0; y < ny; y++) {
                const double m = c->prob[x] * ch->p[x * ny + y];
                for (size_t b = 0; b < nb; b++)
                    qb[(y * nb + b) * 2 + ((c->labels[x] >> b) & 1)] += m;
            }
    }
    for (size_t x = 0; x < nx; x++)
        for (size_t y = 0; y < ny; y++) {
            const double p = ch->p[x * ny + y];
            double v = 0.0;
            if (q[y] > 0.0 && !gmi && p > 0.0) {
                v = log(p / q[y]);
            } else if (q[y] > 0.0 && gmi) {
                for (size_t b = 0; b < nb; b++) {
                    const double m = qb[(y * nb + b) * 2 + ((c->labels[x] >> b) & 1)];
                    v += m > 0.0 ? log(m / q[y]) : 0.0;
                }
            }
            sc[x * ny + y] = c->prob[x] * v / M_LN2;
        }
    free(q), free(qb);
    return sc;
}

/* The series length the arcs of these cells and points can need: that
 * of the largest κ = r·s/σ² (without a phase error, the quadrature takes
 * over beyond SERIES_MAX). */
static size_t longest_series(const qc_plane *c, double sigma, const qc_iq_cells *q)
{
    double smax = 0.0;
    for (size_t x = 0; x < c->size; x++)
        smax = fmax(smax, hypot(c->x[x], c->y[x]));
    const double rmax = q->nradii ? q->radii[q->nradii - 1] : 0.0;
    return (size_t)ceil(SERIES_WIDTHS * sqrt(rmax * smax / (sigma * sigma))) + SERIES_EXTRA;
}

/* What the two parts of the polar gradient share: the points, cells and
 * noise, the scores, the phase error's law, the sector-start densities
 * under it, and the first failure. */
typedef struct {
    const qc_plane *c;
    const qc_iq_cells *q;
    double sigma;
    const double *sc;        /* scores, sc[x·ny + cell]                      */
    const phase_law *law;    /* NULL without a phase error                   */
    const double *rays;      /* under a phase error: every point's densities  */
    const double *rel, *wid; /* every point's sectors: start relative to its
                                angle and width, [x·P + p]                   */
    size_t longest;          /* the series the arcs may need                  */
    qc_parallel_failure failed; /* the first failing (point, radius), x·R + j */
} polar_parts;

/* d/d radius j for every j: Σ_x Σ_p arc_x,j[p]·(score of ring j − of ring
 * j + 1) — mass from ring j + 1 into ring j as it grows — one radius per
 * task, its sum over the points and sectors in the order one thread
 * takes them. */
static void radius_terms(polar_parts *pp, size_t team, double *g_radii)
{
    const qc_plane *c = pp->c;
    const qc_iq_cells *q = pp->q;
    const size_t nx = c->size, np = q->nphases, ny = (q->nradii + 1) * np;
    const size_t ik_cap = (pp->law && pp->longest > SERIES_MAX ? pp->longest : SERIES_MAX) + 1;
    (void)team; /* unused without OpenMP */
#ifdef _OPENMP
#pragma omp parallel num_threads(team) if (team > 1)
#endif
    {
        double *ik = qc_malloc_array(ik_cap, sizeof *ik);
        double *arc = qc_malloc_array(np, sizeof *arc);
        gsl_integration_workspace *ws = gsl_integration_workspace_alloc(ARC_LIMIT);
        const int ready = ik && arc && ws;
#ifdef _OPENMP
#pragma omp for schedule(dynamic)
#endif
        for (size_t j = 0; j < q->nradii; j++) {
            double g = 0.0;
            for (size_t x = 0; x < nx; x++) {
                if (!(c->prob[x] > 0.0))
                    continue;
                const double *sx = pp->sc + x * ny;
                qc_status st = ready ? QC_OK : qc_fail(QC_ENOMEM, "out of memory");
                if (st == QC_OK)
                    st = arc_row(hypot(c->x[x], c->y[x]), pp->sigma, q->radii[j],
                                 pp->rel + x * np, pp->wid + x * np, np, pp->law, ik, ik_cap,
                                 ws, arc);
                if (st != QC_OK) {
                    qc_parallel_failure_note(&pp->failed, x * q->nradii + j, st);
                    break;
                }
                for (size_t p = 0; p < np; p++)
                    g += arc[p] * (sx[j * np + p] - sx[(j + 1) * np + p]);
            }
            g_radii[j] = g;
        }
        free(ik), free(arc);
        if (ws)
            gsl_integration_workspace_free(ws);
    }
}

/* d/d sector start p for every p: Σ_x Σ_a ray_x,a(α_p)·(score of sector
 * p − 1 − of sector p) — mass from sector p into sector p − 1 as it grows
 * (under a phase error the densities in pp->rays, else each ring's closed
 * form) — one sector start per task, its sum over the points and rings
 * in the order one thread takes them. */
static void sector_terms(const polar_parts *pp, size_t team, double *g_phases)
{
    const qc_plane *c = pp->c;
    const qc_iq_cells *q = pp->q;
    const size_t nx = c->size, rings = q->nradii + 1, np = q->nphases, ny = rings * np;
    (void)team; /* unused without OpenMP */
#ifdef _OPENMP
#pragma omp parallel for num_threads(team) if (team > 1) schedule(dynamic)
#endif
    for (size_t p = 0; p < np; p++) {
        const size_t prev = p == 0 ? np - 1 : p - 1;
        double g = 0.0;
        for (size_t x = 0; x < nx; x++) {
            if (!(c->prob[x] > 0.0))
                continue;
            const double s = hypot(c->x[x], c->y[x]), rel = pp->rel[x * np + p];
            const double *sx = pp->sc + x * ny;
            for (size_t a = 0; a < rings; a++) {
                const double r0 = a == 0 ? 0.0 : q->radii[a - 1];
                const double r1 = a + 1 < rings ? q->radii[a] : INFINITY;
                const double ray = pp->law ? pp->rays[x * ny + a * np + p]
                                           : qc_polar_ray_mass(s, pp->sigma, r0, r1, rel);
                g += ray * (sx[a * np + prev] - sx[a * np + p]);
            }
        }
        g_phases[p] = g;
    }
}

qc_status qc_polar_gradient(const qc_plane *c, const qc_iq_noise *noise, const qc_iq_cells *q,
                            const qc_dmc *ch, const double *rays_all, int gmi, double *g_radii,
                            double *g_phases)
{
    const size_t nx = c->size, rings = q->nradii + 1, np = q->nphases, ny = rings * np;
    if (ch->nx != nx || ch->ny != ny || (gmi && !c->labels))
        return qc_fail(QC_EINVAL, "iq design: the gradient's matrix does not match");
    const double sigma = noise->sigma;
    const int with_pn = noise->phase_sd > 0.0;
    const size_t longest = longest_series(c, sigma, q);
    qc_polar_series *series = NULL;
    phase_law law = {NULL, 0};
    const double *ck = NULL;
    qc_status st = with_pn ? qc_polar_series_alloc(noise, &series) : QC_OK;
    if (st == QC_OK && with_pn)
        st = qc_polar_phase_law(series, longest, &ck, &law.kcut);
    if (st != QC_OK) {
        qc_polar_series_free(series);
        return st;
    }
    double *sc = scores(c, ch, gmi);
    /* under a phase error: a copy of c_k (the series' own move as it
     * grows) and, unless the caller kept them, every point's densities */
    const size_t own_rays = with_pn && !rays_all && np > 1 ? nx * ny : 0;
    const size_t nck = with_pn ? law.kcut : 0;
    double *buf = qc_malloc_array(nck + own_rays + 2 * nx * np, sizeof *buf);
    if (!sc || !buf) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto done;
    }
    if (with_pn) {
        memcpy(buf, ck, law.kcut * sizeof *ck);
        law.ck = buf;
    }
    double *rays = own_rays ? buf + nck : NULL;
    double *rel = buf + nck + own_rays, *wid = rel + nx * np;
    for (size_t x = 0; x < nx; x++) {
        const double theta = atan2(c->y[x], c->x[x]);
        for (size_t p = 0; p < np; p++)
            qc_polar_sector(q, p, theta, &rel[x * np + p], &wid[x * np + p]);
    }
    for (size_t x = 0; rays && x < nx && st == QC_OK; x++)
        if (c->prob[x] > 0.0)
            st = qc_polar_rays(series, q, c->x[x], c->y[x], sigma, rays + x * ny);
    if (st != QC_OK)
        goto done;
    /* the radii's and the sector starts' sums in OpenMP threads when the
     * work is worth it, each sum whole in one thread: the same bits on any
     * number of threads */
    const size_t team = qc_parallel_team(48 * nx * ny);
    polar_parts pp = {.c = c, .q = q, .sigma = sigma, .sc = sc, .law = with_pn ? &law : NULL,
                      .rays = rays_all ? rays_all : rays, .rel = rel, .wid = wid,
                      .longest = longest};
    qc_parallel_failure_init(&pp.failed, nx * q->nradii);
    radius_terms(&pp, team, g_radii);
    if ((st = qc_parallel_failure_status(&pp.failed)) != QC_OK)
        goto done;
    if (np < 2)
        g_phases[0] = 0.0;
    else
        sector_terms(&pp, team, g_phases);
done:
    free(sc), free(buf);
    qc_polar_series_free(series);
    return st;
}

/* The derivatives of one point's product cells, weighted: out[m] for the
 * in-phase threshold m and out[nti + m] for the quadrature threshold m,
 * each weight × the Gaussian density at the threshold × the score
 * differences across it, summed over the other axis' cells. */
typedef struct {
    const qc_iq_cells *q;
    double x, y, sigma;
    const double *sx; /* the point's scores */
    double *pa, *pb;  /* room for the two axes' cell probabilities */
} product_point;

static void product_point_gradient(const product_point *pt, double x, double y, double weight,
                                   double *out)
{
    const qc_iq_cells *q = pt->q;
    const size_t ki = q->nti + 1, kq = q->ntq + 1;
    const double sigma = pt->sigma, norm = 1.0 / (sigma * sqrt(2.0 * M_PI));
    const double *sx = pt->sx;
    qc_iq_axis_probs(x, sigma, q->ti, q->nti, pt->pa);
    qc_iq_axis_probs(y, sigma, q->tq, q->ntq, pt->pb);
    for (size_t m = 0; m < q->nti; m++) { /* in-phase threshold m */
        const double u = (q->ti[m] - x) / sigma, dens = weight * norm * exp(-0.5 * u * u);
        double acc = 0.0;
        for (size_t k = 0; dens != 0.0 && k < kq; k++)
            acc += pt->pb[k] * (sx[m * kq + k] - sx[(m + 1) * kq + k]);
        out[m] = dens * acc;
    }
    for (size_t m = 0; m < q->ntq; m++) { /* quadrature threshold m */
        const double u = (q->tq[m] - y) / sigma, dens = weight * norm * exp(-0.5 * u * u);
        double acc = 0.0;
        for (size_t i = 0; dens != 0.0 && i < ki; i++)
            acc += pt->pa[i] * (sx[i * kq + m] - sx[i * kq + m + 1]);
        out[q->nti + m] = dens * acc;
    }
}

/* The integrand over the phase error: the point rotated by φ. */
static void rotated_gradient(double phi, double weight, void *vctx, double *out)
{
    const product_point *pt = vctx;
    const double cs = cos(phi), sn = sin(phi);
    product_point_gradient(pt, pt->x * cs - pt->y * sn, pt->x * sn + pt->y * cs, weight, out);
}

/* Point x's weighted threshold derivatives into sum (nt values): averaged
 * over the phase error with avg, or (avg NULL) at the point itself; pa
 * room for both axes' cell probabilities. */
static qc_status point_sums(const qc_plane *c, const qc_iq_noise *noise, const qc_iq_cells *q,
                            const double *sc, qc_phase_average *avg, double *pa, size_t x,
                            double *sum, double *err)
{
    const size_t ki = q->nti + 1, ny = ki * (q->ntq + 1), nt = q->nti + q->ntq;
    memset(sum, 0, nt * sizeof *sum);
    if (!(c->prob[x] > 0.0))
        return QC_OK;
    product_point pt = {q, c->x[x], c->y[x], noise->sigma, sc + x * ny, pa, pa + ki};
    if (!avg) {
        product_point_gradient(&pt, pt.x, pt.y, 1.0, sum);
        return QC_OK;
    }
    return qc_phase_average_run(avg, hypot(c->x[x], c->y[x]), noise->sigma, nt,
                                rotated_gradient, &pt, sum, err);
}

/* One thread's workspace for point_sums: a phase average for nt values
 * under a phase error (else *avg NULL) and room for na probabilities. */
static qc_status sums_ws(const qc_iq_noise *noise, size_t nt, size_t na, qc_phase_average **avg,
                         double **pa)
{
    qc_status st = noise->phase_sd > 0.0 ? qc_phase_average_alloc(noise, nt, avg) : QC_OK;
    if (st == QC_OK && !(*pa = qc_malloc_array(na, sizeof **pa)))
        st = qc_fail(QC_ENOMEM, "out of memory");
    return st;
}

/* Every point's weighted threshold derivatives into sums[x·nt ...] (zeros
 * for a point never sent), each averaged over the phase error if there is
 * one. The points are spread over OpenMP threads when the work is worth
 * it (the matrix's entries, 48 times over under a phase error: at least
 * 48 rotations a point), each thread with its own workspace; a point's
 * sums depend on nothing but the point, and the caller adds them in point
 * order, so the gradient is the same to the bit on any number of threads.
 * A failure is that of the first failing point. */
static qc_status all_point_sums(const qc_plane *c, const qc_iq_noise *noise,
                                const qc_iq_cells *q, const double *sc, double *sums)
{
    const size_t nx = c->size, ki = q->nti + 1, kq = q->ntq + 1;
    const size_t nt = q->nti + q->ntq;
    const int phased = noise->phase_sd > 0.0;
    const size_t team = qc_parallel_team((phased ? 48 : 1) * nx * ki * kq);
    if (team <= 1) { /* in this thread, without a parallel region's cost */
        qc_phase_average *avg = NULL;
        double *pa = NULL, err = 0.0;
        qc_status st = sums_ws(noise, nt, ki + kq, &avg, &pa);
        for (size_t x = 0; st == QC_OK && x < nx; x++)
            st = point_sums(c, noise, q, sc, avg, pa, x, sums + x * nt, &err);
        free(pa);
        qc_phase_average_free(avg);
        return st;
    }
    qc_parallel_failure failed;
    qc_parallel_failure_init(&failed, nx);
#ifdef _OPENMP
#pragma omp parallel num_threads(team)
#endif
    {
        qc_phase_average *avg = NULL;
        double *pa = NULL, err = 0.0;
        const qc_status st = sums_ws(noise, nt, ki + kq, &avg, &pa);
#ifdef _OPENMP
#pragma omp for schedule(dynamic)
#endif
        for (size_t x = 0; x < nx; x++) {
            const qc_status r =
                st == QC_OK ? point_sums(c, noise, q, sc, avg, pa, x, sums + x * nt, &err) : st;
            if (r != QC_OK)
                qc_parallel_failure_note(&failed, x, r);
        }
        free(pa);
        qc_phase_average_free(avg);
    }
    return qc_parallel_failure_status(&failed);
}

qc_status qc_product_gradient(const qc_plane *c, const qc_iq_noise *noise,
                              const qc_iq_cells *q, const qc_dmc *ch, int gmi, double *g_i,
                              double *g_q)
{
    const size_t nx = c->size, ki = q->nti + 1, kq = q->ntq + 1, ny = ki * kq;
    const size_t nt = q->nti + q->ntq;
    if (ch->nx != nx || ch->ny != ny || (gmi && !c->labels))
        return qc_fail(QC_EINVAL, "iq design: the gradient's matrix does not match");
    double *sc = scores(c, ch, gmi);
    double *sums = qc_malloc_array(nx * nt, sizeof *sums);
    if (!sc || !sums) {
        free(sc), free(sums);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    for (size_t m = 0; m < q->nti; m++)
        g_i[m] = 0.0;
    for (size_t m = 0; m < q->ntq; m++)
        g_q[m] = 0.0;
    qc_status st = all_point_sums(c, noise, q, sc, sums);
    for (size_t x = 0; x < nx && st == QC_OK; x++) {
        if (!(c->prob[x] > 0.0))
            continue;
        const double *sum = sums + x * nt;
        for (size_t m = 0; m < q->nti; m++)
            g_i[m] += sum[m];
        for (size_t m = 0; m < q->ntq; m++)
            g_q[m] += sum[q->nti + m];
    }
    free(sc), free(sums);
    return st;
}
