/* ppm.c — information rates of M-ary pulse-position modulation (PPM)
 * seen through a per-slot quantizer: one symbol is M slots, one of which
 * carries the pulse, and each slot's output falls into one of K cells
 * with law p_on (pulsed slot) or p_off (empty slot), independently.
 *
 * Soft receiver (the quantized counts of all M slots). The symbol channel
 * has K^M outputs, but it is invariant under permutations of the slots,
 * so the uniform law achieves its capacity (Gallager, Information Theory
 * and Reliable Communication, 1968, §4.5, symmetric channels) and with
 * the per-cell likelihood ratio ℓ = p_on/p_off the posterior of slot i
 * is ℓ(y_i)/Σ_j ℓ(y_j):
 *
 *     C = log M − E[ log(1 + S/ℓ(Y_1)) ],  S = Σ_{j=2..M} ℓ(Y_j),
 *
 * Y_1 ~ p_on, Y_j ~ p_off. With Frullani's integral log(1 + z) =
 * ∫_0^∞ (1 − e^{−zt}) e^{−t}/t dt (Gradshteyn & Ryzhik 3.434, from memory) and the
 * Laplace transform φ(s) = Σ_k p_off(k) e^{−ℓ_k s} of one empty slot's
 * ratio (S has φ^{M−1}), the expectation becomes one integral,
 *
 *     loss = ∫_0^∞ (1 − φ(s)^{M−1}) ψ(s) / s ds,  ψ(s) = −φ'(s)
 *          = Σ_k p_on(k) e^{−ℓ_k s}
 *
 * (sums over cells with p_off > 0; a pulsed slot in a cell that no empty
 * slot reaches identifies the symbol and costs nothing). The work is
 * O(K) per point, independent of M. The integrand is completely
 * monotone (1 − φ^{M−1} is a Bernstein function, so its quotient by s is
 * completely monotone, and so is ψ; Schilling, Song, Vondraček, Bernstein
 * Functions, 2nd ed., 2012, ch. 3): convex, decreasing, with a fourth
 * derivative ≥ 0, so on any [a, b] its integral lies between the
 * end-corrected trapezoid rule and Simpson's rule (piece_upper and
 * piece_lower below). Bisecting the intervals with the widest bracket
 * until the brackets sum to the tolerance, with the tail
 * beyond the last point bounded by Σ_k p_on(k)·E1(ℓ_k T), certifies the
 * rate up to rounding.
 *
 * Hard receiver: each slot compared with one threshold; the symbol is
 * decided when exactly one slot fires and erased otherwise. Per slot a =
 * P(fire | pulse), b = P(fire | empty); the channel is M-ary symmetric
 * with erasures and its capacity (uniform law, by the same symmetry) is
 * P_c log(M P_c/S) + (M−1) P_w log(M P_w/S) with P_c = a(1−b)^{M−1},
 * P_w = (1−a) b (1−b)^{M−2}, S = P_c + (M−1)P_w. */
#include "core/internal.h"
#include "quantcap/capacity.h"

#include <math.h>
#include <stdlib.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_sf_expint.h>

/* most integrand evaluations before QC_ENOCONV */
#define PPM_MAX_EVALS ((size_t)1 << 24)

typedef struct {
    size_t n;          /* cells with p_off > 0 */
    double *ell;       /* their likelihood ratios */
    double *p_off, *p_on;
    double psi0;       /* ψ(0): pulsed mass in cells an empty slot reaches */
    double others;     /* M − 1 */
    size_t evals;
} ppm_law;

/* F(s) = (1 − φ(s)^{M−1}) ψ(s)/s, its limit (M−1)ψ(0)² at s = 0, and
 * (for s > 0) its derivative F' = [(M−1)φ^{M−2}ψ² − (1 − φ^{M−1})χ]/s −
 * F/s with χ = −ψ' = Σ p_on ℓ e^{−ℓs}. */
