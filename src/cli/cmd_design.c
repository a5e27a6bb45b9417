/* cmd_design.c — `quantcap design`: choose the thresholds of a K-cell
 * quantizer for a noise model and an alphabet, and report the rate that
 * survives the quantizer next to the unquantized rate. */
#include "cli.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

static const cli_opt output_options[] = {
    {"compare", NULL, "run every threshold strategy on the same channel, side by side"},
    {"json", NULL, "machine-readable JSON output"},
    {"output", "FILE", "write the result to FILE (complete or not at all)"},
    {"quiet", NULL, "no progress bar (drawn on a terminal for long designs)"},
    {NULL, NULL, NULL},
};

#define THRESHOLD_RESOLUTION 1e-4 /* of the noise standard deviation, in text */
#define MAX_LEVELS_LISTED 32 /* longer alphabets list their mass points only */
/* more thresholds than this (or levels than MAX_LEVELS_LISTED) are listed
 * by their first and last LISTED_AT_EACH_END */
#define MAX_THRESHOLDS_LISTED 32
#define LISTED_AT_EACH_END 8
#define PROGRESS_DELAY_S 0.5 /* a design that ends sooner shows no progress bar */


static void help(const cli_args *a)
{
    printf("usage: quantcap design --model NAME [model parameters | --snr-db X]\n"
           "                       (--levels L1,...,Ln | --alphabet SPEC |\n"
           "                        --level-grid LO,HI,N)\n"
           "                       (--bits B | --cells K | --thresholds T1,...,Tk)\n"
           "                       [--objective mi|capacity|gmi] [--quantizer NAME]\n"
           "                       [--peak-limit A] [--power-limit P] [--mean-limit M]\n"
           "                       [--optimize-levels]\n"
           "                       [--blocklength N --error-rate E]\n"
           "                       [--symbol-rate BAUD] [--polarizations P] [--fec CODE]\n"
           "                       [--compare] [--json] [--output FILE] [--quiet]\n\n"
           "Places the thresholds of a K-cell quantizer after the receiver and reports\n"
           "the information rate that survives it, the unquantized rate for the same\n"
           "levels and input law, and the loss. --objective mi rates the uniform (or\n"
           "given) input law; --objective capacity also optimizes the input law with\n"
           "the Blahut-Arimoto engine and reports its certified upper bound;\n"
           "--objective gmi rates bit-interleaved coded modulation (BICM) with Gray\n"
           "labels (thresholds designed for the MI of the law).\n"
           "--snr-db sets sigma from E[x^2]/sigma^2 with E[x^2] taken under the input\n"
           "law being evaluated (the given law, else uniform over the levels), or equal\n"
           "to the --power-limit budget when one is given. For qam:M it is Es/N0. With\n"
           "--objective capacity sigma is set with that law and the SNR reported is\n"
           "E[x^2]/sigma^2 under the optimized law (JSON operating_snr_db).\n"
           "The report names what its SNR means. For gauss-sd (intensity levels) it is\n"
           "the modulation power over the noise, Var[x]/E[sigma^2(x)]: the mean level\n"
           "is left out, and OOK with equal noise on both levels gives Q^2.\n"
           "The SNR penalty is the operating SNR minus the SNR at which the\n"
           "unquantized receiver reaches the same rate.\n\n"
           "alphabets: pam:M (bipolar -(M-1)..M-1), upam:M (intensity 0..1; OOK is\n"
           "upam:2), qam:M (square QAM: sqrt(M)-PAM on each quadrature, the same\n"
           "thresholds on both, rates per complex symbol), ppm:M (pulse position:\n"
           "M slots per symbol, one pulsed, each slot through the quantizer; intensity\n"
           "models; rates per symbol and per slot, the hard receiver with its best\n"
           "threshold; docs/alphabets.md), --levels, or --level-grid\n"
           "LO,HI,N: N candidate levels on which --objective capacity finds the best\n"
           "discrete input by itself (mass points with probability > 1e-6 are listed).\n"
           "Constellations in the plane: psk:M, apsk:R1/N1[/DEG],..., hex:M or\n"
           "--constellation FILE, and qam:M with any of --iq-quantizer product|polar,\n"
           "--amplitude-cells A --phase-cells P (polar; or --bits B: 2^(B-1) rings x\n"
           "2^(B+1) sectors), --phase-noise-deg S [--phase-noise-law gauss|tikhonov]:\n"
           "model gauss, Es/N0 from --snr-db, cells designed (optimal), uniform or\n"
           "given (--thresholds, I/Q pair), rates per complex symbol as 'quantcap iq'\n"
           "gives them (docs/alphabets.md, 9a).\n"
           "constraints on the input: --peak-limit A (|x| <= A; 0 <= x <= A for\n"
           "intensity; a level grid drops the candidates outside), --power-limit P\n"
           "(E[x^2] <= P, electrical power; QAM: E|x|^2), --mean-limit M (E[x] <= M,\n"
           "the average optical power of intensity levels). The received optical power\n"
           "of the physical receiver is --received-dbm (or --peak-dbm).\n"
           "Keys that do not apply to the model are refused ('quantcap models NAME'\n"
           "lists those that do). Given --thresholds set the number of cells.\n"
           "--optimize-levels moves the levels within the constraints to maximize the\n"
           "objective, re-designing the thresholds at each step (Nelder-Mead).\n"
           "Also reported: GMI with Gray labels, the dispersion V (bit^2), the normal\n"
           "approximation C - sqrt(V/n) Q^-1(e) + log2(n)/(2n) with --blocklength and\n"
           "--error-rate, and for model gauss the gap in dB to 1/2 log2(1 + snr).\n"
           "Figures the trade quotes: symbol error rate and pre-FEC BER of MAP hard\n"
           "decisions per cell (Gray labels, per quadrature for QAM), Q-factor, NGMI,\n"
           "spectral efficiency, Gb/s with --symbol-rate, bits per detected photon for\n"
           "photon-counting and APD models, and with --fec NAME (data/fec.tsv) or\n"
           "--fec overhead=PCT,ber=X|ngmi=X whether the link closes, the margin and\n"
           "the net rate, and the penalty at the FEC target: the value of the operating\n"
           "key (received-dbm, peak-dbm, snr-db, osnr-db or signal) the quantizer needs\n"
           "to meet the threshold minus the value the unquantized receiver needs, as\n"
           "'quantcap require --target fec=CODE' finds it; it replaces the SNR penalty.\n"
           "Details: docs/alphabets.md.\n\n"
           "strategies: optimal (default; MI-optimal, dynamic programming on a fine\n"
           "grid then gradient refinement), uniform (clipping range optimized),\n"
           "lloyd-max (minimum mean-square error), fixed (--thresholds, evaluated),\n"
           "converter (a real ADC: --full-scale LO,HI with --enob or --sinad-db,\n"
           "--jitter-s and --signal-freq, --dnl-lsb/--inl-lsb with --seed and --draws,\n"
           "or --transitions FILE; --converter-gain G|best|agc:K, --converter-offset\n"
           "O|best; all 2^bits codes are rated; docs/models.md).\n\n"
           "options:\n");
    cli_print_options(a, stdout);
}

