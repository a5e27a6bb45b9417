/* require.c — the inverse question: which value of one quantity (an SNR,
 * an OSNR, a received power, photons per slot, any numeric parameter the
 * caller's builder turns into a design) meets a target (pre-FEC BER, NGMI,
 * GMI, rate, rate per pulse-position slot, bits per detected photon, or a
 * FEC code's threshold) with the chosen quantizer, and
 * which without it; the penalty at the target is the distance between
 * the two. The figure is first sampled over the range to check that it is
 * monotone and to bracket the crossing, then the crossing is found with
 * GSL's Brent solver (R. P. Brent, Algorithms for Minimization without
 * Derivatives, 1973, ch. 4). The unquantized hard decision is the MAP
 * rule, through a quantizer whose thresholds are its decision boundaries
 * (src/quantizer/decisions.c). For BER targets the optimal quantizer
 * keeps those boundaries among its thresholds (keep_decisions), as a
 * receiver built for a hard-decision code would. On a channel with
 * memory the figures are those of the detectors on the trellis (the
 * simulated information rate; the BER, GMI and NGMI of the symbol-wise
 * MAP detector, Bahl, Cocke, Jelinek, Raviv, IEEE Trans. IT 20(2), 1974),
 * every design simulating the same seeded sequence, so that the figure
 * moves smoothly with the value (common random numbers). The roots are
 * found to 10⁻⁶ dB, or where the figures are simulated to 10⁻⁴ dB, still
 * far inside the simulation's own intervals. Two roots closer than the
 * root tolerance give a penalty of exactly 0. */
#include "design/design_internal.h"
#include "quantcap/iq.h"
#include "quantcap/memory.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_errno.h>
#include <gsl/gsl_roots.h>

#define DEFAULT_SAMPLES 9
#define MAX_SAMPLES 257
#define ROOT_TOL_DB 1e-6      /* bracket width at stop, in dB (or log10 × 10) */
#define ROOT_TOL_SIMULATED_DB 1e-4 /* … where the figure is simulated: a channel
                                      with memory, whose 95 % intervals are
                                      wider by orders of magnitude          */
#define ROOT_MAX_ITER 100
#define BER_FLOOR 1e-300      /* log10 of a BER that underflowed to 0        */

static const char *const target_names[QC_TARGET_COUNT] = {"ber",  "ngmi",          "gmi",
                                                           "rate", "rate-per-slot", "bits-per-photon"};

const char *qc_target_name(qc_target_kind kind)
{
    return (unsigned)kind < QC_TARGET_COUNT ? target_names[kind] : NULL;
}