static double integrand(ppm_law *L, double s, double *dfds)
{
    L->evals++;
    if (s == 0.0) {
        if (dfds)
            *dfds = NAN;
        return L->others * L->psi0 * L->psi0;
    }
    double one_minus_phi = 0.0, psi = 0.0, chi = 0.0;
    for (size_t k = 0; k < L->n; k++) {
        double e = expm1(-L->ell[k] * s); /* e^{−ℓs} − 1 */
        one_minus_phi -= L->p_off[k] * e;
        psi += L->p_on[k] * (1.0 + e);
        chi += L->p_on[k] * L->ell[k] * (1.0 + e);
    }
    if (one_minus_phi > 1.0)
        one_minus_phi = 1.0;
    double lphi = log1p(-one_minus_phi);
    double g = -expm1(L->others * lphi);
    double f = g * psi / s;
    if (dfds) {
        double gp = L->others * exp((L->others - 1.0) * lphi) * psi; /* g' */
        *dfds = (gp * psi - g * chi) / s - f / s;
    }
    return f;
}

/* Upper bound on ∫_T^∞ F: F(s) ≤ ψ(s)/s and ∫_T^∞ e^{−ℓs}/s ds = E1(ℓT). */
static double tail_bound(const ppm_law *L, double T)
{
    double t = 0.0;
    for (size_t k = 0; k < L->n; k++) {
        if (L->p_on[k] == 0.0)
            continue;
        double x = L->ell[k] * T;
        if (x > 700.0)
            continue; /* E1(x) < e^{−x}/x: below every tolerance */
        gsl_sf_result r;
        int rc = gsl_sf_expint_E1_e(x, &r);
        if (rc == GSL_EUNDRFLW)
            continue;
        if (rc != GSL_SUCCESS)
            return INFINITY;
        t += L->p_on[k] * r.val;
    }
    return t;
}

/* A piece [a, b] of the integral with F and F' at its ends and F at its
 * midpoint. F is completely monotone, so its fourth derivative is ≥ 0:
 * Simpson's rule is an upper bound and the trapezoid rule corrected by
 * the end derivatives, + (h²/12)(F'(a) − F'(b)), a lower bound (their
 * errors are −h⁵F⁗(ξ)/2880 and +h⁵F⁗(ξ)/720; Davis & Rabinowitz,
 * Methods of Numerical Integration, 2nd ed., 1984, §2.9, section from
 * memory); as F is convex
 * and decreasing, the trapezoid rule is an upper bound too, and the
 * midpoint rule and h·F(b) lower ones. The head piece [0, s_lo] uses
 * only h·F(b) ≤ ∫ ≤ h·F(0). */
typedef struct {
    double a, b, fa, fb, fm, da, db;
} piece;

static double piece_upper(const piece *p)
{
    double h = p->b - p->a;
    if (p->a == 0.0)
        return h * p->fa;
    double trap = 0.5 * h * (p->fa + p->fb), simpson = h * (p->fa + 4.0 * p->fm + p->fb) / 6.0;
    return simpson < trap ? simpson : trap;
}
static double piece_lower(const piece *p)
{
    double h = p->b - p->a;
    double r = h * p->fb;
    if (p->a == 0.0)
        return r;
    double m = h * p->fm;
    double tc = 0.5 * h * (p->fa + p->fb) + h * h / 12.0 * (p->da - p->db);
    double lo = m > r ? m : r;
    return isfinite(tc) && tc > lo ? tc : lo;
}
static double piece_gap(const piece *p)
{
    double g = piece_upper(p) - piece_lower(p);
    return g > 0.0 ? g : 0.0;
}

/* Validate one row of K cell probabilities. */
static qc_status check_row(const double *p, size_t cells, const char *name, double *sum)
{
    double s = 0.0;
    for (size_t k = 0; k < cells; k++) {
        if (!(p[k] >= 0.0) || !isfinite(p[k]))
            return qc_fail(QC_EINVAL, "ppm: %s cell %zu has probability %g (must be >= 0)",
                           name, k + 1, p[k]);
        s += p[k];
    }
    if (!(s > 0.0))
        return qc_fail(QC_EINVAL, "ppm: the %s row has no probability", name);
    if (fabs(s - 1.0) > 1e-6)
        return qc_fail(QC_EINVAL, "ppm: the %s row sums to %.17g, expected 1", name, s);
    *sum = s;
    return QC_OK;
}

