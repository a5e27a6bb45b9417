/* iq_entry.c — a design request for a two-dimensional constellation
 * (request channel.iq) turned into a design result: the cells of the I/Q
 * pair or of the polar quantizer (designed, uniform or given; iq_design.c),
 * the exact transition matrix (iq_channel.c), its rates (iq_rate.c: MI,
 * BICM GMI, and for the capacity objective the certified Blahut–Arimoto
 * capacity of the matrix), the unquantized MI without phase noise
 * (Gauss–Hermite), and the figures the trade quotes: MAP hard decisions
 * per cell through the constellation's labels, NGMI (Cho, Schmalen,
 * Winzer, ECOC 2017), rates in Gb/s and a FEC code's verdict. So a sweep,
 * `require` and `design` rate 2-D alphabets through the same request as
 * the 1-D ones. */
#include "design/design_internal.h"
#include "quantcap/iq.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#define MAX_UNQUANTIZED_POINTS 1024 /* larger constellations: no Gauss–Hermite reference */

static qc_status check(const qc_design_request *req, double *sigma)
{
    const qc_design_iq *iq = req->channel.iq;
    const qc_model *m = req->channel.model;
    if (!iq->plane)
        return qc_fail(QC_EINVAL, "iq: no constellation given");
    if (!m)
        return qc_fail(QC_EINVAL, "iq: no noise model given");
    const qc_model_type *t = qc_model_get_type(m);
    int si = qc_model_param_index(t, "sigma");
    if (si < 0 || !(t->properties & QC_MODEL_ADDITIVE_GAUSSIAN) ||
        (t->properties & QC_MODEL_INTENSITY))
        return qc_fail(QC_EINVAL, "a two-dimensional constellation needs an additive Gaussian "
                                  "model with 'sigma' per quadrature (model gauss), not model "
                                  "'%s'",
                       t->name);
    *sigma = qc_model_param(m, (size_t)si);
    if (!(*sigma > 0.0) || !isfinite(*sigma))
        return qc_fail(QC_EINVAL, "iq: sigma must be > 0 (got %g)", *sigma);
    if (req->input.objective != QC_OBJECTIVE_MI && req->input.objective != QC_OBJECTIVE_GMI &&
        req->input.objective != QC_OBJECTIVE_CAPACITY)
        return qc_fail(QC_EINVAL, "iq: unknown objective");
    if (req->input.objective == QC_OBJECTIVE_GMI && !iq->plane->labels)
        return qc_fail(QC_EINVAL, "objective gmi: the constellation has no labels");
    if (!(iq->phase_sd >= 0.0) || !isfinite(iq->phase_sd))
        return qc_fail(QC_EINVAL, "iq: the phase error must be >= 0 (got %g rad)", iq->phase_sd);
    qc_quantizer_kind k = req->quantizer.kind;
    if (k != QC_QUANTIZER_OPTIMAL && k != QC_QUANTIZER_UNIFORM && k != QC_QUANTIZER_FIXED)
        return qc_fail(QC_EINVAL, "quantizer %s: a two-dimensional receiver takes optimal "
                                  "(cells designed), uniform or fixed",
                       qc_quantizer_name(k));
    if (k == QC_QUANTIZER_FIXED && iq->kind != QC_IQ_PRODUCT)
        return qc_fail(QC_EINVAL, "thresholds: given thresholds are those of the I/Q pair "
                                  "(iq-quantizer product)");
    return QC_OK;
}

/* The cells: given, uniform or designed; *des holds them unless given. */
static qc_status cells_of(const qc_design_request *req, const qc_iq_noise *noise,
                          qc_iq_design_result *des, qc_iq_cells *cells)
{
    const qc_design_iq *iq = req->channel.iq;
    if (req->quantizer.kind == QC_QUANTIZER_FIXED) {
        *cells = (qc_iq_cells){QC_IQ_PRODUCT, req->quantizer.thresholds,
                               req->quantizer.nthresholds, req->quantizer.thresholds,
                               req->quantizer.nthresholds, NULL, 0, NULL, 0};
        return QC_OK;
    }
    qc_iq_design_request dq;
    memset(&dq, 0, sizeof dq);
    dq.kind = iq->kind;
    dq.cells_i = dq.cells_q = req->quantizer.cells;
    dq.amplitude_cells = iq->amplitude_cells;
    dq.phase_cells = iq->phase_cells;
    dq.objective =
        req->input.objective == QC_OBJECTIVE_GMI ? QC_OBJECTIVE_GMI : QC_OBJECTIVE_MI;
    qc_status st = req->quantizer.kind == QC_QUANTIZER_UNIFORM
                       ? qc_iq_uniform(iq->plane, noise, &dq, des)
                       : qc_iq_design(iq->plane, noise, &dq, des);
    if (st == QC_OK)
        *cells = des->cells;
    return st;
}