qc_status qc_target_parse(const char *spec, qc_target *out)
{
    memset(out, 0, sizeof *out);
    const char *eq = spec ? strchr(spec, '=') : NULL;
    if (!eq)
        return qc_fail(QC_EINVAL, "target '%s' is not KIND=VALUE (ber=X, ngmi=X, gmi=X, "
                                  "rate=X, rate-per-slot=X, bits-per-photon=X or fec=NAME)",
                       spec ? spec : "");
    size_t kl = (size_t)(eq - spec);
    const char *v = eq + 1;
    if (kl == 3 && strncmp(spec, "fec", 3) == 0) {
        if (strchr(v, '=') || strchr(v, ','))
            return qc_fail(QC_EINVAL, "target fec=NAME takes a code name; describe your own "
                                      "code with --fec and give --target fec=user");
        qc_status st = qc_fec_parse(v, &out->fec);
        if (st != QC_OK)
            return st;
        out->from_fec = 1;
        out->kind = out->fec.kind == QC_FEC_HARD ? QC_TARGET_BER : QC_TARGET_NGMI;
        out->value = out->fec.threshold;
        return QC_OK;
    }
    int k = -1;
    for (int i = 0; i < QC_TARGET_COUNT; i++)
        if (strlen(target_names[i]) == kl && strncmp(spec, target_names[i], kl) == 0)
            k = i;
    if (k < 0)
        return qc_fail(QC_EINVAL, "unknown target '%.*s' (choose ber, ngmi, gmi, rate, "
                                  "rate-per-slot, bits-per-photon or fec)",
                       (int)kl, spec);
    char *end;
    double x = strtod(v, &end);
    if (end == v || *end != '\0' || !isfinite(x))
        return qc_fail(QC_EINVAL, "target %s: '%s' is not a number (one target at a time)",
                       target_names[k], v);
    out->kind = (qc_target_kind)k;
    out->value = x;
    if (k == QC_TARGET_BER && !(x > 0.0 && x < 0.5))
        return qc_fail(QC_EINVAL, "target ber=%g: a bit error rate lies in (0, 0.5)", x);
    if (k == QC_TARGET_NGMI && !(x > 0.0 && x <= 1.0))
        return qc_fail(QC_EINVAL, "target ngmi=%g: an NGMI lies in (0, 1]", x);
    if ((k == QC_TARGET_GMI || k == QC_TARGET_RATE) && !(x > 0.0))
        return qc_fail(QC_EINVAL, "target %s=%g: a rate must be > 0 bit/symbol",
                       target_names[k], x);
    if (k == QC_TARGET_RATE_PER_SLOT && !(x > 0.0 && x <= 1.0))
        return qc_fail(QC_EINVAL, "target rate-per-slot=%g: a pulse-position rate per slot "
                                  "lies in (0, 1] bit/slot (at most log2(M)/M)", x);
    if (k == QC_TARGET_BITS_PER_PHOTON && !(x > 0.0))
        return qc_fail(QC_EINVAL, "target bits-per-photon=%g: a photon efficiency must be > 0 "
                                  "bit/photon", x);
    return QC_OK;
}

double qc_design_figure(const qc_design_result *res, qc_target_kind kind)
{
    /* a channel with memory: the detectors on the trellis, simulated */
    const int mem = res->states > 0;
    switch (kind) {
    case QC_TARGET_BER: return mem ? res->bcjr_pre_fec_ber : res->pre_fec_ber;
    case QC_TARGET_NGMI: return mem ? res->bcjr_ngmi : res->ngmi;
    case QC_TARGET_GMI: return mem ? res->bcjr_gmi_bits : res->gmi_bits;
    case QC_TARGET_RATE: return mem ? res->information_rate_bits : res->rate_bits;
    case QC_TARGET_RATE_PER_SLOT:
        return res->ppm_slots ? res->rate_bits / (double)res->ppm_slots : NAN;
    case QC_TARGET_BITS_PER_PHOTON: return res->bits_per_photon;
    default: return NAN;
    }
}

/* "Goodness" of a figure: larger is better; a BER as −log10. */
static double goodness(qc_target_kind kind, double f)
{
    if (kind != QC_TARGET_BER)
        return f;
    return isnan(f) ? NAN : -log10(fmax(f, BER_FLOOR));
}

static double from_goodness(qc_target_kind kind, double g)
{
    return kind == QC_TARGET_BER ? pow(10.0, -g) : g;
}

/* ---- the unquantized figures ---------------------------------------- */

/* The simulated figure of a design on a channel with memory that target
 * `kind` reads (qc_design_figure): the search runs that one alone. */
static unsigned memory_figure_of(qc_target_kind kind)
{
    switch (kind) {
    case QC_TARGET_BER:
    case QC_TARGET_NGMI:
    case QC_TARGET_GMI: return QC_ISI_FIG_DETECTOR;
    case QC_TARGET_RATE: return QC_ISI_FIG_RATE;
    default: return 0u; /* not a figure of the trellis: every one */
    }
}

/* A channel with memory: the simulated figure without the ADC (the same
 * seed and symbols as the design's; quantcap/memory.h), for the design's
 * levels and law: the information rate, or the BCJR detector's BER, GMI
 * or NGMI with Gray labels. */