qc_status qc_ppm_soft_rate(const double *p_off, const double *p_on, size_t cells, size_t slots,
                           double tol_bits, qc_ppm_bounds *out)
{
    qc_gsl_init();
    out->rate_bits = out->upper_bound_bits = NAN;
    out->evaluations = 0;
    if (!p_off || !p_on || cells < 1)
        return qc_fail(QC_EINVAL, "ppm: no cell probabilities given");
    if (slots < 2)
        return qc_fail(QC_EINVAL, "ppm: M must be at least 2 slots (got %zu)", slots);
    if (!(tol_bits > 0.0) || !isfinite(tol_bits))
        return qc_fail(QC_EINVAL, "ppm: tolerance must be > 0 bits (got %g)", tol_bits);
    double s_off, s_on;
    qc_status st;
    if ((st = check_row(p_off, cells, "empty-slot", &s_off)) != QC_OK ||
        (st = check_row(p_on, cells, "pulsed-slot", &s_on)) != QC_OK)
        return st;
    const double logm = log((double)slots);
    ppm_law L = {.others = (double)(slots - 1)};
    L.ell = qc_malloc_array(cells, sizeof *L.ell);
    L.p_off = qc_malloc_array(cells, sizeof *L.p_off);
    L.p_on = qc_malloc_array(cells, sizeof *L.p_on);
    piece *pc = NULL;
    if (!L.ell || !L.p_off || !L.p_on) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto done;
    }
    for (size_t k = 0; k < cells; k++) {
        double po = p_off[k] / s_off, pn = p_on[k] / s_on;
        /* no empty slot lands here (or so rarely that the ratio is beyond
         * doubles): a pulse here identifies the symbol */
        if (!(po > 0.0) || !isfinite(pn / po))
            continue;
        L.p_off[L.n] = po;
        L.p_on[L.n] = pn;
        L.ell[L.n] = pn / po;
        L.psi0 += pn;
        L.n++;
    }
    const double tol = tol_bits / QC_LOG2E; /* nats */
    if (L.psi0 == 0.0) { /* every pulse lands where no empty slot does */
        out->rate_bits = out->upper_bound_bits = logm * QC_LOG2E;
        st = QC_OK;
        goto done;
    }
    /* Jensen: E log(1 + S/ℓ) ≤ log(1 + E[S]/ℓ), E[S] = (M − 1)ψ(0); when
     * that bound on the loss is within the tolerance, it is the bracket */
    double jensen = 0.0;
    for (size_t k = 0; k < L.n; k++)
        if (L.p_on[k] > 0.0)
            jensen += L.p_on[k] * log1p(L.others * L.psi0 / L.ell[k]);
    if (jensen <= tol) {
        out->rate_bits = (logm - jensen) * QC_LOG2E;
        out->upper_bound_bits = logm * QC_LOG2E;
        st = QC_OK;
        goto done;
    }
    /* the grid: 0, then s_lo·2^i up to T with the tail below tol/8 */
    const double f0 = integrand(&L, 0.0, NULL);
    double s_lo = tol / (8.0 * f0);
    double T = s_lo;
    size_t npieces = 1;
    while (tail_bound(&L, T) > tol / 8.0) {
        T *= 2.0;
        npieces++;
        if (npieces > 4096) {
            st = qc_fail(QC_ENUMERIC, "ppm: the rate integral's tail does not fall below "
                                      "the tolerance");
            goto done;
        }
    }
    size_t cap = 2 * npieces + 64;
    if (!(pc = qc_malloc_array(cap, sizeof *pc))) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto done;
    }
    double a = 0.0, fa = f0, da = NAN, b = s_lo;
    for (size_t i = 0; i < npieces; i++) {
        double db, fb = integrand(&L, b, &db);
        pc[i] = (piece){a, b, fa, fb, integrand(&L, 0.5 * (a + b), NULL), da, db};
        a = b;
        fa = fb;
        da = db;
        b *= 2.0;
    }
    const double tail = tail_bound(&L, T);
    for (;;) {
        double lo = 0.0, hi = tail, gap = tail;
        for (size_t i = 0; i < npieces; i++) {
            lo += piece_lower(&pc[i]);
            hi += piece_upper(&pc[i]);
            gap += piece_gap(&pc[i]);
        }
        if (gap <= tol || hi - lo <= tol) {
            out->rate_bits = (logm - hi) * QC_LOG2E;
            out->upper_bound_bits = (logm - lo) * QC_LOG2E;
            if (out->rate_bits < 0.0)
                out->rate_bits = 0.0;
            if (out->upper_bound_bits > logm * QC_LOG2E)
                out->upper_bound_bits = logm * QC_LOG2E;
            st = QC_OK;
            break;
        }
        if (L.evals > PPM_MAX_EVALS) {
            out->rate_bits = (logm - hi) * QC_LOG2E;
            out->upper_bound_bits = (logm - lo) * QC_LOG2E;
            st = qc_fail(QC_ENOCONV, "ppm: the rate bracket is %g bits wide after %zu "
                                     "evaluations (tolerance %g)",
                         (hi - lo) * QC_LOG2E, L.evals, tol_bits);
            break;
        }
        /* bisect every piece holding more than its share of the gap */
        const double share = 0.5 * gap / (double)npieces;
        size_t n0 = npieces;
        for (size_t i = 0; i < n0; i++) {
            if (piece_gap(&pc[i]) <= share)
                continue;
            if (npieces + 1 > cap) {
                size_t nc = 2 * cap;
                piece *g = realloc(pc, nc * sizeof *pc);
                if (!g) {
                    st = qc_fail(QC_ENOMEM, "out of memory");
                    goto done;
                }
                pc = g;
                cap = nc;
            }
            piece p = pc[i];
            if (p.a == 0.0)
                continue; /* the head piece is within tol/8 as it is */
            double m = 0.5 * (p.a + p.b);
            if (!(m > p.a && m < p.b))
                continue; /* at the resolution of doubles */
            double dm;
            (void)integrand(&L, m, &dm); /* F(m) is p.fm; this gives F'(m) */
            pc[i] = (piece){p.a, m, p.fa, p.fm, integrand(&L, 0.5 * (p.a + m), NULL), p.da, dm};
            pc[npieces++] =
                (piece){m, p.b, p.fm, p.fb, integrand(&L, 0.5 * (m + p.b), NULL), dm, p.db};
        }
        if (npieces == n0) { /* nothing left to split: rounding-limited */
            out->rate_bits = (logm - hi) * QC_LOG2E;
            out->upper_bound_bits = (logm - lo) * QC_LOG2E;
            st = qc_fail(QC_ENOCONV, "ppm: the rate bracket stays %g bits wide at the "
                                     "resolution of doubles (tolerance %g)",
                         (hi - lo) * QC_LOG2E, tol_bits);
            break;
        }
    }