/* The penalty at the FEC target (qc_settings_fec_penalty), and whether a
 * code was given. */
typedef struct {
    int given;
    const char *key;
    double db;
    char note[512];
} fec_penalty;

static qc_status penalty_at_fec(const qc_settings *set, const qc_fec *fec, fec_penalty *p)
{
    qc_fec_penalty q;
    qc_status st = qc_settings_fec_penalty(set, fec, &q);
    p->given = 1;
    p->key = q.key;
    p->db = q.db;
    snprintf(p->note, sizeof p->note, "%s", q.note);
    return st;
}

static void print_fec_penalty(FILE *f, const qc_design_result *r, const fec_penalty *p)
{
    const int hard = r->fec.kind == QC_FEC_HARD;
    char target[64];
    snprintf(target, sizeof target, "%s %.4g", hard ? "pre-FEC BER ≤" : "NGMI ≥",
             r->fec.threshold);
    if (isfinite(p->db))
        /* a penalty within the root tolerance prints as 0, not -0.0000 */
        fprintf(f, "penalty      %.4f dB at the FEC target (%s), solving for %s\n",
                fabs(p->db) < 5e-5 ? 0.0 : p->db, target, p->key);
    else
        fprintf(f, "penalty      undefined at the FEC target (%s): %s\n", target, p->note);
}

/* GMI, dispersion, blocklength rate, shaping gap (docs/alphabets.md). */
static void print_practical_rates(FILE *f, const qc_design_result *r)
{
    const char *unit = cli_rate_unit(r->dimensions);
    if (r->dimensions == 2)
        fprintf(f, "QAM          rates per complex symbol: two quadratures with these "
                   "levels and thresholds\n");
    if (isfinite(r->gmi_bits))
        fprintf(f, "GMI          %.9f %s   BICM, Gray labels%s; MI of the law %.9f %s\n",
                r->gmi_bits, unit,
                r->gmi_bits == 0.0 && r->mi_bits > 0.0
                    ? " (the bit-metric rate H(X) - sum of H(B|Y) is not positive for "
                      "this law: its label bits are strongly dependent)"
                    : "",
                r->mi_bits, unit);
    fprintf(f, "dispersion   %.6g bit^2", r->dispersion_bits2);
    if (r->blocklength)
        fprintf(f, "   rate at n = %zu %s, block error probability %.6g: %.9f %s (normal "
                   "approximation)",
                r->blocklength, cli_plural(r->blocklength, "symbol", "symbols"), r->error_rate,
                r->rate_at_blocklength_bits, unit);
    fputc('\n', f);
    if (r->blocklength && r->rate_at_blocklength_note)
        fprintf(f, "             %s\n", r->rate_at_blocklength_note);
    if (isfinite(r->shaping_gap_db))
        fprintf(f, "shaping gap  %.4f dB from 1/2 log2(1 + snr) at the same rate per "
                   "dimension\n",
                r->shaping_gap_db);
    if (r->levels_optimized)
        fprintf(f, "levels       optimized (%zu %s evaluated)\n", r->level_evaluations,
                cli_plural(r->level_evaluations, "design", "designs"));
}

/* The shaped law and its gain over the uniform one (docs/alphabets.md). */
static void print_shaping(FILE *f, const qc_design_result *r)
{
    if (!r->shaping_given)
        return;
    const char *unit = cli_rate_unit(r->dimensions);
    char spec[64];
    qc_shaping_format(&r->shaping, spec, sizeof spec);
    if (r->shaping.kind == QC_SHAPING_NONE)
        fprintf(f, "shaping      none: the uniform law (nu = 0), H(X) = %.6f %s", r->entropy_bits,
                unit);
    else
        fprintf(f, "shaping      %s: %s nu = %.6g (levels as given), H(X) = %.6f %s", spec,
                r->shaping.intensity ? "exponential law exp(-nu x) on the intensities,"
                                     : "Maxwell-Boltzmann",
                r->shaping_nu, r->entropy_bits, unit);
    if (r->shaping.kind == QC_SHAPING_BEST)
        fprintf(f, ", best %s of %zu designs", qc_objective_name(r->objective),
                r->shaping_evaluations);
    fprintf(f, "\n             levels scaled by %.6f to keep the uniform law's %s\n",
            r->shaping_scale,
            r->shaping.intensity ? "average optical power E[x]" : "average power E[x^2]");
    if (isfinite(r->shaping_gain_db))
        fprintf(f, "shaping gain %.4f dB: the uniform law needs that much more %s for the "
                   "same rate with this quantizer (uniform law here: %.9f %s)\n",
                r->shaping_gain_db,
                r->shaping.intensity ? "average optical power (noise parameters held)" : "SNR",
                r->uniform_rate_bits, unit);
    else if (isfinite(r->uniform_rate_bits))
        fprintf(f, "shaping gain undefined: the uniform law does not reach %.6f %s within "
                   "+-32 dB (uniform law here: %.9f %s)\n",
                r->rate_bits, unit, r->uniform_rate_bits, unit);
}