static qc_status unquantized_memory_figure(const qc_model *m, const qc_design_request *req,
                                           qc_target_kind kind, size_t *designs, double *fig)
{
    qc_design_result r = {0};
    qc_design_request sub = *req;
    sub.numerics.skip_snr_penalty = 1;
    sub.input.fec = NULL;
    sub.memory.ntaps = 0; /* the memoryless design gives the levels and law */
    qc_status st = qc_design(&sub, &r);
    if (st != QC_OK)
        return st;
    ++*designs;
    size_t *labels = NULL;
    unsigned nbits = 0;
    if (kind != QC_TARGET_RATE && req->memory.coherent) {
        st = qc_fail(QC_EINVAL, "target %s: the detector's BER and GMI are simulated on real "
                                "channels with memory; a coherent one is rated by its rate: "
                                "give rate=X",
                     qc_target_name(kind));
        goto done;
    }
    if (kind != QC_TARGET_RATE) {
        if (!qc_is_power_of_two(r.nlevels)) {
            st = qc_fail(QC_EINVAL, "target %s needs Gray labels: a power of 2 levels (got "
                                    "%zu)",
                         qc_target_name(kind), r.nlevels);
            goto done;
        }
        if (!(labels = qc_malloc_array(r.nlevels, sizeof *labels))) {
            st = qc_fail(QC_ENOMEM, "out of memory");
            goto done;
        }
        if ((st = qc_gray_labels(r.levels, r.nlevels, labels, &nbits)) != QC_OK)
            goto done;
    }
    qc_isi_request isi = {.model = m, .levels = r.levels, .nlevels = r.nlevels,
                          .input = r.input, .taps = req->memory.taps,
                          .ntaps = req->memory.ntaps, .thresholds = r.thresholds,
                          .nthresholds = r.nthresholds,
                          .symbols = req->memory.symbols ? req->memory.symbols
                                                         : QC_DESIGN_MEMORY_SYMBOLS,
                          .seed = req->memory.seed, .unquantized = 1,
                          .taps_imag = req->memory.coherent ? req->memory.taps_imag : NULL,
                          .mode = !req->memory.coherent           ? QC_ISI_REAL
                                  : req->channel.dimensions == 2 ? QC_ISI_COHERENT_QAM
                                                                 : QC_ISI_COHERENT_PAM,
                          .labels = labels, .label_bits = nbits,
                          .figures = memory_figure_of(kind) == QC_ISI_FIG_DETECTOR
                                         ? QC_ISI_FIG_UNQUANTIZED_DETECTOR
                                         : QC_ISI_FIG_UNQUANTIZED_RATE};
    qc_isi_result ir;
    if ((st = qc_isi_rate(&isi, &ir)) != QC_OK)
        goto done;
    const double h = qc_entropy(r.input, r.nlevels) * QC_LOG2E;
    switch (kind) {
    case QC_TARGET_BER: *fig = ir.unquantized_bcjr_ber; break;
    case QC_TARGET_GMI: *fig = ir.unquantized_bcjr_gmi_bits; break;
    case QC_TARGET_NGMI: *fig = qc_ngmi(ir.unquantized_bcjr_gmi_bits, h, nbits); break;
    default: *fig = ir.unquantized_bits; break;
    }
done:
    free(labels);
    qc_design_result_clear(&r);
    return st;
}

/* MAP hard decision of the unquantized receiver: a quantizer whose
 * thresholds are exactly the MAP decision boundaries decides as the
 * continuous receiver does (decisions.c). */
static qc_status unquantized_hard(const qc_model *m, const double *levels, const double *law,
                                  size_t n, const size_t *labels, unsigned nbits, double *ber)
{
    double *t = NULL;
    size_t nt = 0;
    qc_status st = qc_map_boundaries(m, levels, law, n, &t, &nt);
    if (st != QC_OK)
        return st;
    qc_dmc *d = NULL;
    qc_hard_figures h;
    if (nt == 0) { /* one decision everywhere: one cell */
        double one = 1.0;
        st = qc_dmc_alloc(n, 1, &d);
        for (size_t i = 0; st == QC_OK && i < n; i++)
            d->p[i] = one;
    } else {
        st = qc_discretize(m, levels, n, t, nt, &d);
    }
    if (st == QC_OK)
        st = qc_hard_decision(d, law, labels, nbits, 1, &h);
    if (st == QC_OK)
        *ber = h.pre_fec_ber;
    qc_dmc_free(d);
    free(t);
    return st;
}

