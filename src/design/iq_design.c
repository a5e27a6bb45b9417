/* iq_design.c — design of the cells of a two-dimensional receiver: the
 * thresholds of the I/Q pair (one set for both axes or one per axis) and
 * the amplitude and phase boundaries of the polar quantizer, maximizing
 * the MI or the BICM GMI of the exact transition matrix by BFGS (GSL
 * vector_bfgs2; Fletcher, Practical Methods of Optimization, 1987) on the
 * exact gradient (iq_gradient.c, with or without a phase error) of
 * log(H(X) − objective), which keeps the search well scaled where the gap
 * to H(X) is a tail mass spanning decades. Its parameters are the
 * thresholds, radii and sector starts themselves (disordered ones
 * refused), and it restarts from its best cells turned and moved, since
 * from symmetric cells it keeps their symmetry.
 * Both objectives are at most H(X) (the MI of a noiseless channel; the
 * GMI is H(X) less the bits' conditional entropies), so the search ends
 * once it comes within QC_IQ_CEILING_GAP_BITS of it: at high SNR the
 * uniform cells are often there already.
 * The I/Q pair of a constellation whose points and law factor over the
 * axes (square QAM), without a phase error and for the MI, is designed
 * axis by axis instead: its MI is the sum of the two axes' (independent
 * inputs through independent noise), each the MI of a one-dimensional
 * alphabet in Gaussian noise, whose MI-optimal thresholds the quantizer
 * layer finds with the guarantee of its grid DP (optimal.c); so is its
 * GMI with two values and one label bit per axis (QPSK), which is then
 * the MI. Other searches on such a pair rate it axis by axis
 * (iq_axis_planes.c), and where such points and law are searched by BFGS
 * (a phase error, the GMI) the axis-by-axis design is a second start. */
#include "design/design_internal.h"
#include "quantcap/info.h"
#include "quantcap/iq.h"

#include <gsl/gsl_multimin.h>
#include <gsl/gsl_math.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#define DEFAULT_EVALS 4000
#define BAD_POINT 1e6    /* the objective where a channel cannot be built */
#define BFGS_STEP 0.01   /* first trial step of the gradient search       */
#define BFGS_LINE_TOL 0.1 /* its line searches' accuracy (GSL's advice)   */
#define GAP_FLOOR_BITS 1e-16 /* H(X) − objective taken as at least this  */
#define GRAD_TOL 1e-9    /* settled: gradient norm of log(H(X) − rate)    */
#define STALL_ITERATIONS 20 /* … or these iterations together gained less */
#define STALL_GAIN_BITS 1e-10 /* … than this                             */
#define KICKS 4           /* gradient search: restarts from moved cells   */
#define KICK_SIZE 0.2     /* … moved by up to this share of their widths  */
#define MIRROR_SLACK_BITS 1e-12 /* symmetric thresholds: kept unless this lower */
#define PER_AXIS_SLACK_BITS 1e-12 /* per axis: kept unless below the uniform
                                     cells by more than the rounding of the
                                     2-D sums                             */

void qc_iq_design_result_free(qc_iq_design_result *res)
{
    if (!res)
        return;
    free(res->ti), free(res->tq), free(res->radii), free(res->phases);
    memset(res, 0, sizeof *res);
}

typedef struct {
    const qc_plane *c;
    const qc_iq_noise *noise;
    const qc_iq_design_request *req;
    qc_iq_design_result *res;
    double scale; /* spread of the constellation */
    size_t evals;
    double best;
    double *best_z;
    size_t nz;
    double ceiling; /* H(X) in bits, which the objective cannot pass */
    size_t max_evals; /* gradient search: evaluations allowed */
    qc_status fatal;  /* the first failure no other cells can avoid (out of
                         memory); others only make a point unusable      */
    double *rays;     /* polar cells under a phase error: the sector-start
                         densities of the last matrix kept for a gradient
                         (from its series); NULL otherwise               */
    const qc_iq_axis_planes *axes; /* the I/Q pair rated axis by axis
                                      (iq_axis_planes.c), or NULL: the 2-D matrix */
    qc_polar_series *series; /* polar cells: the series workspace, kept from one
                                matrix to the next (NULL otherwise)             */
} design_ctx;

/* The objective of the cells; when keep is not NULL (room for two) their
 * matrix into keep[0], or rated axis by axis the two axes' into keep[0]
 * and keep[1] (the caller frees them), else freed. NaN on failure (*st
 * says). */
static double rate_of(const design_ctx *d, const qc_iq_cells *cells, qc_dmc **keep,
                      qc_status *st)
{
    if (d->axes)
        return qc_iq_axes_objective(d->axes, d->noise, cells,
                                    d->req->objective == QC_OBJECTIVE_GMI, keep, st);
    qc_dmc *ch = NULL;
    *st = qc_iq_channel_rays(d->c, d->noise, cells, &ch, NULL, keep ? d->rays : NULL,
                             d->series);
    if (*st != QC_OK)
        return NAN;
    /* the objective alone (the other of MI and GMI costs as much again) */
    double nats = NAN;
    *st = d->req->objective == QC_OBJECTIVE_GMI
              ? qc_gmi(ch, d->c->prob, d->c->labels, d->c->nbits, &nats)
              : qc_mutual_information(ch, d->c->prob, &nats);
    if (*st != QC_OK || !keep)
        qc_dmc_free(ch);
    else
        *keep = ch;
    if (*st != QC_OK)
        return NAN;
    return nats / M_LN2;
}

