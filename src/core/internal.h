/* internal.h — helpers shared by the library's own source files.
 * Not installed; never included by the CLI or by users. */
#ifndef QC_INTERNAL_H
#define QC_INTERNAL_H

#include "quantcap/status.h"
#include "quantcap/dmc.h"
#include "quantcap/info.h"
#include "core/parse.h" /* the number grammar and safe quoting */

/* Record a detail message for the calling thread and return `status`.
 * Use as: return qc_fail(QC_EINVAL, "'sigma' must be > 0 (got %g)", s); */
qc_status qc_fail(qc_status status, const char *fmt, ...)
    __attribute__((format(printf, 2, 3)));

/* The message set last, prefixed with "what: " (the field it is about);
 * returns status. */
qc_status qc_fail_prefixed(qc_status status, const char *what);

/* Clear the detail message of the calling thread. */
void qc_clear_error(void);

/* Turn GSL's abort-on-error handler off once, thread-safely. */
void qc_gsl_init(void);

/* Checked allocation helpers: NULL on overflow of n*size as well. */
void *qc_calloc(size_t n, size_t size);
void *qc_malloc_array(size_t n, size_t size);

/* order[k] = the index of the k-th smallest of values[0..n), NaNs last,
 * ties by index (src/core/order.c). */
qc_status qc_sort_order(const double *values, size_t n, size_t *order);

/* Bit labels fit in nbits and are distinct among inputs with r(x) > 0;
 * the law sums to 1 (src/core/gmi.c). */
qc_status qc_check_labels(const double *input, size_t nx, const size_t *labels,
                          unsigned nbits);
/* P(Z < u) and P(Z ≥ u) of the standard normal law, bit for bit GSL's
 * gsl_cdf_ugaussian_P and _Q, with one call beyond one standard
 * deviation (src/core/normal_tails.c). */
void qc_normal_tails(double u, double *below, double *above);
/* Σ_v p_v log(1 + p_v̄/p_v) for the joint masses of the two bit values at
 * one output: its share of H(B|Y), accurate when one value dominates. */
double qc_bit_term(double p0, double p1);

/* log(1 + a/b) for a ≥ 0, b > 0, also where a/b overflows (b subnormal,
 * a of order one): then log a − log b, which is that value to rounding. */
double qc_log1p_ratio(double a, double b);

/* out[i] = log in[i] where in[i] > 0, `floor` where in[i] = 0 (in ≥ 0,
 * finite): glibc's vector logarithm (libmvec, below 4 ulp) on normal
 * numbers where the build has it, log(3) on the rest (vmath.c). */
void qc_log_floored(const double *in, double *out, size_t n, double floor);

/* out[i] = exp in[i] (out may be in): glibc's vector exponential
 * (libmvec, below 4 ulp) on groups of lanes whose results are normal
 * numbers or round to 0, where the build has it; exp(3) on other groups
 * (vmath.c). */
void qc_exp_array(const double *in, double *out, size_t n);

/* The whole file at `path` into *buf (owned by the caller; *len bytes,
 * not terminated). Files beyond max_bytes are QC_EFORMAT, "file larger
 * than MAX_TEXT"; QC_EIO naming the path when it cannot be opened or read
 * (read_file.c). */
qc_status qc_read_file(const char *path, size_t max_bytes, const char *max_text, char **buf,
                       size_t *len);

/* Whether per-row work on `entries` matrix entries is worth OpenMP
 * threads: large enough that a parallel region costs little beside it,
 * and called outside any parallel construct (a sweep's points already
 * run in threads, even a team of one under --jobs 1), with more than one
 * thread available. Work split this way computes each entry exactly as
 * a serial loop does, and sums stay in one thread in index order, so
 * results do not depend on the thread count (src/core/parallel.c). */
int qc_parallel_worth(size_t entries);

/* Whether a parallel region opened here would fork: outside any parallel
 * construct, with more than one thread allowed. */
int qc_parallel_can_fork(void);

/* The threads a region over per-row work on `entries` entries should
 * have: as many as allowed when qc_parallel_worth, else 1 (a region of
 * one does not fork). For work whose threads each need a workspace made
 * beforehand, one per thread number. */
size_t qc_parallel_team(size_t entries);

/* This thread's number in its team: 0 to the team's size − 1 (0 outside
 * any parallel region, or without OpenMP). */
size_t qc_parallel_thread(void);

/* The first failure of a parallel loop, by index: what one thread running
 * the loop in order would have reported. The detail message is per
 * thread, so it is kept here when noted. */
typedef struct {
    size_t index;      /* the failing index; `none` (as given) while none */
    size_t none;
    qc_status status;
    char message[1024];
} qc_parallel_failure;
void qc_parallel_failure_init(qc_parallel_failure *f, size_t none);
/* Notes that index failed with st (and this thread's detail message) if
 * it comes before any failure noted so far; callable from any thread. */
void qc_parallel_failure_note(qc_parallel_failure *f, size_t index, qc_status st);
/* QC_OK when nothing failed, else the first failure, its message set in
 * the calling thread. */
qc_status qc_parallel_failure_status(const qc_parallel_failure *f);

/* One row of a parallel loop: row i with `scratch` of the length asked
 * for; 0 on success. */
typedef int (*qc_row_fn)(size_t i, double *scratch, void *ctx);

/* Runs row(i, scratch, ctx) for i in [0, n) in OpenMP threads (the caller
 * has asked qc_parallel_worth), each thread with its own scratch of
 * scratch_len doubles. *first_failed (may be NULL): the smallest i whose
 * row failed, n if none; which rows after it ran is unspecified. QC_ENOMEM
 * when a thread's scratch could not be allocated (its rows did not run). */
qc_status qc_parallel_rows(size_t n, size_t scratch_len, qc_row_fn row, void *ctx,
                           size_t *first_failed);

/* Independent start i of a search (each with its own state in ctx). */
typedef qc_status (*qc_start_fn)(size_t i, void *ctx);

/* Runs start(i, ctx) for every i in [0, n), n ≤ QC_PARALLEL_STARTS_MAX:
 * in OpenMP threads when `threads` is set and a region here would fork,
 * else one after another. The status is the first failing start's in
 * index order, with its message (raised again in the calling thread), as
 * one start after another would meet it; QC_OK when none failed. */
#define QC_PARALLEL_STARTS_MAX 8
qc_status qc_parallel_starts(size_t n, int threads, qc_start_fn start, void *ctx);

#endif