/* Hard-decision error rates, NGMI, trade units, FEC (docs/guide.md). */
static void print_figures(FILE *f, const qc_design_result *r, const fec_penalty *p)
{
    fprintf(f, "hard         symbol error rate %.4e (MAP per cell)", r->symbol_error_rate);
    if (isfinite(r->pre_fec_ber))
        fprintf(f, "; pre-FEC BER %.4e (Gray labels)", r->pre_fec_ber);
    if (isfinite(r->q_factor_db))
        fprintf(f, "; Q-factor %.3f dB", r->q_factor_db);
    fputc('\n', f);
    if (isfinite(r->ngmi))
        fprintf(f, "NGMI         %.6f (H(X) = %.6f %s)\n", r->ngmi, r->entropy_bits,
                cli_rate_unit(r->dimensions));
    fprintf(f, "efficiency   %.6f bit/s/Hz at the symbol rate (%u polarization%s)",
            r->spectral_efficiency, r->polarizations, r->polarizations == 1 ? "" : "s");
    if (isfinite(r->rate_gbps))
        fprintf(f, "; %.6g Gb/s at %.6g Gbaud", r->rate_gbps, r->symbol_rate * 1e-9);
    fputc('\n', f);
    if (isfinite(r->photons_per_symbol))
        fprintf(f, "photons      %.6g detected per symbol; %.6f bit/photon, %.6g photon/bit\n",
                r->photons_per_symbol, r->bits_per_photon, r->photons_per_bit);
    if (r->fec_given && r->states == 0) { /* memory: in print_memory */
        int hard = r->fec.kind == QC_FEC_HARD;
        fprintf(f, "FEC          %s (%.4g %% overhead, %s threshold %.4g): %s, ", r->fec.name,
                100.0 * r->fec.overhead, hard ? "pre-FEC BER" : "NGMI", r->fec.threshold,
                r->fec_closes ? "closes" : "does not close");
        if (isfinite(r->fec_margin))
            fprintf(f, "margin %.4f %s", r->fec_margin, hard ? "dB (Q-factor)" : "(NGMI)");
        else /* a BER below every double has no Q-factor */
            fprintf(f, "margin unbounded (pre-FEC BER 0 in double precision)");
        fprintf(f, "; net %.6f %s", r->net_bits, cli_rate_unit(r->dimensions));
        if (r->polarizations > 1) /* net_bits counts every polarization */
            fprintf(f, " over %u polarizations", r->polarizations);
        if (r->shaping_given && r->fec_closes)
            fprintf(f, " (PAS: H(X) - (1 - Rc) m)");
        if (isfinite(r->net_rate_gbps))
            fprintf(f, ", %.6g Gb/s", r->net_rate_gbps);
        fputc('\n', f);
        if (p->given)
            print_fec_penalty(f, r, p);
    }
}

static void print_rates(FILE *f, const qc_design_request *req, const qc_design_result *r,
                        const fec_penalty *p)
{
    if (r->ppm_slots) {
        cli_print_ppm_rates(f, req, r);
        return;
    }
    int counts = qc_model_get_type(req->channel.model)->output == QC_OUTPUT_COUNTS;
    const char *unit = cli_rate_unit(r->dimensions);
    fprintf(f, "rate         %.9f %s", r->rate_bits, unit);
    if (req->input.objective == QC_OBJECTIVE_CAPACITY)
        fprintf(f, "   certified: Blahut-Arimoto upper bound %.9f %s (tol %.2g %s)\n",
                r->upper_bound_bits, unit, r->tol_bits, unit);
    else
        fprintf(f, "   exact finite sum over the %zu x %zu channel matrix\n", r->channel->nx,
                r->channel->ny);
    if (r->rate_limited_by)
        fprintf(f, "             set to its limit (%s): the sum came out above it by rounding\n",
                qc_rate_limit_name(r->rate_limited_by));
    if (r->noiseless_limit)
        fprintf(f, "unquantized  %.9f %s   noiseless limit: the output is narrower than "
                   "the resolution of doubles\n",
                r->unquantized_bits, unit);
    else
        fprintf(f, "unquantized  %.9f %s   %s, error estimate %.1e %s\n",
                r->unquantized_bits, unit,
                counts ? "sum over every count (ideal photon-number resolution)"
                       : "adaptive quadrature",
                r->unquantized_err_bits, unit);
    if (r->unquantized_limited_by)
        fprintf(f, "             set to its limit (%s): the computed value exceeded it within "
                   "its error estimate\n",
                qc_rate_limit_name(r->unquantized_limited_by));
    fprintf(f, "loss         %.9f %s\n", r->loss_bits, unit);
    const char *why = qc_penalty_note_text(r->snr_penalty_note);
    if (p->given && isfinite(r->snr_db))
        fprintf(f, "SNR          %.3f dB operating; the penalty at the operating rate is "
                   "replaced by the penalty at the FEC target (below)\n",
                r->snr_db);
    else if (p->given)
        fprintf(f, "SNR penalty  replaced by the penalty at the FEC target (below)\n");
    else if (isfinite(r->snr_db) && isfinite(r->snr_penalty_db))
        fprintf(f, "SNR          %.3f dB operating; penalty %.4f dB against the unquantized "
                   "receiver\n",
                r->snr_db, r->snr_penalty_db);
    else if (isfinite(r->snr_db))
        fprintf(f, "SNR          %.3f dB operating; penalty undefined: %s\n", r->snr_db,
                why ? why : "no SNR penalty is defined here");
    else if (why)
        fprintf(f, "SNR penalty  undefined: %s\n", why);
    const char *snr_def = qc_design_snr_definition(req);
    if (isfinite(r->snr_db) && snr_def)
        fprintf(f, "SNR means    %s\n", snr_def);
    print_practical_rates(f, r);
    print_shaping(f, r);
    print_figures(f, r, p);
}

