/* report.c — the JSON description of one design: the same object for
 * `quantcap design --json` and for each point of a sweep, so that the two
 * can be compared field by field. */
#include "study/report.h"

#include "core/internal.h"

#include <math.h>
#include <stddef.h>
#include <stdlib.h>

/* qc_objective_name and qc_quantizer_name live with the design
 * (src/quantizer/design.c). */

json_t *qc_report_real(double v) { return isfinite(v) ? json_real(v) : json_null(); }

json_t *qc_report_array(const double *v, size_t n)
{
    json_t *a = json_array();
    for (size_t i = 0; a && i < n; i++)
        json_array_append_new(a, qc_report_real(v[i]));
    return a;
}

static unsigned bits_of(size_t cells)
{
    unsigned b = 0;
    while (((size_t)1 << b) < cells && b < 63)
        b++;
    return ((size_t)1 << b) == cells ? b : 0;
}

static json_t *name_or_null(const char *name)
{
    return name ? json_string(name) : json_null();
}

/* ---- alphabet and input design ------------------------------------ */

#define MASS_POINT_MIN 1e-6 /* probability of a level reported as a mass point */

/* Bit string of a label, most significant bit first. */
static json_t *label_string(size_t label, unsigned nbits)
{
    char text[65];
    for (unsigned b = 0; b < nbits && b < 64; b++)
        text[b] = (char)('0' + ((label >> (nbits - 1 - b)) & 1));
    text[nbits < 64 ? nbits : 64] = '\0';
    return json_string(text);
}

/* Gray labels of the levels (QAM: of the points, in-phase index major,
 * in-phase bits first); NULL when the levels are not a power of 2. */
static json_t *labels_of(const qc_design_result *res)
{
    size_t n = res->nlevels;
    size_t *lab = malloc(n * sizeof *lab);
    unsigned nbits;
    if (!lab || qc_gray_labels(res->levels, n, lab, &nbits) != QC_OK) {
        free(lab);
        return NULL;
    }
    json_t *a = json_array();
    for (size_t i = 0; a && i < n; i++) {
        if (res->dimensions == 2)
            for (size_t q = 0; q < n; q++)
                json_array_append_new(a, label_string(lab[i] << nbits | lab[q], 2 * nbits));
        else
            json_array_append_new(a, label_string(lab[i], nbits));
    }
    free(lab);
    return a;
}

static void report_alphabet(json_t *o, const qc_design_request *req,
                            const qc_design_result *res)
{
    json_object_set_new(o, QC_REPORT_DIMENSIONS,
                        json_integer(res->dimensions ? res->dimensions : 1));
    json_object_set_new(o, "mi_bits", qc_report_real(res->mi_bits));
    json_object_set_new(o, "gmi_bits", qc_report_real(res->gmi_bits));
    json_t *labels = res->label_bits ? labels_of(res) : NULL;
    json_object_set_new(o, "labels", labels ? labels : json_null());
    json_object_set_new(o, "dispersion", qc_report_real(res->dispersion_bits2));
    json_object_set_new(o, "blocklength",
                        res->blocklength ? json_integer((json_int_t)res->blocklength)
                                         : json_null());
    json_object_set_new(o, "error_rate", qc_report_real(res->blocklength ? res->error_rate
                                                                         : NAN));
    json_object_set_new(o, "rate_at_blocklength_bits",
                        qc_report_real(res->rate_at_blocklength_bits));
    if (res->blocklength)
        json_object_set_new(o, "rate_at_blocklength_note",
                            res->rate_at_blocklength_note
                                ? json_string(res->rate_at_blocklength_note)
                                : json_null());
    json_object_set_new(o, "shaping_gap_db", qc_report_real(res->shaping_gap_db));
    json_object_set_new(o, "average_power", qc_report_real(res->average_power));
    json_object_set_new(o, "average_level", qc_report_real(res->average_level));
    json_t *c = json_object();
    if (c && req->input.constraints) {
        if (!isnan(req->input.constraints->peak))
            json_object_set_new(c, "peak_limit", qc_report_real(req->input.constraints->peak));
        if (!isnan(req->input.constraints->power))
            json_object_set_new(c, "power_limit", qc_report_real(req->input.constraints->power));
        if (!isnan(req->input.constraints->mean))
            json_object_set_new(c, "mean_limit", qc_report_real(req->input.constraints->mean));
    }
    json_object_set_new(o, "constraints", c);
    json_t *mass = json_array();
    for (size_t i = 0; mass && i < res->nlevels; i++) {
        if (!(res->input[i] > MASS_POINT_MIN))
            continue;
        json_t *p = json_object();
        json_object_set_new(p, "level", qc_report_real(res->levels[i]));
        json_object_set_new(p, "probability", qc_report_real(res->input[i]));
        json_array_append_new(mass, p);
    }
    json_object_set_new(o, "mass_points", mass);
    json_object_set_new(o, "levels_optimized", json_boolean(res->levels_optimized));
    json_object_set_new(o, "level_evaluations", json_integer((json_int_t)res->level_evaluations));
}