/* The unquantized figure of the design at the request (levels and law of
 * the request, or of a design when the design chooses them). */
static qc_status unquantized_figure(const qc_model *m, const qc_design_request *req,
                                    qc_target_kind kind, size_t *designs, double *fig)
{
    *fig = NAN;
    const double d = req->channel.dimensions == 2 ? 2.0 : 1.0;
    qc_design_result r = {0};
    const double *levels = req->channel.levels, *law = req->input.probabilities;
    size_t n = req->channel.nlevels;
    double *uniform = NULL;
    size_t *labels = NULL;
    qc_status st = QC_OK;
    if (req->channel.iq) { /* the unquantized MI of the constellation */
        const qc_model_type *t = qc_model_get_type(m);
        double u;
        st = qc_iq_unquantized_mi(req->channel.iq->plane,
                                  qc_model_param(m, (size_t)qc_model_param_index(t, "sigma")),
                                  0, &u, NULL, NULL);
        if (st == QC_OK)
            *fig = u;
        return st;
    }
    if (req->memory.ntaps > 0)
        return unquantized_memory_figure(m, req, kind, designs, fig);
    /* a design that chooses its levels or law: those of the design (a
     * shaped law also scales the levels to the uniform law's power; pulse
     * position: the design's own unquantized reference, per symbol) */
    const int per_use = kind == QC_TARGET_RATE_PER_SLOT || kind == QC_TARGET_BITS_PER_PHOTON;
    if (req->input.objective == QC_OBJECTIVE_CAPACITY || req->input.optimize_levels ||
        req->input.shaping || req->channel.ppm_slots || per_use) {
        qc_design_request sub = *req;
        sub.numerics.skip_snr_penalty = 1;
        sub.input.fec = NULL;
        if ((st = qc_design(&sub, &r)) != QC_OK)
            return st;
        ++*designs;
        levels = r.levels;
        law = r.input;
        if (kind == QC_TARGET_RATE) {
            *fig = r.unquantized_bits;
            goto done;
        }
        /* the unquantized rate per slot, per detected signal photon */
        if (kind == QC_TARGET_RATE_PER_SLOT) {
            *fig = r.ppm_slots ? r.unquantized_bits / (double)r.ppm_slots : NAN;
            goto done;
        }
        if (kind == QC_TARGET_BITS_PER_PHOTON) {
            *fig = r.photons_per_symbol > 0.0 ? r.unquantized_bits / r.photons_per_symbol : NAN;
            goto done;
        }
    }
    if (!law) {
        if (!(uniform = qc_malloc_array(n, sizeof *uniform))) {
            st = qc_fail(QC_ENOMEM, "out of memory");
            goto done;
        }
        for (size_t i = 0; i < n; i++)
            uniform[i] = 1.0 / (double)n;
        law = uniform;
    }
    double v, err;
    unsigned nbits = 0;
    if (kind == QC_TARGET_RATE && req->input.objective == QC_OBJECTIVE_MI) {
        if ((st = qc_unquantized_mi(m, levels, law, n, &v, &err)) == QC_OK)
            *fig = d * v * QC_LOG2E;
        goto done;
    }
    if (!qc_is_power_of_two(n)) {
        st = qc_fail(QC_EINVAL, "target %s needs Gray labels: a power of 2 levels (got %zu)",
                     qc_target_name(kind), n);
        goto done;
    }
    if (!(labels = qc_malloc_array(n, sizeof *labels))) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto done;
    }
    if ((st = qc_gray_labels(levels, n, labels, &nbits)) != QC_OK)
        goto done;
    if (kind == QC_TARGET_BER) {
        st = unquantized_hard(m, levels, law, n, labels, nbits, fig);
        goto done;
    }
    if ((st = qc_unquantized_gmi(m, levels, law, n, labels, nbits, &v, &err)) != QC_OK)
        goto done;
    double gmi = d * v * QC_LOG2E, h = d * qc_entropy(law, n) * QC_LOG2E;
    *fig = kind == QC_TARGET_NGMI ? qc_ngmi(gmi, h, d * nbits) : gmi;