static double *copy_of(const double *v, size_t n, qc_status *st)
{
    if (n == 0 || *st != QC_OK)
        return NULL;
    double *c = qc_malloc_array(n, sizeof *c);
    if (!c)
        *st = qc_fail(QC_ENOMEM, "out of memory");
    else
        memcpy(c, v, n * sizeof *c);
    return c;
}

/* The constellation and the cells into the result. */
static qc_status describe(const qc_design_iq *iq, const qc_iq_cells *q, qc_design_result *r)
{
    const qc_plane *c = iq->plane;
    qc_status st = QC_OK;
    r->points = c->size;
    if (!(r->points_xy = qc_malloc_array(2 * c->size, sizeof *r->points_xy)))
        return qc_fail(QC_ENOMEM, "out of memory");
    for (size_t i = 0; i < c->size; i++) {
        r->points_xy[2 * i] = c->x[i];
        r->points_xy[2 * i + 1] = c->y[i];
    }
    r->point_law = copy_of(c->prob, c->size, &st);
    if (st == QC_OK && c->labels) {
        if (!(r->point_labels = qc_malloc_array(c->size, sizeof *r->point_labels)))
            return qc_fail(QC_ENOMEM, "out of memory");
        memcpy(r->point_labels, c->labels, c->size * sizeof *c->labels);
        r->point_label_bits = c->nbits;
        r->labelling = iq->labelling ? iq->labelling : c->labelling;
    }
    r->iq_kind = (unsigned)q->kind;
    r->output_cells = qc_iq_cell_count(q);
    if (q->kind == QC_IQ_PRODUCT) {
        r->cells_i = q->nti + 1;
        r->cells_q = q->ntq + 1;
        r->nthresholds = q->nti;
        r->thresholds = copy_of(q->ti, q->nti, &st);
        r->thresholds_q = copy_of(q->tq, q->ntq, &st);
    } else {
        r->amplitude_cells = q->nradii + 1;
        r->phase_cells = q->nphases;
        r->amplitude_thresholds = copy_of(q->radii, q->nradii, &st);
        r->phase_thresholds = copy_of(q->phases, q->nphases, &st);
    }
    return st;
}

/* Hard decisions, NGMI, trade units and the FEC code (as figures.c does
 * for 1-D alphabets, here on the whole 2-D channel). */
static qc_status figures(const qc_design_request *req, const qc_plane *c, qc_design_result *r)
{
    r->symbol_error_rate = r->pre_fec_ber = r->q_factor_db = NAN;
    r->symbol_rate = r->rate_gbps = r->photons_per_symbol = NAN;
    r->bits_per_photon = r->photons_per_bit = NAN;
    r->fec_margin = r->net_bits = r->net_rate_gbps = NAN;
    if (req->channel.polarizations > 2)
        return qc_fail(QC_EINVAL, "polarizations must be 1 or 2 (got %u)",
                       req->channel.polarizations);
    if (req->channel.symbol_rate != 0.0 &&
        !(req->channel.symbol_rate > 0.0 && isfinite(req->channel.symbol_rate)))
        return qc_fail(QC_EINVAL, "symbol-rate must be a positive number of baud (got %g)",
                       req->channel.symbol_rate);
    r->polarizations = req->channel.polarizations ? req->channel.polarizations : 2;
    qc_hard_figures hard;
    qc_status st = qc_hard_decision(r->channel, c->prob, c->labels, c->labels ? c->nbits : 0, 1,
                                    &hard);
    if (st != QC_OK)
        return st;
    r->symbol_error_rate = hard.symbol_error_rate;
    r->pre_fec_ber = c->labels ? hard.pre_fec_ber : NAN;
    r->q_factor_db = c->labels ? hard.q_factor_db : NAN;
    r->spectral_efficiency = qc_spectral_efficiency(r->rate_bits, r->polarizations);
    if (req->channel.symbol_rate > 0.0) {
        r->symbol_rate = req->channel.symbol_rate;
        r->rate_gbps = qc_rate_gbps(r->rate_bits, req->channel.symbol_rate, r->polarizations);
    }
    if (req->input.fec) {
        qc_fec_outcome o;
        if ((st = qc_fec_evaluate(req->input.fec, r->pre_fec_ber, r->ngmi, r->entropy_bits,
                                  c->labels ? (double)c->nbits : 0.0, &o)) != QC_OK)
            return st;
        r->fec_given = 1;
        r->fec = *req->input.fec;
        r->fec_closes = o.closes;
        r->fec_margin = o.margin;
        r->net_bits = o.net_bits * (double)r->polarizations;
        if (req->channel.symbol_rate > 0.0)
            r->net_rate_gbps = r->net_bits * req->channel.symbol_rate * 1e-9;
    }
    return QC_OK;
}

