/* converter.c — a real analog-to-digital converter in the terms of the
 * ADC test standard (IEEE Std 1241-2010, "Standard for Terminology and
 * Test Methods for Analog-to-Digital Converters"): nominal resolution,
 * full-scale range, effective number of bits (ENOB) and SINAD for a
 * full-scale sine, aperture jitter, random static transition-level
 * errors (DNL, INL) and measured transition levels (one per line, as a
 * histogram test gives them). The converter's own noise is referred to
 * its input with the standard's sine-wave equivalences:
 *   SINAD = 10·log10((A²/2) / P_nad) = 20·log10(2)·ENOB + 10·log10(1.5),
 * i.e. P_nad = Δ_E²/12 with Δ_E = 2A/2^ENOB, the quantization noise of an
 * ideal converter of ENOB bits (the rounded form is 6.02·ENOB + 1.76 dB);
 * the ideal N-bit quantization noise Δ²/12 is taken out so that ENOB = N
 * means no added noise, because the quantizer itself is modelled exactly;
 * jitter σ_t on a full-scale sine of frequency f adds (A²/2)(2π f σ_t)²
 * (SNR = −20·log10(2π f σ_t); common practice). */
#include "quantizer/quantizer.h"

#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include <gsl/gsl_math.h>
#include <gsl/gsl_rng.h>

/* The exact constants behind 6.02 dB per bit and 1.76 dB. */
#define DB_PER_BIT (20.0 * M_LOG10E * M_LN2) /* 20·log10 2 ≈ 6.0206 */
#define SINE_DB (10.0 * log10(1.5))           /* ≈ 1.7609            */

void qc_converter_default(qc_converter *c, double lo, double hi)
{
    memset(c, 0, sizeof *c);
    c->full_scale_lo = lo;
    c->full_scale_hi = hi;
    c->enob = NAN;
    c->seed = 1;
    c->draws = 1;
    c->gain_mode = QC_GAIN_FIXED;
    c->gain = 1.0;
    c->agc_k = NAN;
    c->offset = 0.0;
}

double qc_enob_to_sinad_db(double enob) { return DB_PER_BIT * enob + SINE_DB; }
double qc_sinad_db_to_enob(double sinad_db) { return (sinad_db - SINE_DB) / DB_PER_BIT; }