done:
    out->evaluations = L.evals;
    free(pc);
    free(L.ell);
    free(L.p_off);
    free(L.p_on);
    return st;
}

/* x·log(x/y) with 0·log 0 = 0 */
static double xlog(double x, double y) { return x > 0.0 ? x * log(x / y) : 0.0; }

qc_status qc_ppm_hard_rate(double fire_on, double fire_off, size_t slots, qc_ppm_hard *out)
{
    out->rate_bits = out->correct = out->wrong = out->erasure = NAN;
    if (slots < 2)
        return qc_fail(QC_EINVAL, "ppm: M must be at least 2 slots (got %zu)", slots);
    if (!(fire_on >= 0.0 && fire_on <= 1.0) || !(fire_off >= 0.0 && fire_off <= 1.0))
        return qc_fail(QC_EINVAL, "ppm: firing probabilities must lie in [0, 1] (got %g, %g)",
                       fire_on, fire_off);
    const double m = (double)slots;
    /* (1 − b)^{M−2}, (1 − b)^{M−1} without cancellation for small b */
    const double q2 = fire_off < 1.0 ? exp((m - 2.0) * log1p(-fire_off)) : (slots == 2 ? 1.0 : 0.0);
    const double pc = fire_on * q2 * (1.0 - fire_off);
    const double pw = (1.0 - fire_on) * fire_off * q2;
    const double s = pc + (m - 1.0) * pw;
    out->correct = pc;
    out->wrong = (m - 1.0) * pw;
    out->erasure = 1.0 - s < 0.0 ? 0.0 : 1.0 - s;
    /* Σ P log(M P / S), each ratio P/S ≤ 1 formed first (no underflow) */
    double r = s > 0.0 ? xlog(pc, s) + (m - 1.0) * xlog(pw, s) + log(m) * s : 0.0;
    out->rate_bits = (r > 0.0 ? r : 0.0) * QC_LOG2E;
    return QC_OK;
}
