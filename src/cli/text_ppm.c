/* text_ppm.c — the text report of a pulse-position design (`quantcap
 * design --alphabet ppm:M`): the certified soft rate per symbol, per slot
 * and per photon, the unquantized reference, and the hard receiver with
 * its threshold (src/design/ppm_design.c, docs/methods.md). */
#include "cli/cli.h"

#include <math.h>

void cli_print_ppm_rates(FILE *f, const qc_design_request *req, const qc_design_result *r)
{
    const int counts = qc_model_get_type(req->channel.model)->output == QC_OUTPUT_COUNTS;
    const double m = (double)r->ppm_slots;
    fprintf(f, "PPM          %zu slots per symbol, one pulsed; rates per symbol with the law "
               "uniform over the positions (capacity-achieving by symmetry)\n",
            r->ppm_slots);
    fprintf(f, "rate         %.9f bit/symbol   certified: upper bound %.9f bit/symbol "
               "(tol %.2g), soft receiver (every slot's cell)\n",
            r->rate_bits, r->upper_bound_bits, r->tol_bits);
    fprintf(f, "per slot     %.9f bit/slot\n", r->rate_per_slot_bits);
    fprintf(f, "unquantized  %.9f bit/symbol   %s, bracket %.1e bit/symbol\n",
            r->unquantized_bits,
            counts ? "every count its own cell (ideal photon-number resolution)"
                   : "fine uniform grid of 4096 cells (a lower bound)",
            r->unquantized_err_bits);
    if (r->unquantized_limited_by)
        fprintf(f, "             raised to the quantized rate (data processing)\n");
    fprintf(f, "loss         %.9f bit/symbol\n", r->loss_bits);
    fprintf(f, "hard         %.9f bit/symbol (%.9f bit/slot) with one threshold per slot at "
               "%.*g: decided when exactly one slot fires, erased otherwise\n",
            r->hard_rate_bits, r->hard_rate_bits / m, counts ? 0 : 6, r->hard_threshold);
    fprintf(f, "             P(pulsed slot fires) %.6g, P(empty slot fires) %.4e; erasure "
               "%.4e, wrong slot %.4e per symbol\n",
            r->hard_fire_on, r->hard_fire_off, r->hard_erasure, r->hard_error);
    if (isfinite(r->rate_gbps))
        fprintf(f, "throughput   %.6g Gb/s at %.6g Gsymbol/s (%u polarization%s)\n",
                r->rate_gbps, r->symbol_rate * 1e-9, r->polarizations,
                r->polarizations == 1 ? "" : "s");
    if (isfinite(r->photons_per_symbol))
        fprintf(f, "photons      %.6g detected per symbol; %.6f bit/photon (hard %.6f), %.6g "
                   "photon/bit\n",
                r->photons_per_symbol, r->bits_per_photon,
                r->hard_rate_bits / r->photons_per_symbol, r->photons_per_bit);
}