qc_status qc_converter_check(const qc_converter *c, unsigned bits)
{
    if (!c)
        return qc_fail(QC_EINVAL, "converter: none given");
    if (bits < 1 || bits > QC_MAX_BITS)
        return qc_fail(QC_EINVAL, "converter: bits must be 1..%d (got %u)", QC_MAX_BITS, bits);
    const double lo = c->full_scale_lo, hi = c->full_scale_hi;
    if (!isfinite(lo) || !isfinite(hi))
        return qc_fail(QC_EINVAL, "full-scale: LO and HI must be finite numbers");
    if (!(hi > lo))
        return qc_fail(QC_EINVAL, "full-scale: the range %g,%g has %s width (HI must exceed LO)",
                       lo, hi, hi == lo ? "zero" : "negative");
    if (!isnan(c->enob) && !(c->enob > 0.0))
        return qc_fail(QC_EINVAL, "enob: %g effective bits (expected 0 < ENOB <= %u)", c->enob,
                       bits);
    /* a valid ENOB that this resolution cannot reach: infeasible, so that
     * a sweep over ENOB and bits records the point and goes on */
    if (!isnan(c->enob) && c->enob > (double)bits)
        return qc_fail(QC_EINFEASIBLE, "enob: %g effective bits of a %u-bit converter (expected "
                                       "0 < ENOB <= %u)",
                       c->enob, bits, bits);
    if (!(c->jitter_s >= 0.0) || !isfinite(c->jitter_s))
        return qc_fail(QC_EINVAL, "jitter-s: must be a finite number >= 0 s (got %g)",
                       c->jitter_s);
    if (c->jitter_s > 0.0 && !(c->signal_freq > 0.0 && isfinite(c->signal_freq)))
        return qc_fail(QC_EINVAL, "jitter-s needs signal-freq, the frequency of the full-scale "
                                  "sine it is rated at (Hz, > 0)");
    if (!(c->dnl_lsb >= 0.0 && c->dnl_lsb < 1.0))
        return qc_fail(QC_EINVAL, "dnl-lsb: peak DNL %g LSB %s", c->dnl_lsb,
                       c->dnl_lsb >= 1.0 ? "reaches -1 LSB: a code of zero width (a missing "
                                           "code); expected 0 <= DNL < 1"
                                         : "is not in [0, 1)");
    if (!(c->inl_lsb >= 0.0) || !isfinite(c->inl_lsb))
        return qc_fail(QC_EINVAL, "inl-lsb: must be a finite number >= 0 LSB (got %g)",
                       c->inl_lsb);
    if (c->gain_mode == QC_GAIN_FIXED && !(c->gain > 0.0 && isfinite(c->gain)))
        return qc_fail(QC_EINVAL, "converter-gain: must be a number > 0 (got %g)", c->gain);
    if (c->gain_mode == QC_GAIN_AGC && !(c->agc_k > 0.0 && isfinite(c->agc_k)))
        return qc_fail(QC_EINVAL, "converter-gain: agc:K needs K > 0 (got %g)", c->agc_k);
    if ((unsigned)c->gain_mode > QC_GAIN_AGC)
        return qc_fail(QC_EINVAL, "converter-gain: unknown mode %d", (int)c->gain_mode);
    if (!c->offset_best && !isnan(c->offset) && !isfinite(c->offset))
        return qc_fail(QC_EINVAL, "converter-offset: not a finite number");
    if (!c->offset_best && isnan(c->offset) && c->gain_mode != QC_GAIN_AGC)
        return qc_fail(QC_EINVAL, "converter-offset: needed with a fixed gain");
    if (c->transitions) {
        const size_t need = ((size_t)1 << bits) - 1;
        if (c->ntransitions != need)
            return qc_fail(QC_EINVAL, "transitions: %zu levels for a %u-bit converter (expected "
                                      "2^%u - 1 = %zu)",
                           c->ntransitions, bits, bits, need);
        for (size_t k = 0; k < need; k++) {
            if (!isfinite(c->transitions[k]))
                return qc_fail(QC_EINVAL, "transitions: level %zu is not a finite number", k + 1);
            if (k > 0 && !(c->transitions[k] > c->transitions[k - 1]))
                return qc_fail(QC_EINVAL, "transitions: level %zu (%g) is not above level %zu "
                                          "(%g)",
                               k + 1, c->transitions[k], k, c->transitions[k - 1]);
        }
        if (c->dnl_lsb > 0.0 || c->inl_lsb > 0.0)
            return qc_fail(QC_EINVAL, "transitions: measured levels already hold the DNL and "
                                      "INL (give dnl-lsb and inl-lsb without them)");
    }
    return QC_OK;
}

double qc_converter_noise_var(const qc_converter *c, unsigned bits)
{
    const double w = c->full_scale_hi - c->full_scale_lo; /* 2A */
    double var = 0.0;
    if (!isnan(c->enob) && c->enob < (double)bits)
        /* Δ_E²/12 − Δ²/12 with Δ_E = w·2^−ENOB, Δ = w·2^−N */
        var += w * w / 12.0 * (exp2(-2.0 * c->enob) - exp2(-2.0 * (double)bits));
    if (c->jitter_s > 0.0) {
        const double a = 0.5 * w, slope = 2.0 * M_PI * c->signal_freq * c->jitter_s;
        var += 0.5 * a * a * slope * slope;
    }
    return var;
}