/* ---- the figures practitioners quote (src/design/figures.c) -------- */

static void report_figures(json_t *o, const qc_design_result *res)
{
    json_object_set_new(o, "symbol_error_rate", qc_report_real(res->symbol_error_rate));
    json_object_set_new(o, "pre_fec_ber", qc_report_real(res->pre_fec_ber));
    json_object_set_new(o, "q_factor_db", qc_report_real(res->q_factor_db));
    json_object_set_new(o, "entropy_bits", qc_report_real(res->entropy_bits));
    json_object_set_new(o, "ngmi", qc_report_real(res->ngmi));
    json_object_set_new(o, "symbol_rate", qc_report_real(res->symbol_rate));
    json_object_set_new(o, "polarizations", json_integer(res->polarizations));
    json_object_set_new(o, "rate_gbps", qc_report_real(res->rate_gbps));
    json_object_set_new(o, "spectral_efficiency", qc_report_real(res->spectral_efficiency));
    json_object_set_new(o, QC_REPORT_PHOTONS, qc_report_real(res->photons_per_symbol));
    json_object_set_new(o, QC_REPORT_BITS_PER_PHOTON, qc_report_real(res->bits_per_photon));
    json_object_set_new(o, "photons_per_bit", qc_report_real(res->photons_per_bit));
    json_t *fec = json_null();
    if (res->fec_given) {
        fec = json_object();
        json_object_set_new(fec, "name", json_string(res->fec.name));
        json_object_set_new(fec, "overhead_percent", qc_report_real(100.0 * res->fec.overhead));
        json_object_set_new(fec, "threshold_kind",
                            json_string(res->fec.kind == QC_FEC_HARD ? "ber" : "ngmi"));
        json_object_set_new(fec, "threshold", qc_report_real(res->fec.threshold));
    }
    json_object_set_new(o, "fec", fec);
    /* null where no code was given or the verdict is undefined */
    json_object_set_new(o, "fec_closes", res->fec_given && !res->fec_note
                                             ? json_boolean(res->fec_closes)
                                             : json_null());
    json_object_set_new(o, "fec_margin", qc_report_real(res->fec_margin));
    json_object_set_new(o, "net_bits", qc_report_real(res->net_bits));
    json_object_set_new(o, "net_rate_gbps", qc_report_real(res->net_rate_gbps));
    /* a channel with memory with a code: why its verdict is undefined
     * (null where it is defined); memoryless reports keep their keys */
    if (res->fec_given && res->states > 0)
        json_object_set_new(o, "fec_note",
                            res->fec_note ? json_string(res->fec_note) : json_null());
}

/* ---- pulse-position modulation (src/design/ppm_design.c) ---------- */