done:
    qc_design_result_clear(&r);
    free(uniform);
    free(labels);
    return st;
}

/* ---- the search ----------------------------------------------------- */

typedef struct {
    const qc_require_request *rq;
    int unquantized;    /* evaluate the unquantized figure, not the design's */
    double tol_db;      /* the root's final bracket width, dB            */
    size_t designs;
    qc_status st;
} search;

static double value_of(const qc_require_request *rq, double u)
{
    return rq->linear ? pow(10.0, u) : u;
}

/* Why a design has no figure of `kind`. */
static const char *undefined_why(const qc_design_request *req, qc_target_kind kind)
{
    if (kind == QC_TARGET_RATE)
        return "no rate";
    if (kind == QC_TARGET_RATE_PER_SLOT)
        return "a rate per slot is that of pulse-position modulation: give an alphabet ppm:M, "
               "or rate=X";
    if (kind == QC_TARGET_BITS_PER_PHOTON)
        return "bits per photon need a photon-counting or APD model with signal photons "
               "above 0";
    if (req->channel.ppm_slots)
        return "pulse-position modulation is rated by its rate only: give rate=X, rate-per-slot=X or "
               "bits-per-photon=X";
    if (req->memory.ntaps && req->memory.coherent)
        return "the detector's BER and GMI are simulated on real channels with memory; a "
               "coherent one is rated by its rate: give rate=X";
    return "Gray labels need a power of 2 levels";
}

/* Goodness of the figure at u (log10 of the value for linear quantities). */
static double evaluate(search *s, double u)
{
    if (s->st != QC_OK)
        return NAN;
    const qc_require_request *rq = s->rq;
    const qc_model *m = NULL;
    qc_design_request req;
    qc_design_request_default(&req);
    qc_status st = rq->build(rq->ctx, value_of(rq, u), &m, &req);
    if (st == QC_EINVAL) { /* a value of the range the key does not take */
        char why[512];
        snprintf(why, sizeof why, "%s", qc_last_error());
        st = qc_fail(st, "at %s = %.6g%s, in the range searched (%.6g%s to %.6g%s): %s; give "
                         "a range inside the values it takes",
                     rq->name, value_of(rq, u), rq->unit, rq->lo, rq->unit, rq->hi, rq->unit,
                     why);
    }
    double f = NAN;
    if (st == QC_OK && s->unquantized) {
        st = unquantized_figure(m, &req, rq->target.kind, &s->designs, &f);
    } else if (st == QC_OK) {
        qc_design_result r;
        if (rq->target.kind == QC_TARGET_BER)
            req.quantizer.keep_decisions = 1;
        req.numerics.skip_snr_penalty = 1;
        req.input.fec = NULL;
        req.memory.figures = memory_figure_of(rq->target.kind);
        st = qc_design(&req, &r);
        if (st == QC_OK) {
            s->designs++;
            f = qc_design_figure(&r, rq->target.kind);
            qc_design_result_clear(&r);
            if (isnan(f) && rq->target.from_fec)
                st = qc_fail(QC_EINVAL, "target fec=%s (its %s) is undefined for this design, "
                                        "so the code cannot be judged (%s)",
                             rq->target.fec.name,
                             rq->target.kind == QC_TARGET_BER ? "pre-FEC BER" : "NGMI",
                             undefined_why(&req, rq->target.kind));
            else if (isnan(f))
                st = qc_fail(QC_EINVAL, "target %s is undefined for this design (%s)",
                             qc_target_name(rq->target.kind), undefined_why(&req, rq->target.kind));
        }
    }
    if (st != QC_OK) {
        s->st = st;
        return NAN;
    }
    return goodness(rq->target.kind, f);
}

static double gap(double u, void *p)
{
    search *s = p;
    double g = evaluate(s, u) - goodness(s->rq->target.kind, s->rq->target.value);
    return isnan(g) ? 0.0 : g; /* a failure stops the solver through s->st */
}

/* Sample, check monotonicity, bracket, solve. *root in u; *reached 0 when
 * the target is not met anywhere, 2 when it is met over the whole range. */
