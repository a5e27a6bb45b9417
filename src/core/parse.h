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

/* The JSON member and CSV column name of a flag or scenario key: the
 * key with '-' written '_' ("snr-db" -> "snr_db"; docs/formats.md).
 * Cut to fit `cap` bytes. */
void qc_field_name(const char *key, char *buf, size_t cap);

#define QC_QUOTE_CHARS 40 /* characters of a field shown in a message */
/* Text (len bytes, NULs included) made safe for a message into buf (cap
 * bytes, at least 8): printable ASCII and well-formed UTF-8 kept, any
 * other byte written as \xNN, and cut with "..." after max_chars
 * characters or where buf is full. Returns buf. */
const char *qc_quote(const char *text, size_t len, size_t max_chars, char *buf,
                     size_t cap);

#endif
