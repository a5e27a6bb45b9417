/* trade_units.c — figures in the units the trade quotes: the Q-factor of
 * a bit error rate, Q = √2·erfc⁻¹(2·BER) = Q⁻¹(BER) in dB as 20·log10 Q
 * (common practice), the normalized GMI 1 − (H(X) − GMI)/m (J. Cho,
 * L. Schmalen, P. Winzer, "Normalized generalized mutual information as a
 * forward error correction threshold for probabilistically shaped QAM",
 * ECOC 2017), and rates in Gb/s and bit/s/Hz at the symbol rate. */
#include "core/internal.h"
#include "quantcap/figures.h"

#include <math.h>

#include <gsl/gsl_cdf.h>

double qc_q_factor_db(double ber)
{
    if (!(ber > 0.0 && ber < 0.5))
        return NAN;
    double q = gsl_cdf_ugaussian_Qinv(ber);
    return q > 0.0 && isfinite(q) ? 20.0 * log10(q) : NAN;
}

double qc_ngmi(double gmi_bits, double entropy_bits, double m_bits)
{
    if (!(m_bits > 0.0) || !isfinite(gmi_bits) || !isfinite(entropy_bits))
        return NAN;
    return 1.0 - (entropy_bits - gmi_bits) / m_bits;
}

double qc_rate_gbps(double bits_per_symbol, double symbol_rate, unsigned polarizations)
{
    if (!(symbol_rate > 0.0) || !isfinite(symbol_rate) || polarizations == 0)
        return NAN;
    return bits_per_symbol * symbol_rate * (double)polarizations * 1e-9;
}

double qc_spectral_efficiency(double bits_per_symbol, unsigned polarizations)
{
    return polarizations ? bits_per_symbol * (double)polarizations : NAN;
}
