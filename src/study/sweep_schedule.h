/* sweep_schedule.h — the order in which a sweep's threads take its points
 * (internal to the sweep runner, sweep_schedule.c). */
#ifndef QC_SWEEP_SCHEDULE_H
#define QC_SWEEP_SCHEDULE_H

#include <stddef.h>

#include "core/internal.h"

typedef struct qc_sweep_schedule qc_sweep_schedule;

/* A schedule of the points todo[0 .. ntodo) for `workers` threads;
 * setting[p] is the model setting of grid point p (any number, SIZE_MAX
 * included: points with equal numbers share their model). QC_ENOMEM. */
qc_status qc_sweep_schedule_alloc(const size_t *todo, size_t ntodo, const size_t *setting,
                                  unsigned workers, qc_sweep_schedule **out);

/* The next point for thread `worker` (0 .. workers − 1), or SIZE_MAX when
 * every point has been handed out. Safe to call from several threads. */
size_t qc_sweep_schedule_next(qc_sweep_schedule *s, unsigned worker);

void qc_sweep_schedule_free(qc_sweep_schedule *s);

#endif