/* The uniform start's boundaries from its parameters z (uniform_start: a
 * first value and the gaps' logarithms) into the result's arrays. */
static void unpack(const design_ctx *d, const double *z)
{
    const qc_iq_design_request *q = d->req;
    qc_iq_design_result *r = d->res;
    size_t k = 0;
    if (q->kind == QC_IQ_PRODUCT) {
        size_t ni = q->cells_i - 1, nq = q->cells_q - 1;
        for (size_t j = 0; j < ni; j++, k++)
            r->ti[j] = j == 0 ? d->scale * z[k] : r->ti[j - 1] + d->scale * exp(z[k]);
        if (!q->separate)
            memcpy(r->tq, r->ti, nq * sizeof *r->tq);
        else
            for (size_t j = 0; j < nq; j++, k++)
                r->tq[j] = j == 0 ? d->scale * z[k] : r->tq[j - 1] + d->scale * exp(z[k]);
        return;
    }
    size_t na = q->amplitude_cells - 1, np = q->phase_cells;
    for (size_t j = 0; j < na; j++, k++)
        r->radii[j] = (j == 0 ? 0.0 : r->radii[j - 1]) + d->scale * exp(z[k]);
    double offset = z[k++];
    double w[QC_IQ_MAX_CELLS], sum = 0.0;
    for (size_t p = 0; p < np; p++) {
        w[p] = (p == 0 || q->fixed_phases) ? 1.0 : exp(z[k++]);
        sum += w[p];
    }
    double acc = offset;
    for (size_t p = 0; p < np; p++) {
        r->phases[p] = acc;
        acc += 2.0 * M_PI * w[p] / sum;
    }
}

/* The gradient search's own parameters: for the I/Q pair its in-phase
 * thresholds over the scale (and then the quadrature ones, when apart);
 * for polar cells the radii over the scale, then the sector starts in
 * radians (only the offset with equal sectors). Any ordered set is a
 * valid quantizer; the others are refused (the line search steps back
 * from them). */
static size_t direct_count(const qc_iq_design_request *q)
{
    if (q->kind == QC_IQ_PRODUCT)
        return q->cells_i - 1 + (q->separate ? q->cells_q - 1 : 0);
    return q->amplitude_cells - 1 + (q->fixed_phases ? 1 : q->phase_cells);
}

/* Thresholds t[0 .. n − 1] = scale·v, 0 unless strictly increasing. */
static int thresholds_from(double scale, const double *v, size_t n, double *t)
{
    for (size_t j = 0; j < n; j++) {
        t[j] = scale * v[j];
        if (!isfinite(t[j]) || (j && !(t[j] > t[j - 1])))
            return 0;
    }
    return 1;
}

static int direct_unpack(const design_ctx *d, const double *v)
{
    const qc_iq_design_request *q = d->req;
    qc_iq_design_result *r = d->res;
    if (q->kind == QC_IQ_PRODUCT) {
        const size_t ni = q->cells_i - 1, nq = q->cells_q - 1;
        if (!thresholds_from(d->scale, v, ni, r->ti))
            return 0;
        if (!q->separate) {
            memcpy(r->tq, r->ti, nq * sizeof *r->tq);
            return 1;
        }
        return thresholds_from(d->scale, v + ni, nq, r->tq);
    }
    const size_t na = q->amplitude_cells - 1, np = q->phase_cells;
    for (size_t j = 0; j < na; j++) {
        r->radii[j] = d->scale * v[j];
        if (!(r->radii[j] > (j ? r->radii[j - 1] : 0.0)) || !isfinite(r->radii[j]))
            return 0;
    }
    for (size_t p = 0; p < np; p++) {
        r->phases[p] = q->fixed_phases ? v[na] + 2.0 * M_PI * (double)p / (double)np
                                       : v[na + p];
        if (!isfinite(r->phases[p]) || (p && !(r->phases[p] > r->phases[p - 1])))
            return 0;
    }
    return np < 2 || r->phases[np - 1] < r->phases[0] + 2.0 * M_PI;
}

/* The parameters of the cells in the result into v. */
static void direct_pack(const design_ctx *d, double *v)
{
    const qc_iq_design_request *q = d->req;
    if (q->kind == QC_IQ_PRODUCT) {
        const size_t ni = q->cells_i - 1;
        for (size_t j = 0; j < ni; j++)
            v[j] = d->res->ti[j] / d->scale;
        for (size_t j = 0; q->separate && j + 1 < q->cells_q; j++)
            v[ni + j] = d->res->tq[j] / d->scale;
        return;
    }
    const size_t na = q->amplitude_cells - 1;
    for (size_t j = 0; j < na; j++)
        v[j] = d->res->radii[j] / d->scale;
    for (size_t p = 0; p < (q->fixed_phases ? 1 : q->phase_cells); p++)
        v[na + p] = d->res->phases[p];
}

/* The objective of the cells with parameters v, evaluated and counted
 * (the best kept; their matrices into keep when keep is not NULL, as
 * rate_of, for the caller to free); −∞ when they are invalid, cannot be rated, or the cap
 * is reached (the cap holds even inside a line search). */
static double evaluate(design_ctx *d, const double *v, qc_dmc **keep)
{
    if (d->evals >= d->max_evals || !direct_unpack(d, v))
        return -INFINITY;
    d->evals++;
    qc_status st;
    const double f = rate_of(d, &d->res->cells, keep, &st);
    if (st == QC_ENOMEM && d->fatal == QC_OK)
        d->fatal = st;
    if (st != QC_OK || !isfinite(f))
        return -INFINITY;
    if (f > d->best) {
        d->best = f;
        memcpy(d->best_z, v, direct_count(d->req) * sizeof *v);
    }
    return f;
}