qc_status qc_converter_transitions(const qc_converter *c, unsigned bits, size_t draw,
                                   double *T)
{
    const size_t codes = (size_t)1 << bits, nt = codes - 1;
    if (c->transitions) {
        memcpy(T, c->transitions, nt * sizeof *T);
        return QC_OK;
    }
    const double lo = c->full_scale_lo, delta = (c->full_scale_hi - lo) / (double)codes;
    if (c->dnl_lsb == 0.0 && c->inl_lsb == 0.0) {
        for (size_t k = 0; k < nt; k++)
            T[k] = lo + (double)(k + 1) * delta;
        return QC_OK;
    }
    gsl_rng *rng = gsl_rng_alloc(gsl_rng_mt19937);
    if (!rng)
        return qc_fail(QC_ENOMEM, "out of memory");
    /* one stream per (seed, draw): the draws do not depend on each other */
    gsl_rng_set(rng, (unsigned long)(c->seed * 1000003ul + draw));
    /* the bow: a·sin(πu) + b·sin(2πu), (a, b) on the unit circle, scaled
     * to a peak of INL LSB over u = k/codes */
    const double phi = 2.0 * M_PI * gsl_rng_uniform(rng);
    const double a = cos(phi), b = sin(phi);
    double peak = 0.0;
    for (size_t k = 1; k < codes; k++) {
        double u = (double)k / (double)codes;
        peak = fmax(peak, fabs(a * sin(M_PI * u) + b * sin(2.0 * M_PI * u)));
    }
    const double scale = peak > 0.0 ? c->inl_lsb / peak : 0.0;
    double edge = lo + delta; /* the first transition: no code below it to widen */
    for (size_t k = 0; k < nt; k++) {
        if (k > 0)
            edge += delta * (1.0 + c->dnl_lsb * (2.0 * gsl_rng_uniform(rng) - 1.0));
        double u = (double)(k + 1) / (double)codes;
        T[k] = edge + delta * scale * (a * sin(M_PI * u) + b * sin(2.0 * M_PI * u));
    }
    gsl_rng_free(rng);
    for (size_t k = 1; k < nt; k++)
        if (!(T[k] > T[k - 1]))
            return qc_fail(QC_EINVAL, "inl-lsb: draw %zu puts transition level %zu at or below "
                                      "level %zu (an INL of %g LSB is too steep for a DNL of "
                                      "%g LSB at %u bits)",
                           draw + 1, k + 1, k, c->inl_lsb, c->dnl_lsb, bits);
    return QC_OK;
}

/* ---- measured transition levels --------------------------------------- */

qc_status qc_converter_transitions_parse(const char *text, size_t len, const char *name,
                                         double **out, size_t *n)
{
    *out = NULL;
    *n = 0;
    size_t cap = 0, count = 0, line = 0;
    double *v = NULL;
    char buf[256];
    qc_status st = QC_OK;
    for (size_t pos = 0; pos < len;) {
        size_t end = pos;
        while (end < len && text[end] != '\n')
            end++;
        line++;
        size_t l = end - pos;
        const char *p = text + pos;
        pos = end + 1;
        while (l > 0 && (p[l - 1] == '\r' || p[l - 1] == ' ' || p[l - 1] == '\t'))
            l--;
        while (l > 0 && (*p == ' ' || *p == '\t')) {
            p++;
            l--;
        }
        if (l == 0 || *p == '#')
            continue;
        if (l >= sizeof buf) {
            st = qc_fail(QC_EFORMAT, "%s:%zu: line too long for one level", name, line);
            goto fail;
        }
        memcpy(buf, p, l);
        buf[l] = '\0';
        double x;
        char *e;
        errno = 0;
        x = strtod(buf, &e);
        if (e == buf || *e != '\0' || errno == ERANGE || !isfinite(x)) {
            st = qc_fail(QC_EFORMAT, "%s:%zu: '%s' is not a number (one transition level per "
                                     "line)",
                         name, line, buf);
            goto fail;
        }
        if (count > 0 && !(x > v[count - 1])) {
            st = qc_fail(QC_EFORMAT, "%s:%zu: transition level %g is not above the one before "
                                     "(%g): the levels must increase",
                         name, line, x, v[count - 1]);
            goto fail;
        }
        if (count == cap) {
            cap = cap ? 2 * cap : 256;
            if (cap > ((size_t)1 << QC_MAX_BITS)) {
                st = qc_fail(QC_EFORMAT, "%s:%zu: more than %zu transition levels", name, line,
                             ((size_t)1 << QC_MAX_BITS) - 1);
                goto fail;
            }
            double *g = realloc(v, cap * sizeof *v);
            if (!g) {
                st = qc_fail(QC_ENOMEM, "out of memory");
                goto fail;
            }
            v = g;
        }
        v[count++] = x;
    }
    if (count == 0) {
        st = qc_fail(QC_EFORMAT, "%s: no transition levels", name);
        goto fail;
    }
    *out = v;
    *n = count;
    return QC_OK;
fail:
    free(v);
    return st;
}

qc_status qc_converter_transitions_load(const char *path, double **out, size_t *n)
{
    *out = NULL;
    *n = 0;
    char *buf;
    size_t len;
    qc_status st = qc_read_file(path, (size_t)1 << 26, "64 MiB", &buf, &len);
    if (st == QC_OK)
        st = qc_converter_transitions_parse(buf, len, path, out, n);
    free(buf);
    return st;
}