qc_status qc_iq_request_design(const qc_design_request *req, qc_design_result *res)
{
    memset(res, 0, sizeof *res);
    double sigma = NAN;
    qc_status st = check(req, &sigma);
    if (st != QC_OK)
        return st;
    const qc_design_iq *iq = req->channel.iq;
    const qc_plane *c = iq->plane;
    const qc_iq_noise noise = {sigma, iq->phase_sd, iq->phase_law};
    qc_iq_design_result des;
    memset(&des, 0, sizeof des);
    qc_iq_cells cells;
    qc_dmc *ch = NULL;
    double quad_err = 0.0;
    qc_iq_rates rates;
    const int capacity = req->input.objective == QC_OBJECTIVE_CAPACITY;
    const double tol = req->numerics.tol_bits > 0.0 ? req->numerics.tol_bits : 1e-9;
    if ((st = cells_of(req, &noise, &des, &cells)) != QC_OK ||
        (st = qc_iq_channel(c, &noise, &cells, &ch, &quad_err)) != QC_OK ||
        (st = qc_iq_rates_compute(c, ch, capacity, tol, &rates)) != QC_OK)
        goto fail;
    res->channel = ch;
    ch = NULL;
    res->iq = 1;
    res->dimensions = 2;
    res->objective = req->input.objective;
    res->quantizer = req->quantizer.kind;
    if ((st = describe(iq, &cells, res)) != QC_OK)
        goto fail;
    res->cells = res->cells_used = res->output_cells;
    res->mi_bits = rates.mi_bits;
    res->gmi_bits = rates.gmi_bits;
    res->entropy_bits = rates.entropy_bits;
    res->ngmi = rates.ngmi;
    res->rate_bits = capacity ? rates.capacity_bits
                     : req->input.objective == QC_OBJECTIVE_GMI ? rates.gmi_bits
                                                                 : rates.mi_bits;
    res->upper_bound_bits = capacity ? rates.capacity_upper_bits : res->rate_bits;
    res->iterations = rates.capacity_iterations;
    res->tol_bits = tol;
    res->cell_error = quad_err;
    res->phase_noise_sd = iq->phase_sd;
    res->phase_noise_law = (unsigned)iq->phase_law;
    res->iq_start_bits = req->quantizer.kind == QC_QUANTIZER_FIXED ? NAN : des.start_bits;
    res->iq_evaluations = req->quantizer.kind == QC_QUANTIZER_FIXED ? 1 : des.evaluations;
    res->design_iterations = res->iq_evaluations;
    res->iq_at_ceiling = req->quantizer.kind != QC_QUANTIZER_FIXED &&
                         req->quantizer.kind != QC_QUANTIZER_UNIFORM && des.at_ceiling;
    res->iq_per_axis = req->quantizer.kind == QC_QUANTIZER_OPTIMAL && des.per_axis;
    res->iq_axis_start = req->quantizer.kind == QC_QUANTIZER_OPTIMAL ? des.axis_start : 0;
    res->iq_axis_start_bits = res->iq_axis_start ? des.axis_start_bits : NAN;
    res->design_convergence = req->quantizer.kind == QC_QUANTIZER_FIXED ||
                                      req->quantizer.kind == QC_QUANTIZER_UNIFORM
                                  ? QC_CONVERGENCE_NONE
                              : des.converged ? QC_CONVERGED
                                              : QC_NOT_CONVERGED;
    /* the unquantized reference: the MI of the law without phase noise */
    res->unquantized_bits = res->unquantized_err_bits = res->loss_bits = NAN;
    if (req->input.objective == QC_OBJECTIVE_MI && iq->phase_sd == 0.0 &&
        c->size <= MAX_UNQUANTIZED_POINTS) {
        double u, e = NAN;
        size_t nodes = 0;
        if ((st = qc_iq_unquantized_mi(c, sigma, 0, &u, &e, &nodes)) != QC_OK)
            goto fail;
        res->iq_unquantized_per_axis = nodes == 0;
        res->unquantized_bits = u;
        res->unquantized_err_bits = e;
        res->loss_bits = fmax(u - res->rate_bits, 0.0);
    }
    const double es = qc_plane_energy(c);
    res->average_power = es;
    res->average_level = res->dispersion_bits2 = res->shaping_gap_db = NAN;
    res->rate_at_blocklength_bits = NAN;
    res->snr_db = 10.0 * log10(es / (2.0 * sigma * sigma));
    res->snr_penalty_db = NAN;
    res->snr_penalty_note = QC_PENALTY_PLANE;
    res->mse = NAN;
    res->shaping_nu = res->shaping_scale = res->uniform_rate_bits = res->shaping_gain_db = NAN;
    res->hard_rate_bits = res->hard_threshold = res->rate_per_slot_bits = NAN;
    if ((st = figures(req, c, res)) != QC_OK)
        goto fail;
    qc_iq_design_result_free(&des);
    return QC_OK;
fail:
    qc_iq_design_result_free(&des);
    qc_dmc_free(ch);
    qc_design_result_clear(res);
    return st;
}