/* v with the boundaries v[first .. first + n − 1] replaced by the n − 1
 * in w and one more at `at` in place g, into trial. */
static void with_boundary(const design_ctx *d, const double *v, size_t first, size_t n,
                          const double *w, size_t g, double at, double *trial)
{
    memcpy(trial, v, direct_count(d->req) * sizeof *trial);
    for (size_t i = 0, k = 0; i < n; i++)
        trial[first + i] = i == g ? at : w[k++];
}

/* The objective and its exact gradient in those parameters (iq_gradient.c,
 * with or without a phase error). */
static double grad_eval(design_ctx *d, const gsl_vector *v, gsl_vector *g)
{
    const qc_iq_design_request *q = d->req;
    const size_t nv = direct_count(q);
    double z[2 * QC_IQ_MAX_CELLS];
    if (g)
        gsl_vector_set_zero(g);
    for (size_t i = 0; i < nv; i++)
        z[i] = gsl_vector_get(v, i);
    qc_dmc *ch[2] = {NULL, NULL};
    double g_r[QC_IQ_MAX_CELLS], g_p[QC_IQ_MAX_CELLS];
    const int gmi = q->objective == QC_OBJECTIVE_GMI;
    const qc_iq_cells *cells = &d->res->cells;
    const double f = evaluate(d, z, g ? ch : NULL);
    if (!isfinite(f))
        return BAD_POINT;
    qc_status st = QC_OK;
    if (g && d->axes)
        st = qc_iq_axes_gradient(d->axes, d->noise, cells, ch, gmi, g_r, g_p);
    else if (g)
        st = q->kind == QC_IQ_PRODUCT
                 ? qc_product_gradient(d->c, d->noise, cells, ch[0], gmi, g_r, g_p)
                 : qc_polar_gradient(d->c, d->noise, cells, ch[0], d->rays, gmi, g_r, g_p);
    qc_dmc_free(ch[0]);
    qc_dmc_free(ch[1]);
    if (st == QC_ENOMEM && d->fatal == QC_OK)
        d->fatal = st;
    if (st != QC_OK)
        return BAD_POINT;
    /* the search minimizes log(H(X) − f): near the ceiling the gap is a
     * tail mass spanning decades, which the logarithm keeps well scaled */
    const double gap = fmax(d->ceiling - f, GAP_FLOOR_BITS);
    const double value = log(gap);
    if (!g)
        return value;
    if (q->kind == QC_IQ_PRODUCT) { /* g_r: in-phase, g_p: quadrature */
        const size_t ni = q->cells_i - 1, nq = q->cells_q - 1;
        for (size_t j = 0; j < ni; j++)
            gsl_vector_set(g, j, -d->scale * (g_r[j] + (q->separate ? 0.0 : g_p[j])) / gap);
        for (size_t j = 0; q->separate && j < nq; j++)
            gsl_vector_set(g, ni + j, -d->scale * g_p[j] / gap);
        return value;
    }
    const size_t na = q->amplitude_cells - 1, np = q->phase_cells;
    for (size_t j = 0; j < na; j++)
        gsl_vector_set(g, j, -d->scale * g_r[j] / gap);
    if (q->fixed_phases) {
        double sum = 0.0;
        for (size_t p = 0; p < np; p++)
            sum += g_p[p];
        gsl_vector_set(g, na, -sum / gap);
    } else {
        for (size_t p = 0; p < np; p++)
            gsl_vector_set(g, na + p, -g_p[p] / gap);
    }
    return value;
}

static double bfgs_f(const gsl_vector *v, void *vctx) { return grad_eval(vctx, v, NULL); }

static void bfgs_df(const gsl_vector *v, void *vctx, gsl_vector *g) { grad_eval(vctx, v, g); }

static void bfgs_fdf(const gsl_vector *v, void *vctx, double *f, gsl_vector *g)
{
    *f = grad_eval(vctx, v, g);
}

/* BFGS (GSL vector_bfgs2: Fletcher, Practical Methods of Optimization,
 * 2nd ed. 1987, the line search of §2.6) from the result's cells on the
 * exact gradient; *settled when the gradient vanishes, no step can
 * improve, or STALL_ITERATIONS iterations together raise the best of all
 * runs by less than STALL_GAIN_BITS. */