/* Only for PPM designs, so the report of every other design is as it was. */
static void report_ppm(json_t *o, const qc_design_result *res)
{
    json_object_set_new(o, QC_REPORT_PPM_SLOTS, json_integer((json_int_t)res->ppm_slots));
    json_object_set_new(o, QC_REPORT_RATE_PER_SLOT, qc_report_real(res->rate_per_slot_bits));
    json_object_set_new(o, "ppm_evaluations", json_integer((json_int_t)res->ppm_evaluations));
    json_object_set_new(o, "hard_rate_bits", qc_report_real(res->hard_rate_bits));
    json_object_set_new(o, QC_REPORT_HARD_RATE_PER_SLOT,
                        qc_report_real(res->hard_rate_bits / (double)res->ppm_slots));
    json_object_set_new(o, QC_REPORT_HARD_BITS_PER_PHOTON,
                        qc_report_real(res->photons_per_symbol > 0.0
                                           ? res->hard_rate_bits / res->photons_per_symbol
                                           : NAN));
    json_object_set_new(o, "hard_threshold", qc_report_real(res->hard_threshold));
    json_object_set_new(o, "hard_fire_on", qc_report_real(res->hard_fire_on));
    json_object_set_new(o, "hard_fire_off", qc_report_real(res->hard_fire_off));
    json_object_set_new(o, "hard_erasure", qc_report_real(res->hard_erasure));
    json_object_set_new(o, "hard_error", qc_report_real(res->hard_error));
}

/* The converter as used (quantizer converter): thresholds are then its
 * transition levels, in full-scale units. */
static void report_converter(json_t *o, const qc_design_request *req,
                             const qc_design_result *res)
{
    static const char *const rule[] = {"fixed", "best", "agc"};
    const qc_converter *c = req->quantizer.converter;
    json_object_set_new(o, "enob", qc_report_real(res->enob));
    json_object_set_new(o, "gain", qc_report_real(res->gain));
    json_object_set_new(o, "offset", qc_report_real(res->offset));
    json_t *j = json_object();
    json_object_set_new(j, "bits", json_integer(res->converter_bits));
    json_object_set_new(j, "enob", qc_report_real(res->enob));
    json_object_set_new(j, "sinad_db", qc_report_real(res->sinad_db));
    if (c) {
        double fs[2] = {c->full_scale_lo, c->full_scale_hi};
        json_object_set_new(j, "full_scale", qc_report_array(fs, 2));
        json_object_set_new(j, "gain_rule", json_string(rule[c->gain_mode]));
        json_object_set_new(j, "agc_k", qc_report_real(c->gain_mode == QC_GAIN_AGC ? c->agc_k
                                                                                 : NAN));
        json_object_set_new(j, "offset_rule", json_string(c->offset_best ? "best"
                                                          : isnan(c->offset) ? "agc"
                                                                             : "fixed"));
        json_object_set_new(j, "jitter_s", qc_report_real(c->jitter_s));
        json_object_set_new(j, "signal_freq", qc_report_real(c->jitter_s > 0.0 ? c->signal_freq
                                                                               : NAN));
        json_object_set_new(j, "dnl_lsb", qc_report_real(c->dnl_lsb));
        json_object_set_new(j, "inl_lsb", qc_report_real(c->inl_lsb));
        json_object_set_new(j, "seed", json_integer((json_int_t)c->seed));
        json_object_set_new(j, "measured_transitions", json_boolean(c->transitions != NULL));
    }
    json_object_set_new(j, "gain", qc_report_real(res->gain));
    json_object_set_new(j, "offset", qc_report_real(res->offset));
    json_object_set_new(j, "noise_rms", qc_report_real(res->converter_noise_rms));
    json_object_set_new(j, "draws", json_integer((json_int_t)res->draws));
    json_object_set_new(j, "draws_mean_bits", qc_report_real(res->draws_mean_bits));
    json_object_set_new(j, "draws_sd_bits", qc_report_real(res->draws_sd_bits));
    json_object_set_new(j, "draws_ci95_bits", qc_report_real(res->draws_ci95_bits));
    json_object_set_new(o, "converter", j);
}