/* Significant digits that resolve t to THRESHOLD_RESOLUTION of the noise
 * standard deviation there (that of the level whose mean is nearest t);
 * 0 when the model gives no moments. */
static int threshold_digits(const qc_model *m, const qc_design_result *r, double t)
{
    double best = INFINITY, sd = NAN;
    for (size_t x = 0; x < r->nlevels; x++) {
        double mean, var;
        if (qc_model_moments(m, r->levels[x], &mean, &var) == QC_OK && isfinite(mean) &&
            var > 0.0 && isfinite(var) && fabs(t - mean) < best) {
            best = fabs(t - mean);
            sd = sqrt(var);
        }
    }
    if (!(sd > 0.0) || t == 0.0)
        return 0;
    int d = (int)floor(log10(fabs(t))) - (int)floor(log10(THRESHOLD_RESOLUTION * sd)) + 1;
    return d < 1 ? -1 : d > 17 ? 17 : d; /* -1: below the resolution, prints 0 */
}

/* The threshold listing: counts as integers, continuous outputs resolved
 * to 1e-4 of the noise standard deviation (full precision in JSON), the
 * first and last LISTED_AT_EACH_END of more than MAX_THRESHOLDS_LISTED,
 * and a note when a count quantizer has fewer cells than asked for. */
static void print_thresholds(FILE *f, const qc_model *m, const qc_design_result *r,
                             const char *unit)
{
    /* a converter's transition levels are real numbers in full-scale units */
    const int counts = qc_model_get_type(m)->output == QC_OUTPUT_COUNTS && !r->converter;
    if (r->converter)
        fprintf(f, "\ntransitions (full scale) ");
    else
        fprintf(f, "\nthresholds (%s) ", unit);
    const int cut = r->nthresholds > MAX_THRESHOLDS_LISTED;
    for (size_t j = 0; j < r->nthresholds; j++) {
        if (cut && j == LISTED_AT_EACH_END) {
            fprintf(f, ", ...");
            j = r->nthresholds - LISTED_AT_EACH_END;
        }
        double t = r->thresholds[j];
        int d = counts || r->converter ? 0 : threshold_digits(m, r, t);
        if (counts || t == 0.0 || d < 0)
            fprintf(f, "%s%.0f", j ? ", " : " ", d < 0 ? 0.0 : t);
        else if (d > 0)
            fprintf(f, "%s%.*g", j ? ", " : " ", d, t);
        else
            fprintf(f, "%s%.6g", j ? ", " : " ", t);
    }
    if (cut)
        fprintf(f, "\n             (%zu thresholds; the first and last %d shown, --json "
                   "lists every one)",
                r->nthresholds, LISTED_AT_EACH_END);
    if (r->nthresholds + 1 < r->cells)
        fprintf(f, "\n             capped at %zu of the %zu cells asked for: every count "
                   "that carries probability has its own cell",
                r->nthresholds + 1, r->cells);
}

/* The converter as used: ENOB, full scale, gain and offset, its own
 * noise, and the spread of the rate over DNL/INL draws. */
static void print_converter(FILE *f, const qc_design_request *req, const qc_design_result *r)
{
    static const char *const rule[] = {"given", "best for the objective", "AGC rule"};
    const qc_converter *c = req->quantizer.converter;
    fprintf(f, "\nconverter    ENOB %.4g bits (SINAD %.3f dB, full-scale sine)", r->enob,
            r->sinad_db);
    if (c) {
        fprintf(f, ", full scale %.6g to %.6g", c->full_scale_lo, c->full_scale_hi);
        if (c->jitter_s > 0.0)
            fprintf(f, ", jitter %.4g s rms at %.4g Hz", c->jitter_s, c->signal_freq);
        if (c->transitions)
            fprintf(f, ", measured transition levels");
        else if (c->dnl_lsb > 0.0 || c->inl_lsb > 0.0)
            fprintf(f, ", DNL %.3g LSB, INL %.3g LSB peak (seed %lu)", c->dnl_lsb, c->inl_lsb,
                    c->seed);
        fprintf(f, "\n             gain %.6g (%s", r->gain, rule[c->gain_mode]);
        if (c->gain_mode == QC_GAIN_AGC)
            fprintf(f, ", K = %.4g", c->agc_k);
        fprintf(f, "), offset %.6g (%s)", r->offset,
                c->offset_best ? "best" : isnan(c->offset) ? "mean at mid-scale" : "given");
    }
    fprintf(f, "\n             own noise %.4g rms at the converter input (ENOB and jitter)",
            r->converter_noise_rms);
    if (r->draws > 1)
        fprintf(f, "\ndraws        %zu DNL/INL draws: mean rate %.6f bit, sd %.3g, 95 %% "
                   "interval of the mean +/- %.3g (Student t); figures below: draw 1",
                r->draws, r->draws_mean_bits, r->draws_sd_bits, r->draws_ci95_bits);
}

/* The amplified fibre link that set the SNR. */
static void print_fibre_link(FILE *f, const qc_fibre_link_result *l)
{
    fprintf(f, "link         span loss %.3f dB, amplifier gain %.3f dB; launch %.3f dBm per "
               "channel",
            l->span_loss_db, l->gain_db, l->launch_dbm);
    if (isfinite(l->optimum_launch_dbm))
        fprintf(f, " (optimum %.3f dBm, SNR there %.3f dB)", l->optimum_launch_dbm,
                l->optimum_snr_db);
    fprintf(f, "\nlink SNR     OSNR %.3f dB (0.1 nm); SNR ASE %.3f dB, NLI ", l->osnr_db,
            l->snr_ase_db);
    if (isfinite(l->snr_nli_db))
        fprintf(f, "%.3f dB", l->snr_nli_db);
    else
        fprintf(f, "none (linear)");
    if (isfinite(l->snr_trx_db))
        fprintf(f, ", transceiver %.3f dB", l->snr_trx_db);
    fprintf(f, "; effective %.3f dB\n", l->snr_eff_db);
}

