/* quantcap/plane.h — two-dimensional alphabets: constellations given as
 * points in the complex plane (square QAM, PSK, APSK, hexagonal
 * packings, or a file of points), with an optional input law and bit
 * labels; Gray-like labels where they exist and a searched labelling
 * otherwise. Part of the public interface of libquantcap (include
 * <quantcap.h> for all of it). SPDX-License-Identifier: GPL-3.0-or-later
 * */
#ifndef QUANTCAP_PLANE_H
#define QUANTCAP_PLANE_H

#include <stddef.h>

#include "quantcap/status.h"
#include "quantcap/export.h"

#ifdef __cplusplus
extern "C" {
#endif

#define QC_PLANE_MAX 4096      /* most points of a constellation          */
#define QC_PLANE_PROB_TOL 1e-9 /* |Σ p − 1| allowed for a given law        */

typedef struct {
    size_t size;     /* M points                                          */
    double *x;       /* owned: in-phase coordinates                       */
    double *y;       /* owned: quadrature coordinates                     */
    double *prob;    /* owned: the input law (always set; uniform when none
                        was given)                                        */
    int prob_given;  /* 1 when the law came with the points              */
    size_t *labels;  /* owned: bit labels (bit b = (labels[i] >> b) & 1,
                        bit 0 the last character of a written label), or
                        NULL when the constellation has none           */
    unsigned nbits;  /* label length (0 without labels)                  */
    const char *labelling; /* how the labels came: "given", "gray",
                              "searched"; NULL without labels            */
} qc_plane;

/* Named constellations:
 *   "qam:M"   square QAM, M = 4^k: (2i−√M+1, 2q−√M+1), product Gray labels
 *   "psk:M"   M ≥ 2 points on the unit circle, phases 2πk/M, Gray labels
 *             when M is a power of 2
 *   "apsk:R1/N1[/D1],R2/N2[/D2],…"  rings of radius Rk > 0 (increasing)
 *             with Nk ≥ 1 points each at phases Dk° + 360°·j/Nk (Dk
 *             defaults to 0); Gray labels (ring Gray code, then phase Gray
 *             code) when every ring has the same power-of-2 count and the
 *             number of rings is a power of 2 (or 1)
 *   "hex:M"   the M points of the hexagonal lattice of unit spacing
 *             nearest the origin (ties broken by angle from the positive
 *             real axis), shifted to zero mean; no labels
 * The law is uniform. QC_EINVAL naming the spec and what is wrong;
 * QC_ENOMEM. On failure *out is NULL. Free with qc_plane_free. */
QC_API qc_status qc_plane_parse(const char *spec, qc_plane **out);

/* Points (copied) with an optional law (NULL: uniform) and optional labels
 * (NULL: none; nbits ≥ 1 bits each). Checked: 1 ≤ n ≤ QC_PLANE_MAX, finite
 * coordinates, no two points alike, probabilities ≥ 0 summing to 1 within
 * QC_PLANE_PROB_TOL (then rescaled to sum to 1 exactly), labels below
 * 2^nbits and distinct. QC_EINVAL naming the point (1-based) and the
 * fault; QC_ENOMEM. On failure *out is NULL. */
QC_API qc_status qc_plane_from_points(const double *x, const double *y, size_t n,
                                      const double *prob, const size_t *labels,
                                      unsigned nbits, qc_plane **out);

/* A constellation file: one point a line, "x y", "x y p" or "x y p LABEL"
 * with p the probability ('-' for none: the law is then uniform) and LABEL
 * a string of 0s and 1s (all of one length); '#' starts a comment, blank
 * lines are skipped; every line gives the same columns. Messages name
 * "path:LINE" (QC_EFORMAT for a malformed line, QC_EINVAL for a bad set
 * of points as qc_plane_from_points, QC_EIO for an unreadable file). On
 * failure *out is NULL. */
QC_API qc_status qc_plane_read(const char *path, qc_plane **out);
/* The same from text in memory; `name` is used for "name:LINE". */
QC_API qc_status qc_plane_parse_text(const char *text, size_t len, const char *name,
                                     qc_plane **out);

/* Release a constellation; NULL does nothing. */
QC_API void qc_plane_free(qc_plane *c);

/* E|x|² under the constellation's law. Never fails. */
QC_API double qc_plane_energy(const qc_plane *c);

/* Give the constellation labels by the binary switching algorithm
 * (Schreckenbach, Görtz, Hagenauer, Bauch, IEEE GLOBECOM 2003): starting
 * from the current labels (or the identity when there are none), swap the
 * label of the point that costs most with the label that lowers the cost
 * most, until no swap helps; `restarts` further random starts (seeded by
 * `seed`) keep the best. The cost is the union-bound pairwise error of
 * each bit, Σ_i p_i Σ_{j≠i} d_H(l_i, l_j)·exp(−|x_i − x_j|²/(4σ²)), with
 * σ² the noise variance per quadrature. Labels have ⌈log2 M⌉ bits (M ≥ 2).
 * *cost_out (may be NULL) receives the final cost. QC_EINVAL for σ ≤ 0 or
 * M < 2, QC_ENOMEM; on failure the labels are unchanged. */
QC_API qc_status qc_plane_search_labels(qc_plane *c, double sigma, size_t restarts,
                                        unsigned long seed, double *cost_out);

/* The cost above for the current labels (NAN without labels). */
QC_API double qc_plane_label_cost(const qc_plane *c, double sigma);

#ifdef __cplusplus
}
#endif

#endif /* QUANTCAP_PLANE_H */
