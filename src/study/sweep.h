/* sweep.h — pieces of the sweep runner shared by its files and the plots
 * (internal). A sweep's result is one JSON record per grid point:
 *   {"point": i (from 1), "status": "ok"|..., "error": null|"...", "result": {...}}
 * where "result" is the object `quantcap design --json` prints. */
#ifndef QC_SWEEP_H
#define QC_SWEEP_H

#include <stddef.h>

#include <jansson.h>

#include "core/internal.h"
#include "quantcap/study.h"

/* Short name of a status for the "status" field ("ok", "infeasible"...). */
const char *qc_sweep_status_name(qc_status st);

/* results.csv and results.json of a finished grid (records[i] for every
 * point, in grid order). */
qc_status qc_results_write_csv(const qc_scenario *sc, json_t *const *records,
                               const char *path);
qc_status qc_results_write_json(const qc_scenario *sc, json_t *const *records,
                                const char *path);

/* The plots the scenario asks for, into `dir`; the names of the files
 * written are appended to *files (malloc'd strings; *nfiles counts), and
 * a line for each figure left out (every point in it failed) to *notes. */
qc_status qc_plot_sweep(const qc_scenario *sc, json_t *const *records, const char *dir,
                        char ***files, size_t *nfiles, char ***notes, size_t *nnotes);

/* Name of the list of files a sweep wrote, kept in its output folder. */
#define QC_MANIFEST_NAME "manifest.txt"

/* Record `files` (paths in `dir`) in dir/manifest.txt. When `prune`, first
 * remove the files the previous manifest lists that `files` does not (the
 * stale output of an earlier run; nothing else is touched), appending
 * their paths to *removed; otherwise the previous list is kept in the new
 * one. */
qc_status qc_manifest_update(const char *dir, char *const *files, size_t nfiles, int prune,
                             char ***removed, size_t *nremoved);

/* Append a malloc'd copy of `path` to a file list. */
qc_status qc_file_list_add(char ***files, size_t *nfiles, const char *path);

#endif