/* A channel with memory: the simulated rates, each with its interval. */
static void print_memory(FILE *f, const qc_design_result *r, const char *ou,
                         const fec_penalty *p)
{
    fprintf(f, "\nmemory       %zu taps (", r->ntaps);
    for (size_t i = 0; i < r->ntaps; i++) {
        if (r->coherent)
            fprintf(f, "%s%.6g%+.6gj", i ? ", " : "", r->taps[i], r->taps_imag[i]);
        else
            fprintf(f, "%s%.6g", i ? ", " : "", r->taps[i]);
    }
    fprintf(f, "), %zu trellis states; the rates above are the link without "
               "interference\n",
            r->states);
    if (r->coherent) {
        fprintf(f, "             coherent: complex symbols, circular complex Gaussian noise, "
                   "the thresholds on I and on Q; rates per complex symbol\n");
        if (isfinite(r->truncated_energy))
            fprintf(f, "             dispersion response (Nyquist pulse): energy outside the "
                       "%zu taps %.3g of 1 (not modelled)\n",
                    r->ntaps, r->truncated_energy);
    }
    fprintf(f, "information  %.6f +- %.6f bit/symbol   sequence detector, quantized, i.i.d. "
               "law above\n",
            r->information_rate_bits, r->information_rate_ci_bits);
    fprintf(f, "unquantized  %.6f +- %.6f bit/symbol   sequence detector, no ADC\n",
            r->unquantized_information_rate_bits, r->unquantized_information_rate_ci_bits);
    fprintf(f, "symbolwise   %.6f bit/symbol   symbol-by-symbol receiver, ISI as noise (exact)\n",
            r->symbolwise_rate_bits);
    fprintf(f, "             simulated: %zu symbols in %zu batches, 95 %% intervals by batch "
               "means (Arnold et al. 2006)\n",
            r->memory_symbols, (size_t)QC_ISI_BATCHES);
    if (isfinite(r->memory_rate_ci_target))
        fprintf(f, "             symbols grown until the quantized rate's interval is within "
                   "+-%g bit/symbol (rate-ci)\n",
                r->memory_rate_ci_target);
    if (isfinite(r->bcjr_pre_fec_ber)) {
        fprintf(f, "hard         symbol-by-symbol pre-FEC BER %.4e, NGMI %.6f (exact); BCJR "
                   "pre-FEC BER %.4e +- %.2e (symbol-wise MAP)\n",
                r->symbolwise_pre_fec_ber, r->symbolwise_ngmi, r->bcjr_pre_fec_ber,
                r->bcjr_pre_fec_ber_ci);
        fprintf(f, "NGMI         BCJR %.6f +- %.6f, GMI %.6f +- %.6f bit/symbol (bit-wise "
                   "a-posteriori LLRs); no ADC: BER %.4e, NGMI %.6f\n",
                r->bcjr_ngmi, r->bcjr_ngmi_ci, r->bcjr_gmi_bits, r->bcjr_gmi_ci_bits,
                r->unquantized_bcjr_pre_fec_ber, r->unquantized_bcjr_ngmi);
    }
    if (r->fec_given && r->fec_note) {
        fprintf(f, "FEC          %s (%s threshold %.4g): undefined: %s\n", r->fec.name,
                r->fec.kind == QC_FEC_HARD ? "pre-FEC BER" : "NGMI", r->fec.threshold,
                r->fec_note);
        if (p->given)
            print_fec_penalty(f, r, p);
    } else if (r->fec_given) {
        const int hard = r->fec.kind == QC_FEC_HARD;
        fprintf(f, "FEC          %s (%s threshold %.4g) with the BCJR detector: %s, margin "
                   "%.4f %s; net %.6f bit/symbol",
                r->fec.name, hard ? "pre-FEC BER" : "NGMI", r->fec.threshold,
                r->fec_closes ? "closes" : "does not close", r->fec_margin,
                hard ? "dB (Q-factor)" : "(NGMI)", r->net_bits);
        if (isfinite(r->net_rate_gbps))
            fprintf(f, ", %.6g Gb/s", r->net_rate_gbps);
        fputc('\n', f);
        if (p->given)
            print_fec_penalty(f, r, p);
    }
    if (r->converter)
        fprintf(f, "converter    on the memory channel: gain %.6g, offset %.6g (its noise "
                   "added at every gain)\n",
                r->memory_gain, r->memory_offset);
    fprintf(f, "thresholds (%s) for the memory channel, full scale x %.4f (%zu simulated "
               "rates)\n            ",
            ou, r->full_scale_factor, r->memory_evaluations);
    for (size_t j = 0; j < r->nthresholds; j++)
        fprintf(f, "%s%.6g", j ? ", " : " ", r->memory_thresholds[j]);
    fprintf(f, "\n");
    if (r->full_scale_at_bound)
        fprintf(f, "note         the search of the settings above stopped at the widest it "
                   "tries with the rate still rising: settings beyond it may do better\n");
}

/* Lloyd-Max: whether its conditions hold, after how many rounds (2-D
 * cells: whether their search settled before its evaluation cap); a
 * design stopped by its round cap says so in capitals. */
static void print_convergence(FILE *f, const qc_design_result *r, const char *ou,
                              const char *lead)
{
    if (r->design_convergence == QC_CONVERGENCE_NONE)
        return;
    const int ok = r->design_convergence == QC_CONVERGED;
    if (r->iq) { /* the 2-D cells' search */
        fprintf(f, "%s%s after %zu evaluations: ", lead, ok ? "converged" : "NOT CONVERGED",
                r->design_iterations);
        if (!ok)
            fprintf(f, "the BFGS search stopped at its evaluation cap\n");
        else if (r->iq_at_ceiling)
            fprintf(f, "within %.0e bit of H(X), which no cells can pass\n",
                    QC_IQ_CEILING_GAP_BITS);
        else if (r->iq_per_axis)
            fprintf(f, "each axis's one-dimensional MI-optimal design\n");
        else
            fprintf(f, "the BFGS search settled\n");
        return;
    }
    fprintf(f, "%s%s after %zu %s: thresholds within %.3g %s of the midpoints of "
               "their reconstruction points\n",
            lead, ok ? "converged" : "NOT CONVERGED", r->design_iterations,
            r->objective == QC_OBJECTIVE_CAPACITY ? "alternation steps" : "rounds",
            r->design_residual, ou);
}

