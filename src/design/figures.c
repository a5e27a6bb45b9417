/* figures.c — the figures practitioners quote, filled into every design
 * result from its channel, law and levels: MAP hard-decision symbol error
 * rate and pre-FEC BER with Gray labels (per quadrature for QAM;
 * src/core/hard_decision.c), Q-factor, NGMI (Cho, Schmalen, Winzer, ECOC
 * 2017), rates in Gb/s and bit/s/Hz, photon efficiency for the models
 * that count photons, and whether a FEC code closes the link with its net
 * rate (src/core/fec.c). */
#include "design/design_internal.h"

#include <math.h>
#include <stdlib.h>

qc_status qc_design_figures(const qc_design_request *req, qc_design_result *r)
{
    const unsigned d = r->dimensions == 2 ? 2 : 1;
    r->symbol_error_rate = r->pre_fec_ber = r->q_factor_db = r->ngmi = NAN;
    r->symbol_rate = r->rate_gbps = r->photons_per_symbol = NAN;
    r->bits_per_photon = r->photons_per_bit = NAN;
    r->fec_margin = r->net_bits = r->net_rate_gbps = NAN;
    r->fec_given = r->fec_closes = 0;
    r->fec_note = NULL;
    if (req->channel.polarizations > 2)
        return qc_fail(QC_EINVAL, "polarizations must be 1 or 2 (got %u)", req->channel.polarizations);
    if (req->channel.symbol_rate != 0.0 && !(req->channel.symbol_rate > 0.0 && isfinite(req->channel.symbol_rate)))
        return qc_fail(QC_EINVAL, "symbol-rate must be a positive number of baud (got %g)",
                       req->channel.symbol_rate);
    r->polarizations = req->channel.polarizations ? req->channel.polarizations : d == 2 ? 2 : 1;
    const double pol = (double)r->polarizations;

    size_t *labels = NULL;
    unsigned nbits = 0;
    qc_status st = QC_OK;
    if (qc_is_power_of_two(r->nlevels)) {
        if (!(labels = qc_malloc_array(r->nlevels, sizeof *labels)))
            return qc_fail(QC_ENOMEM, "out of memory");
        st = qc_gray_labels(r->levels, r->nlevels, labels, &nbits);
    }
    qc_hard_figures hard;
    if (st == QC_OK)
        st = qc_hard_decision(r->channel, r->input, labels, nbits, d, &hard);
    free(labels);
    if (st != QC_OK)
        return st;
    r->symbol_error_rate = hard.symbol_error_rate;
    r->pre_fec_ber = hard.pre_fec_ber;
    r->q_factor_db = hard.q_factor_db;
    r->entropy_bits = (double)d * qc_entropy(r->input, r->nlevels) * QC_LOG2E;
    const double m = (double)(d * nbits);
    r->ngmi = nbits ? qc_ngmi(r->gmi_bits, r->entropy_bits, m) : NAN;

    r->spectral_efficiency = qc_spectral_efficiency(r->rate_bits, r->polarizations);
    if (req->channel.symbol_rate > 0.0) {
        r->symbol_rate = req->channel.symbol_rate;
        r->rate_gbps = qc_rate_gbps(r->rate_bits, req->channel.symbol_rate, r->polarizations);
    }
    r->photons_per_symbol = qc_model_mean_photons(req->channel.model, r->levels, r->input, r->nlevels);
    if (r->photons_per_symbol > 0.0) {
        r->bits_per_photon = r->rate_bits / r->photons_per_symbol;
        if (r->rate_bits > 0.0)
            r->photons_per_bit = r->photons_per_symbol / r->rate_bits;
    }

    if (req->input.fec) {
        qc_fec_outcome o;
        if ((st = qc_fec_evaluate(req->input.fec, r->pre_fec_ber, r->ngmi, r->entropy_bits, m,
                                  &o)) != QC_OK)
            return st;
        r->fec_given = 1;
        r->fec = *req->input.fec;
        r->fec_closes = o.closes;
        r->fec_margin = o.margin;
        r->net_bits = o.net_bits * pol;
        if (req->channel.symbol_rate > 0.0)
            r->net_rate_gbps = r->net_bits * req->channel.symbol_rate * 1e-9;
    }
    return QC_OK;
}