static qc_status gradient_search(design_ctx *d, size_t max_evals, double ceiling,
                                 int *settled)
{
    const qc_iq_design_request *q = d->req;
    const size_t nv = direct_count(q);
    gsl_multimin_fdfminimizer *m =
        gsl_multimin_fdfminimizer_alloc(gsl_multimin_fdfminimizer_vector_bfgs2, nv);
    gsl_vector *x = gsl_vector_alloc(nv);
    if (!m || !x) {
        if (m)
            gsl_multimin_fdfminimizer_free(m);
        if (x)
            gsl_vector_free(x);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    /* from the cells in the result */
    double v[2 * QC_IQ_MAX_CELLS];
    direct_pack(d, v);
    for (size_t i = 0; i < nv; i++)
        gsl_vector_set(x, i, v[i]);
    gsl_multimin_function_fdf fn = {bfgs_f, bfgs_df, bfgs_fdf, nv, d};
    gsl_multimin_fdfminimizer_set(m, &fn, x, BFGS_STEP, BFGS_LINE_TOL);
    *settled = 0;
    int restarted = 0;
    /* the best objective of all runs at recent iterations: a restart that
     * has not passed the best before it within STALL_ITERATIONS is given
     * up (letting restarts run on their own progress instead cost 5 to
     * 30 % more matrices on the designs of docs/methods.md §4d and found
     * no better cells) */
    double history[STALL_ITERATIONS];
    size_t iter = 0;
    while (d->evals < max_evals && !*settled && d->best < ceiling - QC_IQ_CEILING_GAP_BITS) {
        const int gs = gsl_multimin_fdfminimizer_iterate(m);
        if (d->fatal != QC_OK)
            break;
        if (d->evals >= max_evals)
            break; /* the cap cut this iteration short: what it saw is not a verdict */
        const size_t slot = iter++ % STALL_ITERATIONS;
        if (iter > STALL_ITERATIONS && d->best - history[slot] < STALL_GAIN_BITS) {
            *settled = 1;
            break;
        }
        history[slot] = d->best;
        if (gsl_multimin_test_gradient(gsl_multimin_fdfminimizer_gradient(m), GRAD_TOL) ==
            GSL_SUCCESS) {
            *settled = 1;
        } else if (gs != GSL_SUCCESS) {
            /* no step along the quasi-Newton direction improves: once
             * along the gradient itself, then settled where it stands */
            if (restarted)
                *settled = 1;
            else
                gsl_multimin_fdfminimizer_restart(m), restarted = 1;
        } else {
            restarted = 0;
        }
    }
    gsl_multimin_fdfminimizer_free(m);
    gsl_vector_free(x);
    return d->fatal;
}

/* Relocation of one boundary among v[first .. first + n − 1] (increasing;
 * radii above 0 when `radial`), as in the enhanced LBG algorithm (Patanè
 * and Russo, Neural Networks 14(9), 2001): the boundary closest to
 * both its neighbours (the smallest span between them; an outer one
 * counts its one gap twice, the innermost radius its gap to 0) is the
 * least useful; it is taken out and put back at the middle of each other
 * gap of the others and beyond either end (one mean gap out; below the
 * innermost radius, halfway to 0). The best of these n − 1 trials
 * becomes the start (in the result's cells). 0 when n < 2 or no trial is
 * valid. */
static int relocate(design_ctx *d, const double *v, size_t first, size_t n, int radial)
{
    if (n < 2)
        return 0;
    const double *t = v + first;
    const double mean_gap = (t[n - 1] - t[0]) / (double)(n - 1);
    size_t out = 0;
    double least = INFINITY;
    for (size_t j = 0; j < n; j++) {
        const double below = j ? t[j] - t[j - 1] : radial ? t[0] : INFINITY;
        const double above = j + 1 < n ? t[j + 1] - t[j] : INFINITY;
        const double span = isinf(below) ? 2.0 * above : isinf(above) ? 2.0 * below
                                                                        : below + above;
        if (span < least)
            least = span, out = j;
    }
    double w[2 * QC_IQ_MAX_CELLS], trial[2 * QC_IQ_MAX_CELLS];
    size_t m = 0;
    for (size_t j = 0; j < n; j++)
        if (j != out)
            w[m++] = t[j];
    double best = -INFINITY, best_at = 0.0;
    size_t best_g = 0;
    for (size_t g = 0; g <= m; g++) { /* the new boundary below w[g] (above all when m) */
        if (g == out)
            continue; /* the gap it came from */
        const double at = g == 0   ? (radial ? 0.5 * w[0] : w[0] - mean_gap)
                          : g == m ? w[m - 1] + mean_gap
                                   : 0.5 * (w[g - 1] + w[g]);
        with_boundary(d, v, first, n, w, g, at, trial);
        const double f = evaluate(d, trial, NULL);
        if (f > best)
            best = f, best_g = g, best_at = at;
    }
    if (!isfinite(best))
        return 0;
    with_boundary(d, v, first, n, w, best_g, best_at, trial);
    return direct_unpack(d, trial);
}

/* Restarts of the gradient search from the best cells so far, moved.
 * BFGS keeps any symmetry of its start (the gradient does), so from the
 * uniform cells of a symmetric constellation it can only reach the best
 * cells of that symmetry. Kick 1 turns every sector by half the mean
 * sector (boundaries where centres were, a symmetry the start lacks);
 * kick 2 moves each radius by up to KICK_SIZE of its gap below and each
 * sector start by up to KICK_SIZE of a mean sector, in a fixed irregular
 * pattern (the fractional parts of k times the golden ratio), so the
 * result does not depend on chance (for the I/Q pair, kicks 1 and 2 are
 * two such patterns). Kicks 3 and 4 relocate one boundary (relocate):
 * a radius (polar cells, kick 3), a shared threshold (I/Q pair), or an
 * in-phase and then a quadrature one (I/Q pair apart). Local maxima
 * differ in which gaps hold a boundary, which no small move changes:
 * 16-QAM through an 8 × 8 I/Q pair at 15 dB under a 5° phase error has
 * maxima with 2, 3 and 2 thresholds around the three gaps of each axis
 * and with 3, 2 and 2, 1.7·10⁻⁴ bit of GMI apart, and through 4 × 16
 * polar cells at 18 dB under a 4° Tikhonov error the relocated radius
 * gains 5.6·10⁻³ bit of MI. 0 if there is nothing to move or the moved
 * cells are invalid. */
static int kick_cells(design_ctx *d, int kick)
{
    const qc_iq_design_request *q = d->req;
    const size_t nv = direct_count(q);
    double v[2 * QC_IQ_MAX_CELLS];
    memcpy(v, d->best_z, nv * sizeof *v);
    if (kick >= 3) {
        if (q->kind == QC_IQ_PRODUCT)
            return kick == 3 ? relocate(d, v, 0, q->cells_i - 1, 0)
                   : q->separate ? relocate(d, v, q->cells_i - 1, q->cells_q - 1, 0)
                                 : 0;
        return kick == 3 ? relocate(d, v, 0, q->amplitude_cells - 1, 1) : 0;
    }
    if (q->kind == QC_IQ_PRODUCT) { /* two irregular patterns */
        const size_t ni = q->cells_i - 1;
        for (size_t i = 0; i < nv; i++) {
            const size_t first = i < ni ? 0 : ni, n = i < ni ? ni : nv - ni;
            const double step = n > 1 ? (v[first + n - 1] - v[first]) / (double)(n - 1) : 0.5;
            const double u = fmod((double)(i + 1 + 7 * (size_t)kick) * 0.6180339887498949, 1.0);
            v[i] += KICK_SIZE * (2.0 * u - 1.0) * step;
        }
        return direct_unpack(d, v);
    }
    const size_t na = q->amplitude_cells - 1, np = q->phase_cells;
    const double sector = 2.0 * M_PI / (double)np;
    if (kick == 1) {
        if (np < 2)
            return 0;
        for (size_t i = na; i < nv; i++)
            v[i] += 0.5 * sector;
        return direct_unpack(d, v);
    }
    for (size_t i = 0; i < nv; i++) {
        const double u = fmod((double)(i + 1) * 0.6180339887498949, 1.0);
        const double width = i < na ? v[i] - (i ? v[i - 1] : 0.0) : sector;
        v[i] += KICK_SIZE * (2.0 * u - 1.0) * width;
    }
    return direct_unpack(d, v);
}

/* ---- the I/Q pair axis by axis ----------------------------------------- */

/* The MI-optimal thresholds (nt) of one axis: its values and law in
 * Gaussian noise of the given sigma, as the optimal strategy of a
 * one-dimensional design places them (grid DP, Newton steps, threshold
 * moves; then the placement among equally good thresholds, tidy.c). */
static qc_status axis_thresholds(double sigma, const double *values, const double *law,
                                 size_t n, size_t nt, double *t)
{
    qc_model *m = NULL;
    qc_strategy_plan *plan = NULL;
    const double eps = QC_TIDY_NATS(QC_DESIGN_DEFAULT_TOL_BITS);
    qc_status st = qc_model_alloc(&qc_model_gauss, &sigma, &m);
    if (st == QC_OK)
        st = qc_strategy_plan_alloc(m, values, n, nt, NULL, 0, NULL, &plan);
    if (st == QC_OK) {
        qc_strategy_plan_tidy(plan, eps);
        st = qc_strategy_design(&qc_strategy_optimal, plan, law, 0, t, NULL);
    }
    if (st == QC_OK)
        st = qc_tidy_thresholds(m, values, law, n, nt, eps, t);
    if (st == QC_OK)
        qc_snap_thresholds(m, values, n, nt, t);
    qc_strategy_plan_free(plan);
    qc_model_free(m);
    return st;
}

/* The result's cells set to the axis-by-axis MI-optimal design of the
 * axes a (each axis alone with thresholds apart; shared thresholds need
 * both axes to have the same values and law): *placed 1 when they were,
 * 0 when shared thresholds meet different axes or a design fails (only
 * running out of memory is an error). */
static qc_status axis_cells(const design_ctx *d, const qc_iq_axis_planes *a, int *placed)
{
    const qc_iq_design_request *q = d->req;
    qc_iq_design_result *r = d->res;
    *placed = 0;
    if (!q->separate && !qc_iq_axis_planes_same(a))
        return QC_OK;
    const qc_plane *ax = &a->plane[0], *ay = &a->plane[1];
    qc_status st = axis_thresholds(d->noise->sigma, ax->x, ax->prob, ax->size, q->cells_i - 1,
                                   r->ti);
    if (st == QC_OK && q->separate)
        st = axis_thresholds(d->noise->sigma, ay->x, ay->prob, ay->size, q->cells_q - 1, r->tq);
    else if (st == QC_OK)
        memcpy(r->tq, r->ti, (q->cells_q - 1) * sizeof *r->tq);
    *placed = st == QC_OK;
    return st == QC_ENOMEM ? st : QC_OK;
}

/* The GMI of an I/Q pair rated axis by axis with two values and one
 * label bit per axis (QPSK): the bit is the value, so each axis's GMI is
 * its MI, and the MI design is the GMI design. */
static int gmi_is_mi(const design_ctx *d)
{
    const qc_iq_axis_planes *a = d->axes;
    return a && d->req->objective == QC_OBJECTIVE_GMI && a->plane[0].size == 2 &&
           a->plane[1].size == 2 && a->plane[0].nbits == 1 && a->plane[1].nbits == 1;
}

/* The I/Q pair designed axis by axis when the request and the
 * constellation allow it (see the file's header): *done 1 with the
 * cells in the result and their objective in *bits; *done 0 otherwise
 * (the result's cells then undefined). Only running out of memory is an
 * error; a design that fails otherwise leaves it to the gradient search. */
static qc_status per_axis(design_ctx *d, int *done, double *bits)
{
    const qc_iq_design_request *q = d->req;
    const qc_iq_axis_planes *a = d->axes; /* set only where the pair factors */
    *done = 0;
    if (!a || (q->objective != QC_OBJECTIVE_MI && !gmi_is_mi(d)) || !(d->noise->sigma > 0.0))
        return QC_OK;
    int placed;
    qc_status st = axis_cells(d, a, &placed);
    if (st != QC_OK || !placed)
        return st;
    *bits = rate_of(d, &d->res->cells, NULL, &st);
    *done = st == QC_OK && isfinite(*bits);
    return st == QC_ENOMEM ? st : QC_OK;
}

/* One more gradient search, after those from the uniform cells and their
 * restarts, from the axis-by-axis MI-optimal design where the points and
 * law factor over the axes but the pair is searched by BFGS: under a
 * phase error, or for the GMI (beyond QPSK). From the uniform cells BFGS
 * keeps their symmetry; the one-dimensional design may place its cells
 * otherwise, and under a small phase error or for the GMI it is often
 * near a better optimum. The cells it ends in are kept only where they
 * are higher (res->axis_start 2; 1 where they are not). */
static qc_status axis_search(design_ctx *d, double ceiling, int *settled)
{
    const qc_iq_design_request *q = d->req;
    const int phase = d->noise->phase_sd > 0.0;
    if (q->kind != QC_IQ_PRODUCT || q->gradient_only || !(d->noise->sigma > 0.0) ||
        (!phase && (q->objective != QC_OBJECTIVE_GMI || gmi_is_mi(d))) ||
        d->best >= ceiling - QC_IQ_CEILING_GAP_BITS)
        return QC_OK;
    qc_iq_axis_planes own;
    int ok = 1;
    const qc_iq_axis_planes *a = d->axes; /* without a phase error, for the GMI */
    if (!a) {
        qc_status st = qc_iq_axis_planes_build(d->c, 0, &own, &ok);
        if (st != QC_OK || !ok)
            return st;
        a = &own;
    }
    qc_iq_design_result *r = d->res;
    int started;
    qc_status st = axis_cells(d, a, &started);
    if (a == &own)
        qc_iq_axis_planes_free(&own);
    if (st != QC_OK || !started)
        return st;
    const double before = d->best;
    double v[2 * QC_IQ_MAX_CELLS];
    direct_pack(d, v);
    r->axis_start_bits = evaluate(d, v, NULL);
    if (d->fatal != QC_OK)
        return d->fatal;
    if (!isfinite(r->axis_start_bits)) {
        r->axis_start_bits = NAN;
        return QC_OK;
    }
    if ((st = gradient_search(d, d->max_evals, ceiling, settled)) != QC_OK)
        return st;
    r->axis_start = d->best > before ? 2 : 1;
    return QC_OK;
}

static qc_status check_request(const qc_iq_design_request *q)
{
    if (q->objective != QC_OBJECTIVE_MI && q->objective != QC_OBJECTIVE_GMI)
        return qc_fail(QC_EINVAL, "iq design: the objective must be mi or gmi");
    if (q->kind == QC_IQ_PRODUCT) {
        if (q->cells_i < 2 || q->cells_q < 2 || q->cells_i * q->cells_q > QC_IQ_MAX_CELLS)
            return qc_fail(QC_EINVAL, "iq design: %zu x %zu cells (expected at least 2 per "
                           "axis, at most %d in all)", q->cells_i, q->cells_q,
                           QC_IQ_MAX_CELLS);
        if (!q->separate && q->cells_i != q->cells_q)
            return qc_fail(QC_EINVAL, "iq design: shared thresholds need the same cells on "
                           "both axes (%zu and %zu)", q->cells_i, q->cells_q);
    } else if (q->kind == QC_IQ_POLAR) {
        if (q->amplitude_cells < 1 || q->phase_cells < 1 ||
            q->amplitude_cells * q->phase_cells < 2 ||
            q->amplitude_cells * q->phase_cells > QC_IQ_MAX_CELLS)
            return qc_fail(QC_EINVAL, "iq design: %zu amplitude x %zu phase cells (expected "
                           "at least 2 cells, at most %d)", q->amplitude_cells,
                           q->phase_cells, QC_IQ_MAX_CELLS);
    } else {
        return qc_fail(QC_EINVAL, "iq design: unknown receiver kind %d", (int)q->kind);
    }
    return QC_OK;
}

/* The uniform start's parameters into z (*nz of them). */
static void uniform_start(const qc_plane *c, const qc_iq_design_request *q, double *scale,
                          double *z, size_t *nz)
{
    double lo_x = INFINITY, hi_x = -INFINITY, lo_y = INFINITY, hi_y = -INFINITY, rmax = 0.0;
    for (size_t i = 0; i < c->size; i++) {
        lo_x = fmin(lo_x, c->x[i]), hi_x = fmax(hi_x, c->x[i]);
        lo_y = fmin(lo_y, c->y[i]), hi_y = fmax(hi_y, c->y[i]);
        rmax = fmax(rmax, hypot(c->x[i], c->y[i]));
    }
    *scale = rmax > 0.0 ? rmax : 1.0;
    size_t k = 0;
    if (q->kind == QC_IQ_PRODUCT) {
        for (int axis = 0; axis < (q->separate ? 2 : 1); axis++) {
            double lo = axis ? lo_y : lo_x, hi = axis ? hi_y : hi_x;
            if (!q->separate)
                lo = fmin(lo_x, lo_y), hi = fmax(hi_x, hi_y);
            size_t kc = axis ? q->cells_q : q->cells_i;
            double span = hi - lo > 0.0 ? hi - lo : *scale;
            double delta = span / (2.0 * (double)(kc - 1));
            double step = (span + 2.0 * delta) / (double)kc;
            z[k++] = (lo - delta + step) / *scale;
            for (size_t j = 1; j + 1 < kc; j++)
                z[k++] = log(step / *scale);
        }
        *nz = k;
        return;
    }
    /* amplitude: midpoints of the distinct radii when there are A of them,
     * else equal rings up to just beyond the largest radius */
    size_t a = q->amplitude_cells;
    double rad[QC_IQ_MAX_CELLS];
    size_t nr = 0;
    for (size_t i = 0; i < c->size && nr <= a; i++) {
        double r = hypot(c->x[i], c->y[i]);
        size_t j = 0;
        while (j < nr && fabs(rad[j] - r) > 1e-9 * *scale)
            j++;
        if (j == nr)
            rad[nr++] = r;
    }
    double bound[QC_IQ_MAX_CELLS];
    if (nr == a && a > 1) {
        for (size_t i = 1; i < nr; i++) /* sort */
            for (size_t j = i; j > 0 && rad[j] < rad[j - 1]; j--) {
                double t = rad[j];
                rad[j] = rad[j - 1];
                rad[j - 1] = t;
            }
        for (size_t j = 0; j + 1 < a; j++)
            bound[j] = 0.5 * (rad[j] + rad[j + 1]);
    } else {
        for (size_t j = 0; j + 1 < a; j++)
            bound[j] = *scale * (1.0 + 0.5 / (double)a) * (double)(j + 1) / (double)a;
    }
    for (size_t j = 0; j + 1 < a; j++)
        z[k++] = log((bound[j] - (j ? bound[j - 1] : 0.0)) / *scale);
    z[k++] = -M_PI / (double)q->phase_cells; /* sector 0 centred on angle 0 */
    if (!q->fixed_phases)
        for (size_t p = 1; p < q->phase_cells; p++)
            z[k++] = 0.0;
    *nz = k;
}

static qc_status alloc_result(const qc_iq_design_request *q, qc_iq_design_result *res)
{
    memset(res, 0, sizeof *res);
    res->cells.kind = q->kind;
    if (q->kind == QC_IQ_PRODUCT) {
        res->ti = qc_malloc_array(q->cells_i, sizeof *res->ti);
        res->tq = qc_malloc_array(q->cells_q, sizeof *res->tq);
        res->cells.ti = res->ti;
        res->cells.nti = q->cells_i - 1;
        res->cells.tq = res->tq;
        res->cells.ntq = q->cells_q - 1;
        if (!res->ti || !res->tq)
            goto oom;
    } else {
        res->radii = qc_malloc_array(q->amplitude_cells, sizeof *res->radii);
        res->phases = qc_malloc_array(q->phase_cells, sizeof *res->phases);
        res->cells.radii = res->radii;
        res->cells.nradii = q->amplitude_cells - 1;
        res->cells.phases = res->phases;
        res->cells.nphases = q->phase_cells;
        if (!res->radii || !res->phases)
            goto oom;
    }
    return QC_OK;
oom:
    qc_iq_design_result_free(res);
    return qc_fail(QC_ENOMEM, "out of memory");
}

/* The searched I/Q pair's thresholds made exactly symmetric where the
 * constellation mirrors across an axis and they mirror to the search's
 * rounding (iq_mirror.c), and rated again: the objective reported is that
 * of the thresholds reported. Kept unless the rate falls by more than
 * rounding (it moves by the square of a shift of 1e-9 of a gap at most);
 * then the search's own thresholds stay. */
static qc_status mirror_snap(design_ctx *d)
{
    const qc_iq_design_request *q = d->req;
    qc_iq_design_result *res = d->res;
    const size_t ni = q->cells_i - 1, nq = q->cells_q - 1;
    double keep[2 * QC_IQ_MAX_CELLS];
    memcpy(keep, res->ti, ni * sizeof *keep);
    memcpy(keep + ni, res->tq, nq * sizeof *keep);
    if (qc_iq_snap_mirror(d->c, q->objective == QC_OBJECTIVE_GMI, !q->separate, res->ti, ni,
                          res->tq, nq) == 0)
        return QC_OK;
    qc_status st;
    const double f = rate_of(d, &res->cells, NULL, &st);
    if (st != QC_OK)
        return st;
    res->evaluations++;
    if (f >= res->objective_bits - MIRROR_SLACK_BITS) {
        res->objective_bits = f;
        return QC_OK;
    }
    memcpy(res->ti, keep, ni * sizeof *keep);
    memcpy(res->tq, keep + ni, nq * sizeof *keep);
    return QC_OK;
}

static qc_status run_with(const qc_plane *c, const qc_iq_noise *noise,
                          const qc_iq_design_request *q, qc_iq_design_result *res, int search,
                          const qc_iq_axis_planes *axes, qc_polar_series *series)
{
    qc_status st = check_request(q);
    if (st != QC_OK)
        return st;
    if (q->objective == QC_OBJECTIVE_GMI && !c->labels)
        return qc_fail(QC_EINVAL, "iq design: the gmi objective needs labels");
    if ((st = alloc_result(q, res)) != QC_OK)
        return st;
    double z[2 * QC_IQ_MAX_CELLS], best_z[2 * QC_IQ_MAX_CELLS];
    design_ctx d = {.c = c,
                    .noise = noise,
                    .req = q,
                    .res = res,
                    .scale = 1.0,
                    .best = -INFINITY,
                    .best_z = best_z,
                    .fatal = QC_OK,
                    .axes = axes,
                    .series = series};
    uniform_start(c, q, &d.scale, z, &d.nz);
    unpack(&d, z);
    double f0 = rate_of(&d, &res->cells, NULL, &st);
    if (st != QC_OK) {
        qc_iq_design_result_free(res);
        return st;
    }
    const double ceiling = qc_entropy(c->prob, c->size) / M_LN2;
    d.ceiling = ceiling;
    res->start_bits = res->objective_bits = f0;
    res->axis_start_bits = NAN;
    res->evaluations = 1;
    res->converged = 1;
    if (!search || d.nz == 0)
        return QC_OK;
    res->at_ceiling = f0 >= ceiling - QC_IQ_CEILING_GAP_BITS;
    if (res->at_ceiling)
        return QC_OK;
    d.best = f0;
    int done;
    double f1;
    if ((st = per_axis(&d, &done, &f1)) != QC_OK) {
        qc_iq_design_result_free(res);
        return st;
    }
    if (done && f1 >= f0 - PER_AXIS_SLACK_BITS) {
        res->objective_bits = f1;
        res->evaluations = 2;
        res->per_axis = 1;
        res->at_ceiling = f1 >= ceiling - QC_IQ_CEILING_GAP_BITS;
        return QC_OK;
    }
    unpack(&d, z); /* back to the uniform cells */
    size_t max_evals = q->max_evaluations ? q->max_evaluations : DEFAULT_EVALS;
    int settled = 0;
    d.max_evals = max_evals;
    direct_pack(&d, best_z);
    if (q->kind == QC_IQ_POLAR && noise->phase_sd > 0.0) {
        d.rays = qc_malloc_array(c->size * qc_iq_cell_count(&res->cells), sizeof *d.rays);
        if (!d.rays) {
            qc_iq_design_result_free(res);
            return qc_fail(QC_ENOMEM, "out of memory");
        }
    }
    for (int kick = 0; kick <= KICKS; kick++) {
        if (kick > 0 && (d.best >= ceiling - QC_IQ_CEILING_GAP_BITS || !kick_cells(&d, kick)) &&
            d.fatal == QC_OK)
            continue;
        if ((st = d.fatal) != QC_OK ||
            (st = gradient_search(&d, max_evals, ceiling, &settled)) != QC_OK) {
            free(d.rays);
            qc_iq_design_result_free(res);
            return st;
        }
        if (!settled)
            break; /* the cap */
    }
    if (settled && (st = axis_search(&d, ceiling, &settled)) != QC_OK) {
        free(d.rays);
        qc_iq_design_result_free(res);
        return st;
    }
    free(d.rays);
    res->at_ceiling = d.best >= ceiling - QC_IQ_CEILING_GAP_BITS;
    res->converged = settled || res->at_ceiling || d.evals < max_evals;
    (void)direct_unpack(&d, best_z); /* evaluated, so valid */
    res->objective_bits = d.best;
    res->evaluations = d.evals + 1;
    if (q->kind == QC_IQ_PRODUCT && (st = mirror_snap(&d)) != QC_OK) {
        qc_iq_design_result_free(res);
        return st;
    }
    return QC_OK;
}

/* run_with, with one workspace for the polar cells' series over the whole
 * search (allocating it for every matrix cost about a tenth of the time). */
static qc_status run(const qc_plane *c, const qc_iq_noise *noise,
                     const qc_iq_design_request *q, qc_iq_design_result *res, int search,
                     const qc_iq_axis_planes *axes)
{
    qc_polar_series *series = NULL;
    qc_status st = q->kind == QC_IQ_POLAR && noise ? qc_polar_series_alloc(noise, &series) : QC_OK;
    if (st == QC_OK)
        st = run_with(c, noise, q, res, search, axes, series);
    qc_polar_series_free(series);
    return st;
}

/* run, with the I/Q pair rated axis by axis where that is exact: no
 * phase error, points and law that factor over the axes and, for the
 * GMI, labels whose every bit is a function of one axis (iq_axis_planes.c). */
static qc_status run_on_axes(const qc_plane *c, const qc_iq_noise *noise,
                             const qc_iq_design_request *q, qc_iq_design_result *res,
                             int search)
{
    qc_iq_axis_planes axes;
    int ok = 0;
    if (!q->gradient_only && q->kind == QC_IQ_PRODUCT && noise && noise->phase_sd == 0.0) {
        qc_status st = qc_iq_axis_planes_build(c, q->objective == QC_OBJECTIVE_GMI, &axes, &ok);
        if (st != QC_OK)
            return st;
    }
    qc_status st = run(c, noise, q, res, search, ok ? &axes : NULL);
    if (ok)
        qc_iq_axis_planes_free(&axes);
    return st;
}

qc_status qc_iq_design(const qc_plane *c, const qc_iq_noise *noise,
                       const qc_iq_design_request *req, qc_iq_design_result *res)
{
    return run_on_axes(c, noise, req, res, 1);
}

qc_status qc_iq_uniform(const qc_plane *c, const qc_iq_noise *noise,
                        const qc_iq_design_request *req, qc_iq_design_result *res)
{
    return run_on_axes(c, noise, req, res, 0);
}