static qc_status solve(search *s, const char *who, double *root, int *increasing,
                       double *best_u, double *best_g, int *reached)
{
    const qc_require_request *rq = s->rq;
    size_t ns = rq->samples ? rq->samples : DEFAULT_SAMPLES;
    double ulo = rq->linear ? log10(rq->lo) : rq->lo, uhi = rq->linear ? log10(rq->hi) : rq->hi;
    double u[MAX_SAMPLES], g[MAX_SAMPLES];
    const double target = goodness(rq->target.kind, rq->target.value);
    for (size_t i = 0; i < ns; i++) {
        u[i] = ulo + (uhi - ulo) * (double)i / (double)(ns - 1);
        g[i] = evaluate(s, u[i]);
        if (s->st != QC_OK)
            return s->st;
    }
    size_t ib = 0;
    for (size_t i = 1; i < ns; i++)
        if (g[i] > g[ib])
            ib = i;
    *best_u = u[ib];
    *best_g = g[ib];
    *increasing = g[ns - 1] >= g[0];
    /* crossings of the target between neighbouring samples */
    size_t k = 0, ncross = 0, cross[3] = {0};
    for (size_t i = 1; i < ns; i++)
        if ((g[i - 1] >= target) != (g[i] >= target)) {
            if (ncross < 3)
                cross[ncross] = i;
            ncross++;
            k = i;
        }
    if (ncross > 1) {
        const char *name = qc_target_name(rq->target.kind);
        char where[256] = "";
        for (size_t c = 0; c < ncross && c < 3; c++) {
            char one[80];
            snprintf(one, sizeof one, "%sfrom %.6g%s to %.6g%s", c ? "; " : "",
                     value_of(rq, u[cross[c] - 1]), rq->unit, value_of(rq, u[cross[c]]),
                     rq->unit);
            strncat(where, one, sizeof where - strlen(where) - 1);
        }
        return qc_fail(QC_EINVAL,
                       "%s: the %s is not monotone in %s: it crosses the target %zu times in "
                       "the range (%s); no unique root: narrow the search range (require "
                       "--range) to one side of the turn or solve for another quantity",
                       who, name, rq->name, ncross, where);
    }
    if (ncross == 0) {
        *reached = g[0] >= target ? 2 : 0;
        if (*reached == 2) { /* met everywhere: report the worst sample */
            size_t w = 0;
            for (size_t i = 1; i < ns; i++)
                if (g[i] < g[w])
                    w = i;
            *best_u = u[w];
            *best_g = g[w];
        }
        return QC_OK;
    }
    *reached = 1;
    *increasing = g[k] >= target;
    if (g[k - 1] == target || g[k] == target) {
        *root = g[k - 1] == target ? u[k - 1] : u[k];
        return QC_OK;
    }
    gsl_root_fsolver *sv = gsl_root_fsolver_alloc(gsl_root_fsolver_brent);
    if (!sv)
        return qc_fail(QC_ENOMEM, "out of memory");
    gsl_function fn = {gap, s};
    const double tol = rq->linear ? s->tol_db / 10.0 : s->tol_db;
    int rc = gsl_root_fsolver_set(sv, &fn, u[k - 1], u[k]);
    for (int it = 0; rc == GSL_SUCCESS && s->st == QC_OK && it < ROOT_MAX_ITER; it++) {
        if ((rc = gsl_root_fsolver_iterate(sv)) != GSL_SUCCESS || s->st != QC_OK)
            break;
        rc = gsl_root_test_interval(gsl_root_fsolver_x_lower(sv), gsl_root_fsolver_x_upper(sv),
                                    tol, 0.0);
        if (rc == GSL_SUCCESS)
            break;
        rc = GSL_SUCCESS;
    }
    /* The end of the last bracket on the side that meets the target, not
     * Brent's best estimate, which may lie a hair on the other side: a
     * required value must meet the target (a FEC must close there), and
     * it is within the root tolerance of the crossing either way. */
    *root = *increasing ? gsl_root_fsolver_x_upper(sv) : gsl_root_fsolver_x_lower(sv);
    gsl_root_fsolver_free(sv);
    if (s->st != QC_OK)
        return s->st;
    if (rc != GSL_SUCCESS)
        return qc_fail(QC_ENUMERIC, "%s: root search failed: %s", who, gsl_strerror(rc));
    return QC_OK;
}

