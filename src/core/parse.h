/* parse.h — the one number grammar of quantcap: decimal numbers, whole
 * numbers in a range, comma lists, and the edit distance behind every
 * "did you mean" hint. Internal to the build: compiled into the library
 * (hidden) and into the command line, never installed. */
#ifndef QC_CORE_PARSE_H
#define QC_CORE_PARSE_H

#include <stddef.h>

#include "quantcap/status.h"

/* A finite decimal number, the whole text (surrounding blanks allowed).
 * The message says what was wrong ("'abc' is not a number"). */
qc_status qc_parse_double(const char *text, double *out);

/* A whole number in [lo, hi]. */
qc_status qc_parse_size(const char *text, size_t lo, size_t hi, size_t *out);

/* Comma-separated finite numbers; *out is malloc'd (free it). The
 * message names the position of a bad value. */
qc_status qc_parse_list(const char *text, double **out, size_t *n);

/* Levenshtein distance between two names (for "did you mean" hints);
 * names longer than 63 characters count as far from everything (99). */
size_t qc_edit_distance(const char *a, const char *b);

#endif