/* ---- the amplified fibre link that set the SNR (src/frontend) ------ */

static void report_fibre_link(json_t *o, const qc_fibre_link_result *l)
{
    json_object_set_new(o, "span_loss_db", qc_report_real(l->span_loss_db));
    json_object_set_new(o, "amplifier_gain_db", qc_report_real(l->gain_db));
    json_object_set_new(o, "launch_dbm", qc_report_real(l->launch_dbm));
    json_object_set_new(o, "osnr_db", qc_report_real(l->osnr_db));
    json_object_set_new(o, "snr_ase_db", qc_report_real(l->snr_ase_db));
    json_object_set_new(o, "snr_nli_db", qc_report_real(l->snr_nli_db));
    json_object_set_new(o, "snr_eff_db", qc_report_real(l->snr_eff_db));
    json_object_set_new(o, "optimum_launch_dbm", qc_report_real(l->optimum_launch_dbm));
    json_object_set_new(o, "optimum_snr_db", qc_report_real(l->optimum_snr_db));
}

/* A channel with memory: its simulated rates (only when it has one, so
 * that memoryless reports keep their keys). */
static void report_memory(json_t *o, const qc_design_result *res)
{
    if (res->states == 0)
        return;
    json_object_set_new(o, "taps", qc_report_array(res->taps, res->ntaps));
    json_object_set_new(o, "states", json_integer((json_int_t)res->states));
    json_object_set_new(o, "symbols", json_integer((json_int_t)res->memory_symbols));
    json_object_set_new(o, "rate_ci_target_bits", qc_report_real(res->memory_rate_ci_target));
    json_object_set_new(o, "information_rate_bits", qc_report_real(res->information_rate_bits));
    json_object_set_new(o, "information_rate_ci_bits",
                        qc_report_real(res->information_rate_ci_bits));
    json_object_set_new(o, "unquantized_information_rate_bits",
                        qc_report_real(res->unquantized_information_rate_bits));
    json_object_set_new(o, "unquantized_information_rate_ci_bits",
                        qc_report_real(res->unquantized_information_rate_ci_bits));
    json_object_set_new(o, "symbolwise_rate_bits", qc_report_real(res->symbolwise_rate_bits));
    json_object_set_new(o, "memory_thresholds",
                        qc_report_array(res->memory_thresholds, res->nthresholds));
    json_object_set_new(o, "full_scale_factor", qc_report_real(res->full_scale_factor));
    json_object_set_new(o, "full_scale_at_bound", json_boolean(res->full_scale_at_bound));
    json_object_set_new(o, "memory_evaluations",
                        json_integer((json_int_t)res->memory_evaluations));
    if (res->converter) {
        json_object_set_new(o, "memory_gain", qc_report_real(res->memory_gain));
        json_object_set_new(o, "memory_offset", qc_report_real(res->memory_offset));
    }
    static const struct {
        const char *key;
        size_t off;
    } figs[] = {
        {"symbolwise_pre_fec_ber", offsetof(qc_design_result, symbolwise_pre_fec_ber)},
        {"symbolwise_ngmi", offsetof(qc_design_result, symbolwise_ngmi)},
        {"bcjr_pre_fec_ber", offsetof(qc_design_result, bcjr_pre_fec_ber)},
        {"bcjr_pre_fec_ber_ci", offsetof(qc_design_result, bcjr_pre_fec_ber_ci)},
        {"bcjr_gmi_bits", offsetof(qc_design_result, bcjr_gmi_bits)},
        {"bcjr_gmi_ci_bits", offsetof(qc_design_result, bcjr_gmi_ci_bits)},
        {"bcjr_ngmi", offsetof(qc_design_result, bcjr_ngmi)},
        {"bcjr_ngmi_ci", offsetof(qc_design_result, bcjr_ngmi_ci)},
        {"unquantized_bcjr_pre_fec_ber", offsetof(qc_design_result, unquantized_bcjr_pre_fec_ber)},
        {"unquantized_bcjr_pre_fec_ber_ci",
         offsetof(qc_design_result, unquantized_bcjr_pre_fec_ber_ci)},
        {"unquantized_bcjr_ngmi", offsetof(qc_design_result, unquantized_bcjr_ngmi)},
        {"unquantized_bcjr_ngmi_ci", offsetof(qc_design_result, unquantized_bcjr_ngmi_ci)},
    };
    for (size_t i = 0; i < sizeof figs / sizeof figs[0]; i++)
        json_object_set_new(o, figs[i].key,
                            qc_report_real(*(const double *)((const char *)res + figs[i].off)));
    if (!res->coherent)
        return; /* one real output: the keys above only */
    json_object_set_new(o, "detection", json_string("coherent"));
    json_object_set_new(o, "taps_imag", qc_report_array(res->taps_imag, res->ntaps));
    if (isfinite(res->truncated_energy))
        json_object_set_new(o, "truncated_energy", qc_report_real(res->truncated_energy));
}