/* What the request at the range's low end says of every value, from one
 * build:
 *  - *no_unq: why its designs have no unquantized figure to solve for (a
 *    static phrase), or NULL when they have one. A two-dimensional receiver
 *    has an unquantized reference for the MI alone, without phase noise
 *    (quantcap/iq.h);
 *  - *ceiling: the most a rate or GMI target can ask of its alphabet, the
 *    entropy ceiling log2 of the symbols sent, per dimension; INFINITY where
 *    it is not that simple (pulse position, a 2-D constellation) or the
 *    request does not build. A target at the ceiling is approached only as
 *    the noise vanishes, where the rate flickers by an ulp about it;
 *  - *simulated: whether its figures are simulated (a channel with memory).
 */
static void probe(const qc_require_request *rq, const char **no_unq, double *ceiling,
                  int *simulated)
{
    const qc_model *m = NULL;
    qc_design_request req;
    qc_design_request_default(&req);
    *no_unq = NULL;
    *ceiling = INFINITY;
    *simulated = 0;
    if (rq->build(rq->ctx, rq->lo, &m, &req) != QC_OK) {
        qc_clear_error();
        return;
    }
    *simulated = req.memory.ntaps > 0;
    if (req.channel.iq) {
        if (rq->target.kind != QC_TARGET_RATE || req.input.objective != QC_OBJECTIVE_MI)
            *no_unq = "a two-dimensional receiver has an unquantized reference for the MI "
                      "only (target rate with objective mi)";
        else if (req.channel.iq->phase_sd > 0.0)
            *no_unq = "no unquantized reference with phase noise";
        return;
    }
    if (req.channel.ppm_slots)
        return;
    size_t sent = 0;
    for (size_t i = 0; i < req.channel.nlevels; i++)
        sent += !req.input.probabilities || req.input.probabilities[i] > 0.0;
    if (sent > 0)
        *ceiling = (req.channel.dimensions == 2 ? 2.0 : 1.0) * log2((double)sent);
}

static const char *figure_unit(qc_target_kind kind)
{
    return kind == QC_TARGET_GMI || kind == QC_TARGET_RATE ? " bit/symbol"
           : kind == QC_TARGET_RATE_PER_SLOT               ? " bit/slot"
           : kind == QC_TARGET_BITS_PER_PHOTON             ? " bit/photon"
                                                           : "";
}

