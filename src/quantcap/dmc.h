/* quantcap/dmc.h — discrete memoryless channels: the row-stochastic
 * transition matrix, its checks and text reader. Part of the public
 * interface of libquantcap (include <quantcap.h> for all of it). SPDX-
 * License-Identifier: GPL-3.0-or-later */
#ifndef QUANTCAP_DMC_H
#define QUANTCAP_DMC_H

#include <stddef.h>

#include "quantcap/status.h"

#ifdef __cplusplus
extern "C" {
#endif

/* Row-stochastic nx × ny matrix, row-major: p[x*ny + y] = P(y|x). */
typedef struct {
    size_t nx;
    size_t ny;
    double *p;
} qc_dmc;

#define QC_DMC_ROW_TOL 1e-9 /* |row sum − 1| allowed by qc_dmc_check */
#define QC_DMC_MAX_DIM ((size_t)1 << 24) /* largest nx or ny accepted */

/* Allocate an nx × ny matrix of zeros (free with qc_dmc_free). QC_EINVAL
 * when nx or ny is 0 or above QC_DMC_MAX_DIM, QC_ENOMEM; on failure *out
 * is NULL. */
QC_API qc_status qc_dmc_alloc(size_t nx, size_t ny, qc_dmc **out);
/* Release a matrix from qc_dmc_alloc, _parse, _read or _merge; NULL does
 * nothing. */
QC_API void qc_dmc_free(qc_dmc *dmc);

/* Entries finite and ≥ 0, every row summing to 1 within QC_DMC_ROW_TOL.
 * Reads only. On failure (QC_EINVAL) the message names the first bad row
 * (1-based) and its entry or sum. */
QC_API qc_status qc_dmc_check(const qc_dmc *dmc);

/* Parse a plain-text matrix: one row per line, numbers separated by
 * whitespace and/or commas, '#' starts a comment, blank lines ignored.
 * `name` is used in messages ("name:LINE: ..."). The matrix is checked
 * with qc_dmc_check. On failure (QC_EFORMAT naming the line, QC_EINVAL
 * from the check, QC_ENOMEM) *out is NULL. */
QC_API qc_status qc_dmc_parse(const char *text, size_t len, const char *name,
                       qc_dmc **out);

/* Read and parse a file as qc_dmc_parse (messages name the path); a
 * directory or unreadable path is QC_EIO. On failure *out is NULL. */
QC_API qc_status qc_dmc_read(const char *path, qc_dmc **out);

/* The channel whose outputs are the groups given by `cuts` (cells + 1
 * strictly increasing indices from 0 to fine->ny): each output's
 * probability is the sum over its group. QC_EINVAL naming the bad cut,
 * QC_ENOMEM; on failure *out is NULL and `fine` is unchanged. */
QC_API qc_status qc_dmc_merge(const qc_dmc *fine, const size_t *cuts, size_t cells,
                       qc_dmc **out);

#ifdef __cplusplus
}
#endif

#endif /* QUANTCAP_DMC_H */
