/* parallel.c — whether a parallel region opened here would fork at all,
 * when a single computation spreads its rows over OpenMP threads (the
 * rows of a large transition matrix, the densities of a large Newton
 * step), the loop that gives each thread its own scratch, and the loop
 * that runs the independent starts of a search. Callers
 * branch on qc_parallel_worth before entering a parallel region: even a
 * region that does not fork costs about a microsecond, as much as a
 * whole rate evaluation of a small channel. */
#include "core/internal.h"

#include <stdio.h>
#include <stdlib.h>

#ifdef _OPENMP
#include <omp.h>
#endif

/* Below this many entries a parallel region (a few microseconds) would
 * cost more than it saves: PAM-8 at 8 bits has 2056. */
#define PARALLEL_MIN_ENTRIES 65536

int qc_parallel_can_fork(void)
{
#ifdef _OPENMP
    return omp_get_level() == 0 && omp_get_max_threads() > 1;
#else
    return 0;
#endif
}

int qc_parallel_worth(size_t entries)
{
    return entries >= PARALLEL_MIN_ENTRIES && qc_parallel_can_fork();
}

size_t qc_parallel_team(size_t entries)
{
#ifdef _OPENMP
    return qc_parallel_worth(entries) ? (size_t)omp_get_max_threads() : 1;
#else
    (void)entries;
    return 1;
#endif
}

size_t qc_parallel_thread(void)
{
#ifdef _OPENMP
    return (size_t)omp_get_thread_num();
#else
    return 0;
#endif
}

void qc_parallel_failure_init(qc_parallel_failure *f, size_t none)
{
    f->index = f->none = none;
    f->status = QC_OK;
    f->message[0] = '\0';
}

void qc_parallel_failure_note(qc_parallel_failure *f, size_t index, qc_status st)
{
#pragma omp critical(qc_parallel_failure_note)
    if (index < f->index) {
        f->index = index;
        f->status = st;
        snprintf(f->message, sizeof f->message, "%s", qc_last_error());
    }
}

qc_status qc_parallel_failure_status(const qc_parallel_failure *f)
{
    return f->index < f->none ? qc_fail(f->status, "%s", f->message) : QC_OK;
}

qc_status qc_parallel_rows(size_t n, size_t scratch_len, qc_row_fn row, void *ctx,
                           size_t *first_failed)
{
    size_t failed = n;
    int no_memory = 0;
#pragma omp parallel
    {
        double *own = qc_malloc_array(scratch_len ? scratch_len : 1, sizeof *own);
        if (!own) {
#pragma omp atomic write
            no_memory = 1;
        }
#pragma omp for schedule(static)
        for (size_t i = 0; i < n; i++)
            if (own && row(i, own, ctx) != 0) {
#pragma omp critical(qc_parallel_rows_failed)
                if (i < failed)
                    failed = i;
            }
        free(own);
    }
    if (first_failed)
        *first_failed = failed;
    return no_memory ? qc_fail(QC_ENOMEM, "out of memory for the scratch of %zu rows", n)
                     : QC_OK;
}

qc_status qc_parallel_starts(size_t n, int threads, qc_start_fn start, void *ctx)
{
    if (n > QC_PARALLEL_STARTS_MAX)
        return qc_fail(QC_EINVAL, "at most %d independent starts (got %zu)",
                       QC_PARALLEL_STARTS_MAX, n);
    qc_status status[QC_PARALLEL_STARTS_MAX];
    char message[QC_PARALLEL_STARTS_MAX][1024]; /* the detail message is per thread */
#pragma omp parallel for schedule(dynamic, 1) if (n > 1 && threads && qc_parallel_can_fork())
    for (size_t i = 0; i < n; i++) {
        status[i] = start(i, ctx);
        if (status[i] != QC_OK)
            snprintf(message[i], sizeof message[i], "%s", qc_last_error());
    }
    for (size_t i = 0; i < n; i++)
        if (status[i] != QC_OK)
            return qc_fail(status[i], "%s", message[i]);
    return QC_OK;
}