/* ---- probabilistic shaping (src/design/shaping.c) ----------------- */

/* Present when the request gave a shaping ("none" included), so that a
 * sweep with a shaping axis has the columns on every row. */
static void report_shaping(json_t *o, const qc_design_result *res)
{
    if (!res->shaping_given)
        return;
    char spec[64];
    qc_shaping_format(&res->shaping, spec, sizeof spec);
    json_object_set_new(o, "shaping", json_string(spec));
    json_object_set_new(o, "shaping_nu", qc_report_real(res->shaping_nu));
    /* the power the shaped law keeps and the gain is quoted in */
    json_object_set_new(o, "shaping_power",
                        json_string(res->shaping.intensity ? "E[x]" : "E[x^2]"));
    json_object_set_new(o, "shaping_scale", qc_report_real(res->shaping_scale));
    json_object_set_new(o, "uniform_rate_bits", qc_report_real(res->uniform_rate_bits));
    json_object_set_new(o, "shaping_gain_db", qc_report_real(res->shaping_gain_db));
    json_object_set_new(o, "shaping_evaluations",
                        json_integer((json_int_t)res->shaping_evaluations));
}

/* ---- two-dimensional constellations (src/design/iq_entry.c) ------- */

/* Only for 2-D designs, so the report of every other design is as it was. */
static void report_iq(json_t *o, const qc_design_result *res)
{
    static const double deg = 180.0 / 3.14159265358979323846;
    json_object_set_new(o, "iq_quantizer", json_string(res->iq_kind ? "polar" : "product"));
    json_object_set_new(o, "points", json_integer((json_int_t)res->points));
    json_t *pts = json_array();
    for (size_t i = 0; pts && i < res->points; i++)
        json_array_append_new(pts, qc_report_array(res->points_xy + 2 * i, 2));
    json_object_set_new(o, "constellation_points", pts);
    json_object_set_new(o, "point_probabilities", qc_report_array(res->point_law, res->points));
    json_t *lab = json_null();
    if (res->point_labels) {
        lab = json_array();
        for (size_t i = 0; lab && i < res->points; i++)
            json_array_append_new(lab, label_string(res->point_labels[i], res->point_label_bits));
    }
    json_object_set_new(o, "point_labels", lab);
    json_object_set_new(o, "labelling", name_or_null(res->labelling));
    json_object_set_new(o, "output_cells", json_integer((json_int_t)res->output_cells));
    if (res->iq_kind == 0) {
        json_object_set_new(o, "cells_i", json_integer((json_int_t)res->cells_i));
        json_object_set_new(o, "cells_q", json_integer((json_int_t)res->cells_q));
        json_object_set_new(o, "thresholds_q",
                            qc_report_array(res->thresholds_q, res->cells_q - 1));
    } else {
        json_object_set_new(o, "amplitude_cells", json_integer((json_int_t)res->amplitude_cells));
        json_object_set_new(o, "phase_cells", json_integer((json_int_t)res->phase_cells));
        json_object_set_new(o, "amplitude_thresholds",
                            qc_report_array(res->amplitude_thresholds, res->amplitude_cells - 1));
        json_t *ph = json_array();
        for (size_t i = 0; ph && i < res->phase_cells; i++)
            json_array_append_new(ph, qc_report_real(res->phase_thresholds[i] * deg));
        json_object_set_new(o, "phase_thresholds_deg", ph);
    }
    json_object_set_new(o, "phase_noise_deg", qc_report_real(res->phase_noise_sd * deg));
    json_object_set_new(o, "phase_noise_law",
                        res->phase_noise_sd > 0.0
                            ? json_string(res->phase_noise_law ? "tikhonov" : "gauss")
                            : json_null());
    json_object_set_new(o, "cell_probabilities", json_string(res->cell_error == 0.0
                                                                 ? "exact"
                                                                 : "quadrature"));
    json_object_set_new(o, "cell_probability_error", qc_report_real(res->cell_error));
    json_object_set_new(o, "iq_start_bits", qc_report_real(res->iq_start_bits));
    json_object_set_new(o, "iq_evaluations", json_integer((json_int_t)res->iq_evaluations));
    json_object_set_new(o, "iq_search",
                        res->iq_per_axis            ? json_string("per-axis")
                        : res->iq_evaluations <= 1 ? json_null()
                                                   : json_string("bfgs"));
    json_object_set_new(o, "iq_at_ceiling", json_boolean(res->iq_at_ceiling));
    json_object_set_new(o, "iq_axis_start",
                        res->iq_axis_start == 2   ? json_string("kept")
                        : res->iq_axis_start == 1 ? json_string("not higher")
                                                  : json_null());
    json_object_set_new(o, "iq_axis_start_bits",
                        res->iq_axis_start ? qc_report_real(res->iq_axis_start_bits)
                                           : json_null());
    json_object_set_new(o, "iq_unquantized_method",
                        !isfinite(res->unquantized_bits) ? json_null()
                        : res->iq_unquantized_per_axis   ? json_string("per-axis")
                                                         : json_string("gauss-hermite"));
}