qc_status qc_require(const qc_require_request *rq, qc_require_result *out)
{
    qc_gsl_init();
    memset(out, 0, sizeof *out);
    out->required = out->unquantized_required = out->penalty_db = NAN;
    out->best_value = out->best_figure = NAN;
    out->range_lo = rq ? rq->lo : NAN;
    out->range_hi = rq ? rq->hi : NAN;
    if (!rq || !rq->build)
        return qc_fail(QC_EINVAL, "require: no design builder given");
    qc_require_request named = *rq;
    if (!named.name)
        named.name = "the value";
    if (!named.unit)
        named.unit = "";
    rq = &named;
    if ((unsigned)rq->target.kind >= QC_TARGET_COUNT)
        return qc_fail(QC_EINVAL, "require: unknown target kind %d", (int)rq->target.kind);
    if (!(rq->lo < rq->hi) || !isfinite(rq->lo) || !isfinite(rq->hi))
        return qc_fail(QC_EINVAL, "range: expected LO < HI, both finite (got %g, %g)", rq->lo,
                       rq->hi);
    if (rq->linear && !(rq->lo > 0.0))
        return qc_fail(QC_EINVAL, "range: this quantity is searched on a log scale; LO must be "
                                  "> 0 (got %g)",
                       rq->lo);
    if (rq->samples && (rq->samples < 3 || rq->samples > MAX_SAMPLES))
        return qc_fail(QC_EINVAL, "require: samples must be from 3 to %d (got %zu)",
                       MAX_SAMPLES, rq->samples);
    const qc_target_kind kind = rq->target.kind;
    if (kind == QC_TARGET_NGMI && rq->target.value >= 1.0 - 1e-12)
        return qc_fail(QC_EINVAL, "target ngmi = %g: the NGMI reaches 1 only as the noise "
                                  "vanishes, never met: give a lower target",
                       rq->target.value);
    const char *no_unq;
    double most;
    int simulated;
    probe(rq, &no_unq, &most, &simulated);
    const double tol_db = simulated ? ROOT_TOL_SIMULATED_DB : ROOT_TOL_DB;
    out->root_tolerance_db = tol_db;
    if ((kind == QC_TARGET_RATE || kind == QC_TARGET_GMI) &&
        rq->target.value >= most * (1.0 - 1e-12))
        return qc_fail(QC_EINVAL,
                       "target %s = %g is the most the alphabet carries (%g bit per symbol, "
                       "log2 of the symbols it sends), approached only as the noise vanishes "
                       "and never met: give a lower target",
                       qc_target_name(kind), rq->target.value, most);
    if (rq->penalty_only && no_unq) { /* no penalty to find: nothing to search */
        out->unquantized_note = no_unq;
        return QC_OK;
    }
    search s = {.rq = rq, .tol_db = tol_db};
    double root, bu, bg, uroot = NAN;
    int inc, reached;
    qc_status st = solve(&s, "quantized", &root, &inc, &bu, &bg, &reached);
    out->designs = s.designs;
    if (st != QC_OK)
        return st;
    out->increasing = inc;
    if (reached != 1) {
        out->best_value = value_of(rq, bu);
        out->best_figure = from_goodness(kind, bg);
        if (reached == 0)
            return qc_fail(QC_EINFEASIBLE,
                           "target %s = %g is not reached for %s in the range %g%s to "
                           "%g%s: the best is %s = %.6g%s at %s = %.6g%s",
                           qc_target_name(kind), rq->target.value, rq->name, rq->lo, rq->unit,
                           rq->hi, rq->unit, qc_target_name(kind), out->best_figure,
                           figure_unit(kind), rq->name, out->best_value, rq->unit);
        return qc_fail(QC_EINFEASIBLE,
                       "target %s = %g is met over the whole range of %s, %g%s to %g%s "
                       "(the worst is %s = %.6g%s at %.6g%s): the required value lies "
                       "outside it; widen the search range (require --range)",
                       qc_target_name(kind), rq->target.value, rq->name, rq->lo, rq->unit,
                       rq->hi, rq->unit, qc_target_name(kind), out->best_figure,
                       figure_unit(kind), out->best_value, rq->unit);
    }
    out->required = value_of(rq, root);
    if ((out->unquantized_note = no_unq) != NULL)
        return QC_OK;
    search su = {.rq = rq, .unquantized = 1, .tol_db = tol_db};
    int uinc;
    st = solve(&su, "unquantized", &uroot, &uinc, &bu, &bg, &reached);
    out->designs += su.designs;
    if (st != QC_OK)
        return st;
    if (reached == 1) {
        out->unquantized_required = value_of(rq, uroot);
        double diff = rq->linear ? 10.0 * log10(out->required / out->unquantized_required)
                                 : out->required - out->unquantized_required;
        const double tol = rq->linear ? tol_db / 10.0 : tol_db;
        /* both roots are known to the solver's tolerance only */
        out->penalty_db = fabs(diff) <= 2.0 * tol ? 0.0 : inc ? diff : -diff;
    }
    return QC_OK;
}

double qc_require_margin_db(const qc_require_result *res, int linear, double operating)
{
    if (!res || !isfinite(res->required) || !isfinite(operating))
        return NAN;
    if (!(operating >= res->range_lo && operating <= res->range_hi))
        return NAN; /* not checked monotone out there */
    if (linear && !(operating > 0.0 && res->required > 0.0))
        return NAN;
    double diff = linear ? 10.0 * log10(operating / res->required) : operating - res->required;
    return res->increasing ? diff : -diff;
}
