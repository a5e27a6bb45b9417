/* plot_sweep.h — the figures of a finished sweep (internal: called by the
 * sweep runner; drawn by the plot_*.c files). */
#ifndef QC_PLOT_SWEEP_H
#define QC_PLOT_SWEEP_H

#include <stddef.h>

#include <jansson.h>

#include "core/internal.h"
#include "quantcap/study.h"

/* The plots the scenario asks for, drawn from the sweep's records
 * (records[i] for every point, in grid order; see sweep.h) into `dir`;
 * the names of the files written are appended to *files (malloc'd
 * strings; *nfiles counts), and a line for each figure left out (every
 * point in it failed) to *notes. On failure no partial figure is left
 * behind, every allocation of the plots is freed, and the files already
 * complete stay listed. PLplot keeps global state: calls from several
 * threads are drawn one at a time (a lock serializes them). */
qc_status qc_plot_sweep(const qc_scenario *sc, json_t *const *records, const char *dir,
                        char ***files, size_t *nfiles, char ***notes, size_t *nnotes);

#endif