json_t *qc_report_design(const qc_design_request *req, const qc_design_result *res)
{
    const qc_model *m = req->channel.model;
    json_t *o = json_object();
    if (!o)
        return NULL;
    json_object_set_new(o, "model", json_string(qc_model_get_type(m)->name));
    json_t *pj = json_object();
    for (size_t i = 0; i < qc_model_get_type(m)->nparams; i++) {
        char name[64];
        qc_field_name(qc_model_get_type(m)->params[i].name, name, sizeof name);
        json_object_set_new(pj, name, qc_report_real(qc_model_param(m, i)));
    }
    json_object_set_new(o, "parameters", pj);
    json_object_set_new(o, "level_unit", json_string(qc_design_level_unit(req)));
    json_object_set_new(o, "output_unit", json_string(qc_design_output_unit(req)));
    json_object_set_new(o, "objective", json_string(qc_objective_name(req->input.objective)));
    json_object_set_new(o, "quantizer", json_string(qc_quantizer_name(res->quantizer)));
    json_object_set_new(o, "cells", json_integer((json_int_t)(res->iq ? res->output_cells
                                                                         : req->quantizer.cells)));
    /* fewer than cells for count outputs with fewer counts that carry
     * probability (each has its own cell) */
    json_object_set_new(o, "cells_used", json_integer((json_int_t)(res->iq ? res->output_cells
                                                                              : res->nthresholds + 1)));
    unsigned bits = bits_of(res->iq && res->iq_kind ? 0 : req->quantizer.cells);
    json_object_set_new(o, "bits", bits ? json_integer(bits) : json_null());
    json_object_set_new(o, QC_REPORT_RATE, qc_report_real(res->rate_bits));
    json_object_set_new(o, "upper_bound_bits", qc_report_real(res->upper_bound_bits));
    json_object_set_new(o, "tolerance_bits", qc_report_real(res->tol_bits));
    json_object_set_new(o, QC_REPORT_UNQUANTIZED, qc_report_real(res->unquantized_bits));
    json_object_set_new(o, "unquantized_error_bits", qc_report_real(res->unquantized_err_bits));
    json_object_set_new(o, QC_REPORT_LOSS, qc_report_real(res->loss_bits));
    json_object_set_new(o, "rate_limited_by", name_or_null(qc_rate_limit_name(res->rate_limited_by)));
    json_object_set_new(o, "unquantized_limited_by",
                        name_or_null(qc_rate_limit_name(res->unquantized_limited_by)));
    json_object_set_new(o, "noiseless_limit", json_boolean(res->noiseless_limit));
    json_object_set_new(o, "iterations", json_integer((json_int_t)res->iterations));
    json_object_set_new(o, "design_iterations",
                        json_integer((json_int_t)res->design_iterations));
    json_object_set_new(o, "fine_cells", json_integer((json_int_t)res->fine_cells));
    json_object_set_new(o, "decisions_kept", json_integer((json_int_t)res->decisions_kept));
    /* the SNR the design operates at (under the optimized law for
     * objective capacity), not the requested snr-db */
    json_object_set_new(o, "operating_snr_db", qc_report_real(res->snr_db));
    const char *snr_def = qc_design_snr_definition(req);
    json_object_set_new(o, "snr_definition", snr_def ? json_string(snr_def) : json_null());
    json_object_set_new(o, QC_REPORT_SNR_PENALTY, qc_report_real(res->snr_penalty_db));
    json_object_set_new(o, "snr_penalty_note",
                        isfinite(res->snr_penalty_db)
                            ? json_null()
                            : name_or_null(qc_penalty_note_text(res->snr_penalty_note)));
    json_object_set_new(o, "mse", qc_report_real(res->mse));
    /* Lloyd-Max: whether its conditions hold to tolerance, and how far off */
    json_object_set_new(o, "design_converged",
                        res->design_convergence == QC_CONVERGENCE_NONE
                            ? json_null()
                            : json_boolean(res->design_convergence == QC_CONVERGED));
    json_object_set_new(o, "design_residual",
                        res->design_convergence == QC_CONVERGENCE_NONE
                            ? json_null()
                            : qc_report_real(res->design_residual));
    json_object_set_new(o, QC_REPORT_THRESHOLDS,
                        qc_report_array(res->thresholds, res->nthresholds));
    json_object_set_new(o, QC_REPORT_LEVELS, qc_report_array(res->levels, res->nlevels));
    json_object_set_new(o, "input_distribution", qc_report_array(res->input, res->nlevels));
    if (res->reconstruction)
        json_object_set_new(o, "reconstruction",
                            qc_report_array(res->reconstruction, res->nthresholds + 1));
    report_alphabet(o, req, res);
    report_figures(o, res);
    if (res->ppm_slots)
        report_ppm(o, res);
    if (res->converter)
        report_converter(o, req, res);
    if (req->channel.fibre_link)
        report_fibre_link(o, req->channel.fibre_link);
    if (req->channel.intensity_link) {
        json_object_set_new(o, "link_loss_db",
                            qc_report_real(req->channel.intensity_link->loss_db));
        json_object_set_new(o, "received_dbm",
                            qc_report_real(req->channel.intensity_link->received_dbm));
    }
    report_memory(o, res);
    report_shaping(o, res);
    if (res->iq)
        report_iq(o, res);
    return o;
}

qc_status qc_design_report_json(const qc_design_request *req, const qc_design_result *res,
                                char **text)
{
    *text = NULL;
    json_t *o = qc_report_design(req, res);
    if (!o)
        return qc_fail(QC_ENOMEM, "out of memory building the JSON report");
    *text = json_dumps(o, JSON_INDENT(2) | JSON_REAL_PRECISION(17) | JSON_PRESERVE_ORDER);
    json_decref(o);
    return *text ? QC_OK : qc_fail(QC_ENOMEM, "out of memory writing the JSON report");
}