static void design_table(FILE *f, const qc_model *m, const qc_design_request *req,
                         const qc_design_result *r, unsigned bits, const char *table,
                         const fec_penalty *p)
{
    const qc_model_type *type = qc_model_get_type(m);
    const char *lu = qc_design_level_unit(req), *ou = qc_design_output_unit(req);
    char ub[96];
    fprintf(f, "model        %s:", type->name);
    if (table)
        fprintf(f, " densities from %s", table);
    for (size_t i = 0; i < type->nparams; i++)
        fprintf(f, "%s %s = %.6g%s", i ? "," : "", type->params[i].name, qc_model_param(m, i),
                cli_unit_suffix(cli_param_unit(type, i, lu), ub, sizeof ub));
    fprintf(f, "\nquantizer    %s, %zu cells", qc_quantizer_name(r->quantizer), r->cells);
    if (bits)
        fprintf(f, " (%u bit%s)", bits, bits == 1 ? "" : "s");
    if (r->cells_used && r->cells_used < r->cells)
        fprintf(f, " asked, %zu used", r->cells_used);
    if (r->fine_cells)
        fprintf(f, ", DP grid %zu cells", r->fine_cells);
    if (r->quantizer == QC_QUANTIZER_UNIFORM && r->nthresholds >= 2 && !r->converter)
        fprintf(f, ", step %.6g %s",
                (r->thresholds[r->nthresholds - 1] - r->thresholds[0]) /
                    (double)(r->nthresholds - 1),
                ou);
    if (r->decisions_kept)
        fprintf(f, ", keeps the %zu MAP decision boundar%s", r->decisions_kept,
                r->decisions_kept == 1 ? "y" : "ies");
    if (r->converter)
        print_converter(f, req, r);
    fprintf(f, "\nobjective    %s\n",
            r->ppm_slots ? "capacity of the pulse-position symbol channel"
            : req->input.objective == QC_OBJECTIVE_CAPACITY ? "capacity of the quantized channel"
            : req->input.objective == QC_OBJECTIVE_GMI   ? "BICM GMI with Gray labels, given input law"
                                                    : "mutual information, given input law");
    if (req->channel.fibre_link)
        print_fibre_link(f, req->channel.fibre_link);
    if (req->channel.intensity_link)
        fprintf(f, "link         loss %.3f dB in all; received %.3f dBm average\n",
                req->channel.intensity_link->loss_db,
                req->channel.intensity_link->received_dbm);
    fprintf(f, "\n");
    print_rates(f, req, r, p);
    if (r->reconstruction)
        fprintf(f, "mean-square  %.6g (%s)^2 (Lloyd-Max)\n", r->mse, ou);
    print_convergence(f, r, ou, "convergence  ");
    print_thresholds(f, m, r, ou);
    /* long level grids: only the mass points; more of them than
     * MAX_LEVELS_LISTED: the first and last LISTED_AT_EACH_END */
    int mass_only = r->nlevels > MAX_LEVELS_LISTED;
    size_t shown = 0;
    for (size_t x = 0; x < r->nlevels; x++)
        shown += !mass_only || r->input[x] > 1e-6;
    const int cut = shown > MAX_LEVELS_LISTED;
    fprintf(f, "\n\n       level   probability%s   (levels in %s%s)\n",
            mass_only ? "   (mass points: probability > 1e-6)" : "", lu,
            r->ppm_slots ? "; per slot: empty, pulsed" : "");
    for (size_t x = 0, k = 0; x < r->nlevels; x++) {
        if (mass_only && !(r->input[x] > 1e-6))
            continue;
        if (!cut || k < LISTED_AT_EACH_END || k + LISTED_AT_EACH_END >= shown)
            fprintf(f, "  %10.6g   %.9f\n", r->levels[x], r->input[x]);
        else if (k == LISTED_AT_EACH_END)
            fprintf(f, "         ...\n");
        k++;
    }
    if (cut)
        fprintf(f, "             (%zu %s; the first and last %d shown, --json lists every "
                   "one)\n",
                shown, mass_only ? "mass points" : "levels", LISTED_AT_EACH_END);
    if (r->states > 0)
        print_memory(f, r, ou, p);
}

/* The comparison with a FEC code: per strategy the rate, the code's
 * figure (pre-FEC BER or NGMI), whether it closes with its margin, and
 * the penalty at the code's threshold. */
