/* text_iq.c — the text report of a design of a two-dimensional
 * constellation (`quantcap design` with a 2-D alphabet or receiver key):
 * the constellation and its labels, the channel, the receiver's cells
 * and how they came, and every rate with how it was certified. */
#include "cli.h"

#include <math.h>
#include <stdio.h>

#define PI 3.14159265358979323846

static void print_list(FILE *f, const char *name, const double *v, size_t n, double scale)
{
    fprintf(f, "  %-24s", name);
    for (size_t i = 0; i < n; i++)
        fprintf(f, "%s%.6g", i ? ", " : "", v[i] * scale);
    fprintf(f, "%s\n", n ? "" : "(none)");
}

void cli_print_iq_search(FILE *f, const cli_iq_search *s, const char *unit)
{
    const char *objective = s->objective;
    const size_t evaluations = s->evaluations;
    const double start_bits = s->start_bits;
    if (s->per_axis) {
        fprintf(f, ", designed for %s axis by axis (points, law and noise factor over the "
                   "axes: each axis's one-dimensional MI-optimal design: grid DP, Newton steps, "
                   "threshold moves; uniform start %.6f %s)\n",
                objective, start_bits, unit);
        return;
    }
    if (s->at_ceiling && evaluations <= 1) {
        fprintf(f, ", designed for %s: the uniform cells are within %.0e bit of H(X), which "
                   "no cells can pass (no search)\n",
                objective, QC_IQ_CEILING_GAP_BITS);
        return;
    }
    fprintf(f, ", designed for %s (BFGS on the exact gradient, %zu evaluations", objective,
            evaluations);
    if (s->at_ceiling)
        fprintf(f, ", stopped within %.0e bit of H(X), which no cells can pass",
                QC_IQ_CEILING_GAP_BITS);
    else if (!s->converged)
        fprintf(f, ", STOPPED at the evaluation cap before the search settled");
    fprintf(f, "; uniform start %.6f %s", start_bits, unit);
    if (s->axis_start)
        fprintf(f, "; also from the axis-by-axis design, %.6f %s: %s", s->axis_start_bits,
                unit, s->axis_start == 2 ? "ended higher, kept" : "not higher");
    fprintf(f, ")\n");
}

