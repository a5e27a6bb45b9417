/* alphabet.c — the transmit alphabets of quantcap: bipolar PAM, unipolar
 * (intensity) PAM with OOK as upam:2, square QAM as the product of two
 * √M-PAM (one per quadrature; Proakis & Salehi, Digital Communications,
 * 5th ed., §3.2), M-ary pulse-position modulation as its two per-slot
 * intensity levels (Pierce, IEEE Trans. Commun. 26(12), 1978, from memory), explicit
 * levels, and a grid of equally spaced candidate
 * levels on which the input law is designed freely. Also the peak
 * constraint applied to an alphabet. */
#include "alphabet/alphabet.h"
#include "core/parse.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

void qc_alphabet_free(qc_alphabet *a)
{
    if (!a)
        return;
    free(a->levels);
    free(a);
}

static qc_status alphabet_new(qc_alphabet_kind kind, size_t n, qc_alphabet **out)
{
    *out = NULL;
    qc_alphabet *a = calloc(1, sizeof *a);
    if (!a)
        return qc_fail(QC_ENOMEM, "out of memory");
    a->levels = qc_malloc_array(n, sizeof *a->levels);
    if (!a->levels) {
        free(a);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    a->kind = kind;
    a->size = n;
    a->nlevels = n;
    a->dimensions = 1;
    *out = a;
    return QC_OK;
}

int qc_is_power_of_two(size_t n) { return n >= 2 && (n & (n - 1)) == 0; }

/* Integer square root of m if m is a perfect square, else 0. */
static size_t exact_sqrt(size_t m)
{
    size_t r = (size_t)llround(sqrt((double)m));
    for (size_t c = r > 0 ? r - 1 : 0; c <= r + 1; c++)
        if (c * c == m)
            return c;
    return 0;
}

/* "ppm:M": M slots, the per-slot levels 0 (empty) and 1 (pulsed). */
static qc_status ppm_parse(const char *spec, const char *size, qc_alphabet **out)
{
    size_t m;
    if (qc_parse_size(size, 2, QC_PPM_MAX_SLOTS, &m) != QC_OK)
        return qc_fail(QC_EINVAL, "alphabet: slots in '%s': %s (PPM needs at least 2 slots)",
                       spec, qc_last_error());
    qc_alphabet *a;
    qc_status st = alphabet_new(QC_ALPHABET_PPM, 2, &a);
    if (st != QC_OK)
        return st;
    a->levels[0] = 0.0;
    a->levels[1] = 1.0;
    a->size = m;
    a->intensity = 1;
    *out = a;
    return QC_OK;
}

qc_status qc_ppm_slot_powers(double average, double ratio, size_t slots, double power[2])
{
    if (!(average > 0.0) || !isfinite(average))
        return qc_fail(QC_EINVAL, "ppm: the average power must be a positive number (got %g)",
                       average);
    if (!(ratio > 1.0))
        return qc_fail(QC_EINVAL, "ppm: the extinction ratio must exceed 1 (0 dB) (got %g)",
                       ratio);
    if (slots < 2)
        return qc_fail(QC_EINVAL, "ppm: M must be at least 2 slots (got %zu)", slots);
    const double m = (double)slots;
    double pulsed = isinf(ratio) ? m * average : m * average * ratio / (ratio + m - 1.0);
    power[0] = isinf(ratio) ? 0.0 : pulsed / ratio;
    power[1] = pulsed;
    return QC_OK;
}

qc_status qc_alphabet_parse(const char *spec, qc_alphabet **out)
{
    *out = NULL;
    if (!spec)
        return qc_fail(QC_EINVAL, "alphabet: no specification given");
    const char *colon = strchr(spec, ':');
    if (!colon)
        return qc_fail(QC_EINVAL,
                       "alphabet: '%s' is not of the form pam:M, upam:M, qam:M or ppm:M", spec);
    size_t kind_len = (size_t)(colon - spec);
    qc_alphabet_kind kind;
    if (kind_len == 3 && strncmp(spec, "pam", 3) == 0)
        kind = QC_ALPHABET_PAM;
    else if (kind_len == 4 && strncmp(spec, "upam", 4) == 0)
        kind = QC_ALPHABET_UPAM;
    else if (kind_len == 3 && strncmp(spec, "qam", 3) == 0)
        kind = QC_ALPHABET_QAM;
    else if (kind_len == 3 && strncmp(spec, "ppm", 3) == 0)
        return ppm_parse(spec, colon + 1, out);
    else
        return qc_fail(QC_EINVAL,
                       "alphabet: unknown kind '%.*s' (known: pam, upam, qam, ppm; in the "
                       "plane psk, apsk, hex)",
                       (int)(kind_len < 32 ? kind_len : 32), spec);
    size_t m;
    size_t most = kind == QC_ALPHABET_QAM ? QC_ALPHABET_MAX * QC_ALPHABET_MAX
                                          : QC_ALPHABET_MAX;
    if (qc_parse_size(colon + 1, kind == QC_ALPHABET_QAM ? 4 : 2, most, &m) != QC_OK)
        return qc_fail(QC_EINVAL, "alphabet: size in '%s': %s", spec, qc_last_error());
    size_t n = m;
    if (kind == QC_ALPHABET_QAM) {
        n = exact_sqrt(m);
        if (n == 0)
            return qc_fail(QC_EINVAL,
                           "alphabet: qam:%zu: M must be a perfect square (square QAM, "
                           "e.g. 4, 16, 64, 256)",
                           m);
        if (!qc_is_power_of_two(m))
            return qc_fail(QC_EINVAL,
                           "alphabet: qam:%zu: M must be a power of 2 (Gray labels on "
                           "each quadrature; e.g. 4, 16, 64, 256)",
                           m);
    }
    qc_alphabet *a;
    qc_status st = alphabet_new(kind, n, &a);
    if (st != QC_OK)
        return st;
    for (size_t i = 0; i < n; i++)
        a->levels[i] = kind == QC_ALPHABET_UPAM ? (double)i / (double)(n - 1)
                                                : 2.0 * (double)i - (double)(n - 1);
    a->size = m;
    if (kind == QC_ALPHABET_QAM)
        a->dimensions = 2;
    a->intensity = kind == QC_ALPHABET_UPAM;
    *out = a;
    return QC_OK;
}

qc_status qc_alphabet_from_levels(const double *levels, size_t n, qc_alphabet **out)
{
    *out = NULL;
    if (!levels || n == 0)
        return qc_fail(QC_EINVAL, "levels: no levels given");
    if (n > QC_ALPHABET_MAX)
        return qc_fail(QC_EINVAL, "levels: %zu levels, at most %d allowed", n,
                       QC_ALPHABET_MAX);
    for (size_t i = 0; i < n; i++) {
        if (!isfinite(levels[i]))
            return qc_fail(QC_EINVAL, "levels: level %zu is not a finite number", i + 1);
        for (size_t j = 0; j < i; j++)
            if (levels[j] == levels[i])
                return qc_fail(QC_EINVAL, "levels: level %zu repeats level %zu (%g)", i + 1,
                               j + 1, levels[i]);
    }
    qc_alphabet *a;
    qc_status st = alphabet_new(QC_ALPHABET_LEVELS, n, &a);
    if (st != QC_OK)
        return st;
    memcpy(a->levels, levels, n * sizeof *levels);
    *out = a;
    return QC_OK;
}

qc_status qc_alphabet_grid(double lo, double hi, size_t n, qc_alphabet **out)
{
    *out = NULL;
    if (!isfinite(lo) || !isfinite(hi))
        return qc_fail(QC_EINVAL, "level-grid: LO and HI must be finite (got %g, %g)", lo,
                       hi);
    if (!(lo < hi))
        return qc_fail(QC_EINVAL, "level-grid: LO must be below HI (got %g, %g)", lo, hi);
    if (n < 2 || n > QC_ALPHABET_MAX)
        return qc_fail(QC_EINVAL, "level-grid: N must be from 2 to %d (got %zu)",
                       QC_ALPHABET_MAX, n);
    qc_alphabet *a;
    qc_status st = alphabet_new(QC_ALPHABET_GRID, n, &a);
    if (st != QC_OK)
        return st;
    for (size_t i = 0; i < n; i++)
        a->levels[i] = i + 1 == n ? hi : lo + (hi - lo) * (double)i / (double)(n - 1);
    for (size_t i = 1; i < n; i++)
        if (!(a->levels[i] > a->levels[i - 1])) {
            qc_alphabet_free(a);
            return qc_fail(QC_EINVAL,
                           "level-grid: %zu points on [%g, %g] are not distinct doubles", n,
                           lo, hi);
        }
    *out = a;
    return QC_OK;
}

/* Relative slack so that levels computed as lo + k·step land inside a
 * peak equal to an end of the grid. */
#define PEAK_SLACK 1e-12

int qc_within_peak(double x, double peak, int intensity)
{
    double slack = PEAK_SLACK * peak;
    double lo = intensity ? 0.0 : -peak;
    return x >= lo - slack && x <= peak + slack;
}

qc_status qc_alphabet_apply_peak(qc_alphabet *a, double peak, int intensity)
{
    if (isnan(peak))
        return QC_OK;
    if (!(peak > 0.0) || !isfinite(peak))
        return qc_fail(QC_EINVAL, "peak-limit: must be a positive number (got %g)", peak);
    const char *range = intensity ? "[0, peak]" : "[-peak, peak]";
    if (a->kind != QC_ALPHABET_GRID) {
        for (size_t i = 0; i < a->nlevels; i++)
            if (!qc_within_peak(a->levels[i], peak, intensity))
                return qc_fail(QC_EINVAL,
                               "peak-limit: level %zu (%g) lies outside %s = [%g, %g]; only a "
                               "level-grid drops candidates outside the peak",
                               i + 1, a->levels[i], range, intensity ? 0.0 : -peak, peak);
        return QC_OK;
    }
    /* count first, so that a grid the peak leaves too few candidates is
     * left as it was */
    size_t k = 0;
    for (size_t i = 0; i < a->nlevels; i++)
        k += qc_within_peak(a->levels[i], peak, intensity);
    if (k < 2)
        return qc_fail(QC_EINFEASIBLE,
                       "peak-limit: %g leaves %zu of the %zu level-grid candidates inside %s "
                       "(at least 2 needed)",
                       peak, k, a->nlevels, range);
    k = 0;
    for (size_t i = 0; i < a->nlevels; i++)
        if (qc_within_peak(a->levels[i], peak, intensity))
            a->levels[k++] = fmin(fmax(a->levels[i], intensity ? 0.0 : -peak), peak);
    a->nlevels = a->size = k;
    return QC_OK;
}