static int compare_fec_table(FILE *f, const qc_design_request *req,
                             const qc_design_comparison *cmp, const fec_penalty *pen)
{
    const qc_fec *fec = req->input.fec;
    const int hard = fec->kind == QC_FEC_HARD;
    const char *key = NULL;
    fprintf(f, "%-10s %14s %12s %8s %12s %12s\n", "quantizer", "rate",
            hard ? "pre-FEC BER" : "NGMI", "closes", hard ? "margin dB" : "margin",
            "penalty dB");
    for (size_t i = 0; i < cmp->count; i++) {
        if (cmp->status[i] != QC_OK) {
            fprintf(f, "%-10s failed: %s\n", qc_quantizer_name(cmp->kind[i]), cmp->message[i]);
            continue;
        }
        const qc_design_result *r = &cmp->result[i];
        char penalty[32] = "n/a";
        if (isfinite(pen[i].db))
            snprintf(penalty, sizeof penalty, "%.4f", fabs(pen[i].db) < 5e-5 ? 0.0 : pen[i].db);
        if (pen[i].key)
            key = pen[i].key;
        fprintf(f, "%-10s %14.9f %12.4e %8s %12.4f %12s\n", qc_quantizer_name(r->quantizer),
                r->rate_bits, hard ? r->pre_fec_ber : r->ngmi, r->fec_closes ? "yes" : "no",
                r->fec_margin, penalty);
    }
    for (size_t i = 0; i < cmp->count; i++)
        if (cmp->status[i] == QC_OK && !isfinite(pen[i].db))
            fprintf(f, "\npenalty n/a (%s): %s\n", qc_quantizer_name(cmp->kind[i]),
                    pen[i].note);
    for (size_t i = 0; i < cmp->count; i++)
        if (cmp->status[i] == QC_OK && cmp->result[i].design_convergence == QC_NOT_CONVERGED) {
            char lead[64];
            snprintf(lead, sizeof lead, "\n%s: ", qc_quantizer_name(cmp->kind[i]));
            print_convergence(f, &cmp->result[i], qc_design_output_unit(req), lead);
        }
    char thr[64];
    snprintf(thr, sizeof thr, "%s %.4g", hard ? "pre-FEC BER <=" : "NGMI >=", fec->threshold);
    fprintf(f, "\nFEC %s (%s): margin %s; penalty at the code's threshold against the "
               "unquantized receiver%s%s%s\n",
            fec->name, thr, hard ? "in Q-factor dB" : "in NGMI",
            key ? ", solving for " : "", key ? key : "", hard ? "; optimal keeps the MAP "
            "decision boundaries (hard-decision code)" : "");
    fprintf(f, "rates: %s, exact finite sums, in %s\n",
            req->input.objective == QC_OBJECTIVE_GMI ? "BICM GMI with Gray labels"
            : req->input.objective == QC_OBJECTIVE_CAPACITY ? "capacity (engine bounds)"
                                                            : "mutual information",
            cli_rate_unit(req->channel.dimensions));
    return CLI_OK;
}

/* The design's JSON with the penalty at the FEC target added (when a
 * code was given), printed to the sink without a final newline. */
static int print_design_json(cli_sink *sink, const qc_design_request *req,
                             const qc_design_result *res, const fec_penalty *pen)
{
    char *text = NULL;
    qc_status st = qc_design_report_json(req, res, &text);
    if (st != QC_OK)
        return cli_lib_error(st);
    if (pen->given) {
        json_t *o = json_loads(text, 0, NULL);
        free(text);
        text = NULL;
        if (o) {
            json_object_set_new(o, "penalty_solve_for",
                                pen->key ? json_string(pen->key) : json_null());
            json_object_set_new(o, "penalty_db", cli_json_real(pen->db));
            json_object_set_new(o, "penalty_note",
                                isfinite(pen->db) ? json_null() : json_string(pen->note));
            text = json_dumps(o, JSON_INDENT(2) | JSON_REAL_PRECISION(17) |
                                     JSON_PRESERVE_ORDER);
            json_decref(o);
        }
        if (!text)
            return cli_usage_error("out of memory building JSON output");
    }
    fputs(text, sink->f);
    free(text);
    return CLI_OK;
}

/* The penalty at the FEC target of each strategy of a comparison: the
 * settings with that strategy in place of the request's. */
static qc_status compare_penalties(const qc_settings *set, const qc_design_comparison *cmp,
                                   fec_penalty *pen)
{
    for (size_t i = 0; i < cmp->count; i++) {
        if (cmp->status[i] != QC_OK || !cmp->result[i].fec_given)
            continue;
        qc_settings *one = NULL;
        qc_status st = qc_settings_copy(set, &one);
        if (st == QC_OK)
            st = qc_settings_set(one, "quantizer", qc_quantizer_name(cmp->kind[i]));
        if (st == QC_OK)
            st = penalty_at_fec(one, &cmp->result[i].fec, &pen[i]);
        qc_settings_free(one);
        if (st != QC_OK)
            return st;
    }
    return QC_OK;
}

/* `--compare`: every strategy on the same channel; with a FEC code, its
 * figure, whether it closes and the penalty at its threshold. */