void cli_print_iq_design(FILE *f, const qc_design_request *req, const qc_design_result *r,
                         const char *alphabet)
{
    const char *unit = "bit/complex symbol";
    const qc_model *m = req->channel.model;
    const qc_model_type *t = qc_model_get_type(m);
    double sigma = qc_model_param(m, (size_t)qc_model_param_index(t, "sigma"));
    fprintf(f, "constellation %s: %zu points, H(X) = %.6f %s, E|x|^2 = %.6g\n",
            alphabet ? alphabet : "(file)", r->points, r->entropy_bits, unit, r->average_power);
    if (r->point_labels)
        fprintf(f, "labels       %s, %u bits\n", r->labelling ? r->labelling : "given",
                r->point_label_bits);
    else
        fprintf(f, "labels       none (no GMI, BER or NGMI)\n");
    fprintf(f, "channel      model %s: circular Gaussian noise, Es/N0 %.4f dB (sigma %.6g per "
               "quadrature)",
            t->name, r->snr_db, sigma);
    if (r->phase_noise_sd > 0.0)
        fprintf(f, ", phase error %s %.4g deg rms", r->phase_noise_law ? "tikhonov" : "gauss",
                r->phase_noise_sd * 180.0 / PI);
    fputc('\n', f);
    if (r->iq_kind == 0)
        fprintf(f, "receiver     I/Q pair (product): %zu x %zu cells", r->cells_i, r->cells_q);
    else
        fprintf(f, "receiver     polar: %zu amplitude x %zu phase cells", r->amplitude_cells,
                r->phase_cells);
    if (r->quantizer == QC_QUANTIZER_FIXED)
        fprintf(f, ", given\n");
    else if (r->quantizer == QC_QUANTIZER_UNIFORM)
        fprintf(f, ", uniform (not designed)\n");
    else
        cli_print_iq_search(f,
                            &(cli_iq_search){r->objective == QC_OBJECTIVE_GMI ? "gmi" : "mi",
                                             r->iq_evaluations, r->iq_per_axis,
                                             r->design_convergence != QC_NOT_CONVERGED,
                                             r->iq_at_ceiling, r->iq_axis_start,
                                             r->iq_start_bits, r->iq_axis_start_bits},
                            unit);
    if (r->iq_kind == 0) {
        print_list(f, "in-phase thresholds", r->thresholds, r->cells_i - 1, 1.0);
        print_list(f, "quadrature thresholds", r->thresholds_q, r->cells_q - 1, 1.0);
    } else {
        print_list(f, "amplitude thresholds", r->amplitude_thresholds, r->amplitude_cells - 1,
                   1.0);
        if (r->phase_cells > 1)
            print_list(f, "phase thresholds (deg)", r->phase_thresholds, r->phase_cells,
                       180.0 / PI);
    }
    if (r->cell_error == 0.0)
        fprintf(f, "cells        probabilities exact (products of Gaussian CDF differences)\n");
    else
        fprintf(f, "cells        probabilities by quadrature: the last refinement changed them "
                   "by at most %.1e (target %.0e)\n",
                r->cell_error, QC_IQ_QUAD_TOL);
    if (r->objective == QC_OBJECTIVE_CAPACITY)
        fprintf(f, "rate         %.10f %s: capacity of the quantized channel, certified "
                   "(upper bound %.10f, Blahut-Arimoto, %zu iterations)\n",
                r->rate_bits, unit, r->upper_bound_bits, r->iterations);
    fprintf(f, "MI           %.10f %s (exact finite sum over the %zu x %zu matrix)%s\n",
            r->mi_bits, unit, r->points, r->output_cells,
            r->objective == QC_OBJECTIVE_MI ? ": the rate" : "");
    if (isfinite(r->gmi_bits))
        fprintf(f, "GMI          %.10f %s (BICM, exact finite sum)%s, NGMI %.6f\n", r->gmi_bits,
                unit, r->objective == QC_OBJECTIVE_GMI ? ": the rate" : "", r->ngmi);
    if (isfinite(r->unquantized_bits) && r->iq_unquantized_per_axis)
        fprintf(f, "unquantized  MI %.9f %s (per axis: adaptive quadrature, error estimate "
                   "%.1e); loss %.6f %s\n",
                r->unquantized_bits, unit, r->unquantized_err_bits, r->loss_bits, unit);
    else if (isfinite(r->unquantized_bits))
        fprintf(f, "unquantized  MI %.9f %s (Gauss-Hermite, last change %.1e); loss %.6f %s\n",
                r->unquantized_bits, unit, r->unquantized_err_bits, r->loss_bits, unit);
    else
        fprintf(f, "unquantized  not computed (%s)\n",
                r->phase_noise_sd > 0.0 ? "with phase noise"
                : r->objective != QC_OBJECTIVE_MI ? "a reference for the MI objective only"
                                                  : "too many points");
    fprintf(f, "hard         symbol error rate %.4e (MAP per cell)", r->symbol_error_rate);
    if (isfinite(r->pre_fec_ber))
        fprintf(f, "; pre-FEC BER %.4e (%s labels)", r->pre_fec_ber,
                r->labelling ? r->labelling : "given");
    if (isfinite(r->q_factor_db))
        fprintf(f, "; Q-factor %.3f dB", r->q_factor_db);
    fputc('\n', f);
    fprintf(f, "efficiency   %.6f bit/s/Hz at the symbol rate (%u polarization%s)",
            r->spectral_efficiency, r->polarizations, r->polarizations == 1 ? "" : "s");
    if (isfinite(r->rate_gbps))
        fprintf(f, "; %.6g Gb/s at %.6g Gbaud", r->rate_gbps, r->symbol_rate * 1e-9);
    fputc('\n', f);
    if (r->fec_given) {
        fprintf(f, "FEC          %s: %s, ", r->fec.name,
                r->fec_closes ? "closes" : "does not close");
        if (isfinite(r->fec_margin))
            fprintf(f, "margin %.4g%s", r->fec_margin,
                    r->fec.kind == QC_FEC_HARD ? " dB of Q" : " in NGMI");
        else /* a BER below every double has no Q-factor */
            fprintf(f, "margin unbounded (pre-FEC BER 0 in double precision)");
        fprintf(f, "; net %.6f bit/symbol over all polarizations", r->net_bits);
        if (isfinite(r->net_rate_gbps))
            fprintf(f, ", %.6g Gb/s", r->net_rate_gbps);
        fputc('\n', f);
    }
}