static int run_compare(cli_sink *sink, int json, const qc_settings *set,
                       const qc_design_request *req)
{
    qc_design_comparison cmp;
    memset(&cmp, 0, sizeof cmp);
    qc_status st = qc_design_compare(req, &cmp);
    if (st != QC_OK && cmp.count == 0)
        return cli_lib_error(st);
    fec_penalty pen[QC_COMPARE_MAX];
    memset(pen, 0, sizeof pen);
    if (req->input.fec && (st = compare_penalties(set, &cmp, pen)) != QC_OK) {
        qc_design_comparison_clear(&cmp);
        return cli_lib_error(st);
    }
    int rc = CLI_OK;
    if (req->input.fec && !json) {
        rc = compare_fec_table(sink->f, req, &cmp, pen);
    } else if (json) {
        fputs("[\n", sink->f);
        for (size_t i = 0; i < cmp.count && rc == CLI_OK; i++) {
            if (cmp.status[i] != QC_OK) {
                json_t *o = json_object();
                json_object_set_new(o, "quantizer", json_string(qc_quantizer_name(cmp.kind[i])));
                json_object_set_new(o, "error", json_string(cmp.message[i]));
                char *t = json_dumps(o, JSON_INDENT(2) | JSON_PRESERVE_ORDER);
                json_decref(o);
                fputs(t ? t : "null", sink->f);
                free(t);
            } else {
                rc = print_design_json(sink, req, &cmp.result[i], &pen[i]);
            }
            if (rc == CLI_OK)
                fputs(i + 1 < cmp.count ? ",\n" : "\n", sink->f);
        }
        fputs("]\n", sink->f);
    } else {
        const char *no_penalty[QC_COMPARE_MAX] = {0};
        const int capacity = req->input.objective == QC_OBJECTIVE_CAPACITY;
        double tol = 0.0;
        fprintf(sink->f, "%-10s %14s %14s %12s %12s%s\n", "quantizer", "rate", "unquantized",
                "loss", "penalty dB", capacity ? "    upper bound" : "");
        for (size_t i = 0; i < cmp.count; i++) {
            if (cmp.status[i] != QC_OK) {
                fprintf(sink->f, "%-10s failed: %s\n", qc_quantizer_name(cmp.kind[i]),
                        cmp.message[i]);
                continue;
            }
            const qc_design_result *r = &cmp.result[i];
            char penalty[32] = "n/a";
            if (isfinite(r->snr_penalty_db))
                snprintf(penalty, sizeof penalty, "%.4f", r->snr_penalty_db);
            else
                no_penalty[i] = qc_penalty_note_text(r->snr_penalty_note);
            fprintf(sink->f, "%-10s %14.9f %14.9f %12.3e %12s", qc_quantizer_name(r->quantizer),
                    r->rate_bits, r->unquantized_bits, r->loss_bits, penalty);
            if (capacity) {
                fprintf(sink->f, " %14.9f", r->upper_bound_bits);
                tol = fmax(tol, r->tol_bits);
            }
            if (r->ppm_slots)
                tol = fmax(tol, r->tol_bits);
            fputc('\n', sink->f);
        }
        /* why each n/a: one line per reason, naming its strategies */
        int first_note = 1;
        for (size_t i = 0; i < cmp.count; i++) {
            int seen = 0;
            for (size_t k = 0; k < i && no_penalty[i]; k++)
                seen |= no_penalty[k] == no_penalty[i];
            if (!no_penalty[i] || seen)
                continue;
            fprintf(sink->f, "%spenalty n/a (", first_note ? "\n" : "");
            first_note = 0;
            for (size_t k = i, n = 0; k < cmp.count; k++)
                if (no_penalty[k] == no_penalty[i])
                    fprintf(sink->f, "%s%s", n++ ? ", " : "", qc_quantizer_name(cmp.kind[k]));
            fprintf(sink->f, "): %s\n", no_penalty[i]);
        }
        for (size_t i = 0; i < cmp.count; i++)
            if (cmp.status[i] == QC_OK &&
                cmp.result[i].design_convergence == QC_NOT_CONVERGED) {
                char lead[64];
                snprintf(lead, sizeof lead, "\n%s: ", qc_quantizer_name(cmp.kind[i]));
                print_convergence(sink->f, &cmp.result[i], qc_design_output_unit(req), lead);
            }
        const char *unit = cli_rate_unit(req->channel.dimensions);
        if (req->channel.ppm_slots)
            fprintf(sink->f,
                    "\nrates: capacity of the %zu-slot PPM symbol channel (soft receiver), "
                    "certified lower bounds of brackets at most %g %s wide; rate, unquantized "
                    "and loss in %s\n",
                    req->channel.ppm_slots, tol, unit, unit);
        else if (capacity)
            fprintf(sink->f,
                    "\nrates: capacity, certified by the Blahut-Arimoto upper bound "
                    "(tol %g %s); rate, unquantized, loss and upper bound in %s\n",
                    tol, unit, unit);
        else
            fprintf(sink->f, "\n%s; rate, unquantized and loss in %s\n",
                    req->input.objective == QC_OBJECTIVE_GMI
                        ? "rates: BICM GMI with Gray labels, exact finite sums"
                        : "rates: mutual information, exact finite sums",
                    unit);
    }
    qc_design_comparison_clear(&cmp);
    return rc;
}

int cmd_design(int argc, char **argv)
{
    cli_args a;
    cli_args_init(&a, "design", output_options);
    cli_add_design_options(&a);
    int rc = cli_parse(&a, argc, argv, 0);
    if (rc == CLI_HELP) {
        help(&a);
        return CLI_OK;
    }
    if (rc)
        return rc;

    qc_settings *set = NULL;
    qc_model *m = NULL;
    qc_design_request req;
    qc_design_result res;
    memset(&res, 0, sizeof res);
    cli_sink sink = {0};
    qc_status st = qc_settings_alloc(&set);
    if (st != QC_OK)
        return cli_lib_error(st);
    for (size_t k = 0; k < a.nopts; k++) {
        const char *key = a.opts[k]->name;
        if (!a.values[k] || !qc_setting_known(key))
            continue;
        /* a switch given as a flag is on */
        const char *value = a.opts[k]->metavar ? a.values[k] : "true";
        if ((st = qc_settings_set(set, key, value)) != QC_OK) {
            rc = cli_usage_error("--%s: %s", key, qc_last_error());
            goto done;
        }
    }
    if ((st = qc_settings_build(set, &m, &req)) != QC_OK) {
        rc = cli_usage_error("design: %s", qc_last_error());
        if (!qc_status_is_input_error(st))
            rc = CLI_NUMERIC;
        goto done;
    }
    cli_progress bar;
    cli_progress_init(&bar, cli_has(&a, "quiet"), "steps");
    bar.delay_s = PROGRESS_DELAY_S;
    req.numerics.progress = cli_progress_report;
    req.numerics.progress_user = &bar;
    if (cli_has(&a, "compare")) {
        if ((rc = cli_sink_open(&sink, cli_get(&a, "output"))))
            goto done;
        rc = run_compare(&sink, cli_has(&a, "json"), set, &req);
        cli_progress_end(&bar);
        goto done;
    }
    st = qc_design(&req, &res);
    cli_progress_end(&bar);
    if (st != QC_OK) {
        rc = cli_lib_error(st);
        goto done;
    }
    unsigned bits = cli_bits_of_cells(req.quantizer.cells);
    fec_penalty pen = {0};
    if (res.fec_given && (st = penalty_at_fec(set, &res.fec, &pen)) != QC_OK) {
        rc = cli_lib_error(st);
        goto done;
    }
    if ((rc = cli_sink_open(&sink, cli_get(&a, "output"))))
        goto done;
    if (cli_has(&a, "json")) {
        if ((rc = print_design_json(&sink, &req, &res, &pen)) == CLI_OK)
            fputc('\n', sink.f);
    } else if (res.iq) {
        cli_print_iq_design(sink.f, &req, &res, qc_settings_get(set, "alphabet"));
        if (pen.given)
            print_fec_penalty(sink.f, &res, &pen);
    } else
        design_table(sink.f, m, &req, &res, bits, qc_settings_get(set, "table"), &pen);
done:
    rc = cli_sink_finish(&sink, rc);
    qc_design_result_clear(&res);
    qc_model_free(m);
    qc_settings_free(set);
    return rc;
}
