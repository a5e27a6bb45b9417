/* quantcap/study.h — the application layer: settings vocabulary, JSON
 * reports, scenario files, sweeps and plots. Part of the public interface
 * of libquantcap (include <quantcap.h> for all of it). SPDX-License-
 * Identifier: GPL-3.0-or-later */
#ifndef QUANTCAP_STUDY_H
#define QUANTCAP_STUDY_H

#include <stddef.h>

#include "quantcap/frontend.h"
#include "quantcap/design.h"
#include "quantcap/iq.h"

#ifdef __cplusplus
extern "C" {
#endif

/* The same keys serve `quantcap design` (as --KEY VALUE flags) and
 * scenario files (as KEY = VALUE lines). Model parameters (sigma, ...) are
 * keys too. A qc_settings holds the text of each key given. */
typedef struct {
    const char *key;
    const char *metavar; /* NULL: a switch taking "true"/"false"          */
    const char *help;
} qc_setting_info;

/* The design keys, excluding model parameters (static table); *n receives
 * the count. Never fails. */
QC_API const qc_setting_info *qc_setting_keys(size_t *n);

/* 1 when `key` is a design key or a parameter of some model, else 0.
 * Never fails. */
QC_API int qc_setting_known(const char *key);

/* The known key closest to an unknown one (for "did you mean"), or NULL
 * when none is close. Never fails. */
QC_API const char *qc_setting_suggest(const char *key);

/* The current name of a key that was renamed (e.g. "power" ->
 * "power-limit"), or NULL when `old` is not an old name. Never fails. */
QC_API const char *qc_setting_renamed(const char *old);

typedef struct qc_settings qc_settings;
/* An empty set of settings. QC_ENOMEM; on failure *out is NULL. */
QC_API qc_status qc_settings_alloc(qc_settings **out);
/* Release settings (and what qc_settings_build made point into them);
 * NULL does nothing. */
QC_API void qc_settings_free(qc_settings *s);
/* A new object with the same keys and values. QC_ENOMEM; on failure *out
 * is NULL and `s` is unchanged. */
QC_API qc_status qc_settings_copy(const qc_settings *s, qc_settings **out);

/* Set (or replace) one key. The value is checked now: on failure the
 * message says what is wrong with the value ("'0' is not a whole number
 * from 1 to 16"; the caller names the key: the flag, or file:line) and the
 * settings are unchanged. An unknown key is QC_EINVAL. */
QC_API qc_status qc_settings_set(qc_settings *s, const char *key, const char *value);

/* The text given for `key` (borrowed: valid until the key is set again
 * or s is freed), or NULL when it was not given. Never fails. */
QC_API const char *qc_settings_get(const qc_settings *s, const char *key);

/* Turn settings into a model instance and a design request. The request
 * points into memory owned by `s` (valid until s is changed or freed);
 * the model is the caller's to free. Cross-key rules (sigma or snr-db,
 * bits or cells, ...) are checked here, naming the keys (QC_EINVAL), as
 * are the table file (QC_EIO, QC_EFORMAT) and the front end. On failure
 * *model is NULL and *req must not be used. */
QC_API qc_status qc_settings_build(qc_settings *s, qc_model **model,
                            qc_design_request *req);

/* The constellation and the channel of two-dimensional settings, read
 * as qc_settings_build reads them (src/study/settings_plane.c): the
 * points from 'alphabet' (qam:M, psk:M, apsk:..., hex:M) or
 * 'constellation'; the labels given or Gray, else searched by binary
 * switching (fixed seed), and with search_labels searched from the given
 * ones too; σ per quadrature from 'snr-db' (Es/N0 = E|x|²/(2σ²)) or
 * 'sigma'; the phase error from 'phase-noise-deg' and 'phase-noise-law'.
 * The receiver keys are not read. *plane belongs to s (valid until s is
 * built again or freed); *snr_db receives Es/N0 in dB. QC_EINVAL naming
 * the key, the file errors of qc_plane_read, QC_ENOMEM; on failure
 * *plane is NULL. */
QC_API qc_status qc_settings_plane_channel(qc_settings *s, int search_labels,
                                           const qc_plane **plane, qc_iq_noise *noise,
                                           double *snr_db);

/* ---- the inverse question on settings (src/study/require.c) ---------- */

/* Does the key hold a value in dB (its name ends in -db or -dbm)? */
QC_API int qc_setting_in_db(const char *key);

/* The unit a key's values carry in messages: " dBm" for a name ending in
 * -dbm, " dB" for -db, NULL otherwise. */
QC_API const char *qc_setting_db_unit(const char *key);

/* QC_EINVAL unless `key` is a continuous quantity to solve for (a known,
 * numeric key: not bits, cells, levels, ...); the message names it. */
QC_API qc_status qc_setting_check_solvable(const char *key);

/* Remove the keys that give the quantity of `key` another way, so that a
 * value of `key` replaces them: snr-db, osnr-db and sigma (the noise
 * level), spans and length-km (an amplified link's length). */
QC_API void qc_settings_drop_alternatives(qc_settings *s, const char *key);

/* A copy of the settings with `key` set to `value` (%.17g). */
QC_API qc_status qc_settings_with(const qc_settings *s, const char *key, double value,
                                  qc_settings **out);

/* The default search range of `key`: its value in the settings ±30 dB
 * (keys in dB) or a factor 1000 either way; without one snr-db −20…40 dB,
 * osnr-db 0…50 dB, received-dbm and peak-dbm −60…20 dBm; otherwise QC_EINVAL
 * asking for a range. An amplified fibre link (span-km given) searches
 * spans from 1 to 1000, length-km from one to 1000 spans, and launch-dbm
 * from 30 dB below its optimum launch power up to it (whatever the
 * settings' own values). An unamplified intensity link (launch-dbm)
 * searches length-km from 10 m up to the length whose losses reach
 * QC_LINK_MAX_LOSS_DB; a free-space link range-km from twice its
 * far-field boundary π·D_t·D_r/(4λ) (or its value / 30) up to its value
 * × 30 (10^6 boundaries without one). */
QC_API qc_status qc_settings_require_range(const qc_settings *s, const char *key, double *lo,
                                           double *hi);

/* The key a design's penalty at a target is solved for: the one that
 * sets its operating point (peak-dbm or received-dbm of a physical
 * receiver, snr-db, osnr-db, signal of a photon-counting or APD model;
 * spans or length-km of an amplified fibre link; launch-dbm of an
 * unamplified intensity link).
 * NULL when there is none, with *why saying so (a static phrase: a
 * measured table, parameters such as sigma given directly). Sets no
 * message. */
QC_API const char *qc_settings_penalty_key(const qc_settings *s, const char **why);

/* qc_require with the value of `key` as the unknown: each value tried is
 * the settings with the key replaced, built as qc_settings_build does.
 * Keys in dB are searched as they are, others on a log scale (lo > 0).
 * `unit` (" dB", may be NULL) is appended to values in messages. */
QC_API qc_status qc_settings_require(const qc_settings *s, const char *key,
                                     const qc_target *target, double lo, double hi,
                                     const char *unit, qc_require_result *res);

/* The penalty at a FEC code's threshold of the design the settings
 * describe: the value of its operating key (qc_settings_penalty_key) the
 * settings' quantizer needs to meet the code's threshold (pre-FEC BER or
 * NGMI) minus the value the unquantized receiver needs, found by
 * qc_settings_require over the default range. It replaces the penalty at
 * the operating rate wherever a code is given. */
typedef struct {
    const char *key;  /* the key solved for; NULL: none (note says why)    */
    double db;        /* the penalty in dB; NaN: undefined (note says why) */
    char note[512];   /* why undefined; empty when defined                 */
} qc_fec_penalty;

/* Fill *out for the code `fec`. An undefined penalty (no key to solve
 * for, a target not met in the range) is QC_OK with the reason in
 * out->note; only QC_ENOMEM fails. */
QC_API qc_status qc_settings_fec_penalty(const qc_settings *s, const qc_fec *fec,
                                         qc_fec_penalty *out);

/* A model cache: the model instances of a run of designs, kept by model
 * setting (the type, its parameter values bit for bit with defaults filled
 * in, and for a measured table the file's path; the file is read when an
 * instance is built and assumed not to change during the run). A design
 * borrows an instance and gives it back; the next design of the same
 * setting gets the same instance with what it has computed so far (the
 * APD model's FFT plans and per-level laws), instead of a new one. Each
 * instance is lent to one borrower at a time, since a model instance
 * fills its caches as it is used (one thread at a time); when all of a
 * setting's instances are out, a new one is built. All functions below
 * may be called from several threads at once. Instances out on loan are
 * kept, and the few most recently given back. */
typedef struct qc_model_cache qc_model_cache;

/* A new, empty cache. On failure (QC_ENOMEM) *out is NULL. */
QC_API qc_status qc_model_cache_alloc(qc_model_cache **out);

/* Free the cache and every instance in it; instances borrowed from it
 * must not be used afterwards. NULL is a no-op. */
QC_API void qc_model_cache_free(qc_model_cache *cache);

/* Borrow an instance of type `type` with parameters `params`
 * (type->nparams values, NaN = the default; NULL for a table), or of the
 * measured table in file `table` (a QC_MODEL_FROM_FILE type; NULL
 * otherwise): an idle instance of that setting, or a new one built now
 * (qc_model_alloc, qc_model_table_load). Give *out back with
 * qc_model_cache_release, never free it. On failure *out is NULL, nothing
 * is kept or lent, and the status and message are those of the build (a
 * parameter out of range names the parameter; an unreadable table names
 * the file). */
QC_API qc_status qc_model_cache_get(qc_model_cache *cache, const qc_model_type *type,
                                    const double *params, const char *table,
                                    const qc_model **out);

/* Give back an instance borrowed from the cache (qc_model_cache_get or
 * qc_settings_build_cached); the borrower must not use it afterwards. A
 * NULL model, or one the cache did not lend, is ignored. */
QC_API void qc_model_cache_release(qc_model_cache *cache, const qc_model *model);

/* qc_settings_build with the model borrowed from `cache`: the same checks,
 * messages and request, but *model is an instance of the cache for the
 * settings' model setting, reused from earlier builds of the same setting
 * when one is idle. Give it back with qc_model_cache_release when the
 * design is done (the request points at it). On failure *model is NULL
 * and nothing is lent; a NULL cache is QC_EINVAL. */
QC_API qc_status qc_settings_build_cached(qc_settings *s, qc_model_cache *cache,
                                          const qc_model **model, qc_design_request *req);

/* The JSON object describing one design (model, parameters, request and
 * every result field), as `quantcap design --json` prints it and as a
 * sweep stores each point. *text is malloc'd (free it); numbers carry 17
 * significant digits; non-finite numbers are written as null. QC_ENOMEM;
 * on failure *text is NULL. */
QC_API qc_status qc_design_report_json(const qc_design_request *req,
                                const qc_design_result *res, char **text);

/* A scenario: the receiver, the alphabets to compare, the sweep axes and
 * the plots, read from an INI file. Every design key (qc_setting_keys()
 * and the model parameters) is a scenario key with the same meaning. */
typedef struct qc_scenario qc_scenario;

#define QC_SCENARIO_MAX_POINTS 1000000 /* largest grid accepted          */
#define QC_SCENARIO_MAX_BYTES (1 << 20) /* largest scenario file         */

/* Parse a scenario held in memory (len bytes, need not end in NUL).
 * `name` is used in messages ("name:LINE: ..."). Unknown sections or
 * keys (with the closest valid name), bad values and missing keys are
 * QC_EINVAL or QC_EFORMAT with the line named; QC_ENOMEM. On failure
 * *out is NULL. */
QC_API qc_status qc_scenario_parse(const char *text, size_t len, const char *name,
                            qc_scenario **out);

/* Read and parse a file; an unreadable path or a directory is QC_EIO.
 * On failure *out is NULL. */
QC_API qc_status qc_scenario_read(const char *path, qc_scenario **out);
/* Release a scenario; NULL does nothing. */
QC_API void qc_scenario_free(qc_scenario *sc);

/* Override one key as from the command line: "KEY=VALUE" sets a design
 * key everywhere (the sweep axis of that name takes the value's values;
 * otherwise the base setting, which then also wins over the alphabets);
 * "SECTION.KEY=VALUE" sets a key of one section ("plots.format=png",
 * "alphabet.pam4.levels=-3,-1,1,3", "sweep.bits=1 to 4 step 1"). QC_EINVAL
 * or QC_EFORMAT naming the key or value at fault, QC_ENOMEM. On failure
 * the scenario is unchanged. */
QC_API qc_status qc_scenario_override(qc_scenario *sc, const char *assignment);

/* Check that every grid point builds a model and a design request; the
 * message names the point (alphabet and axis values) and the status is
 * the first failing point's. Reads only. */
QC_API qc_status qc_scenario_check(const qc_scenario *sc);

/* The grid: alphabets × axis 1 × axis 2 × ... (the last axis varies
 * fastest). Borrowed strings, valid while the scenario lives and is not
 * overridden. Never fail: an index out of range gives NULL (names,
 * values) or 0 (sizes). */
QC_API size_t qc_scenario_npoints(const qc_scenario *sc);
QC_API size_t qc_scenario_nalphabets(const qc_scenario *sc);
QC_API const char *qc_scenario_alphabet(const qc_scenario *sc, size_t i);
QC_API size_t qc_scenario_naxes(const qc_scenario *sc);
QC_API const char *qc_scenario_axis_key(const qc_scenario *sc, size_t i);
QC_API size_t qc_scenario_axis_size(const qc_scenario *sc, size_t i);
QC_API const char *qc_scenario_axis_value(const qc_scenario *sc, size_t i, size_t j);

/* The settings of the grid point of index `index`, from 0 (messages and
 * result files number it index + 1); a new object: free it. QC_EINVAL
 * when index is outside the grid, QC_ENOMEM; on failure *out is NULL. */
QC_API qc_status qc_scenario_point_settings(const qc_scenario *sc, size_t index,
                                     qc_settings **out);

/* 16 hex digits identifying what the points compute (alphabets, base
 * settings, axes); plots and titles do not enter it. Borrowed; never
 * fails. */
QC_API const char *qc_scenario_hash(const qc_scenario *sc);

/* Handing a sweep's points to other processes. The library has no MPI:
 * a program that runs a sweep over several processes (the command line
 * under mpirun) computes points where it likes with a qc_sweep_worker and
 * gives each finished point back to the one qc_sweep_run of the writing
 * process through `deliver`, which checkpoints it at once. */

/* Give back point `index` (from 0): `record` is the NUL-terminated text
 * qc_sweep_worker_run made for it. Thread-safe: callable from any thread
 * while the executor runs. QC_OK: go on. Anything else: the sweep stops
 * (a scenario error at that point, a checkpoint write failure, a record
 * that is not point `index`'s); hand out no more points, but records of
 * points still running may be given back (they are kept, as in a local
 * run) before the executor returns. */
typedef qc_status (*qc_sweep_deliver_fn)(void *ctx, size_t index, const char *record);

/* Compute the points todo[0..ntodo) (grid order) and give each back with
 * deliver(ctx, ...), in any order and from any threads, then return.
 * setting[p] numbers grid point p's model setting (points with equal
 * numbers share a model: a qc_sweep_schedule hands them to one worker
 * while it can). QC_OK when every point was given back or deliver asked
 * to stop; any other status is the executor's own failure, described in
 * msg (cap bytes), and stops the sweep. */
typedef qc_status (*qc_sweep_executor_fn)(void *user, const size_t *todo, size_t ntodo,
                                          const size_t *setting, qc_sweep_deliver_fn deliver,
                                          void *ctx, char *msg, size_t cap);

/* The order in which workers (threads, or the threads of other processes)
 * take a sweep's points: grouped by model setting, each worker keeping to
 * one setting while its points last, a worker without one taking a
 * setting no other worker is on, and, when every setting left has a
 * worker, joining the one with the most points left — with `timed`, only
 * when those points outweigh building another instance of its model, as
 * timed on the points handed out so far (each worker must then ask for
 * its next point when it has finished the last one). Thread-safe. */
typedef struct qc_sweep_schedule qc_sweep_schedule;

/* A schedule of the points todo[0 .. ntodo) for `workers` workers;
 * setting[p] as the executor's. QC_ENOMEM; on failure *out is NULL. */
QC_API qc_status qc_sweep_schedule_alloc(const size_t *todo, size_t ntodo,
                                         const size_t *setting, unsigned workers, int timed,
                                         qc_sweep_schedule **out);

/* The next point for worker `worker` (0 .. workers − 1), or SIZE_MAX when
 * every point has been handed out (or none is worth joining). */
QC_API size_t qc_sweep_schedule_next(qc_sweep_schedule *s, unsigned worker);

/* Release a schedule; NULL does nothing. */
QC_API void qc_sweep_schedule_free(qc_sweep_schedule *s);

/* Computes single grid points exactly as qc_sweep_run does, for an
 * executor: the models are shared by every point it runs (one instance
 * per distinct model setting). */
typedef struct qc_sweep_worker qc_sweep_worker;

/* A worker for the scenario (which must outlive it). QC_ENOMEM; on
 * failure *out is NULL. */
QC_API qc_status qc_sweep_worker_alloc(const qc_scenario *sc, qc_sweep_worker **out);

/* Point `index` (from 0) as its checkpoint record: *record is malloc'd
 * text (free it), one JSON object without a newline, whatever the
 * design's outcome (a failed design is a record with its status and
 * message). Thread-safe: several threads may run points of one worker.
 * QC_EINVAL for an index outside the grid, QC_ENOMEM; on failure *record
 * is NULL. */
QC_API qc_status qc_sweep_worker_run(qc_sweep_worker *w, size_t index, char **record);

/* Release a worker; NULL does nothing. */
QC_API void qc_sweep_worker_free(qc_sweep_worker *w);

typedef struct {
    const char *out_dir; /* created if missing                              */
    unsigned jobs;       /* parallel threads; 0: one per core               */
    int resume;          /* continue the checkpoint in out_dir              */
    int plots;           /* draw the scenario's plots (default 1)           */
    /* Called after each finished point, from one thread at a time (may be
     * NULL): points done so far (resumed ones included) and in all. */
    void (*progress)(void *user, size_t done, size_t total);
    void *user;
    /* Who computes the points still to do: NULL (the default) computes
     * them here with `jobs` threads; otherwise the executor, called once
     * with execute_user (see qc_sweep_executor_fn). Checkpoint, tables
     * and plots are written by this process either way, and are the same
     * bytes. */
    qc_sweep_executor_fn execute;
    void *execute_user;
} qc_sweep_options;

/* Defaults: output in the current folder, one job per core, no resume,
 * plots on, no progress. Overwrites every field; never fails. */
QC_API void qc_sweep_options_default(qc_sweep_options *opt);

typedef struct {
    size_t points;    /* grid size                                        */
    size_t resumed;   /* finished points taken from the checkpoint        */
    size_t computed;  /* points computed in this run                      */
    size_t failed;    /* points whose design failed (recorded, not fatal) */
    char *first_failure; /* owned: "point 12 (...): message", or NULL       */
    int plots_skipped; /* plots asked for but PLplot is not built in       */
    size_t nfiles;
    char **files;      /* paths of the files written (owned)               */
    size_t nnotes;
    char **notes;      /* figures left out, and why (owned)                */
    size_t nremoved;
    char **removed;    /* stale files of an earlier run removed (owned)    */
} qc_sweep_summary;

/* Run every point of the grid (qc_scenario_check first: an input error in
 * the scenario is returned before any work), each exactly as `quantcap
 * design` would with the point's settings, in parallel. Finished points
 * go to out_dir/checkpoint.jsonl as they complete; then results.csv,
 * results.json and the plots are written under temporary names and
 * renamed, and out_dir/manifest.txt lists them: files an earlier sweep
 * listed there that this one does not write again are removed. A point whose design fails (infeasible, no convergence,
 * numerical) is recorded with its message; a design that rejects its
 * request (QC_EINVAL, QC_EFORMAT: the scenario asks for something
 * invalid) stops the sweep with that status, naming the point, and no
 * table is written (finished points stay in the checkpoint). QC_EIO names
 * the file on write failures. The summary is filled as far as the sweep
 * got, on failure too: clear it with qc_sweep_summary_clear in every
 * case. */
QC_API qc_status qc_sweep_run(const qc_scenario *sc, const qc_sweep_options *opt,
                       qc_sweep_summary *summary);
/* Release what a summary owns and zero it; NULL does nothing. */
QC_API void qc_sweep_summary_clear(qc_sweep_summary *summary);

/* 1 if this build draws plots (PLplot found at build time), else 0. Never
 * fails. */
QC_API int qc_plots_available(void);

#ifdef __cplusplus
}
#endif

#endif /* QUANTCAP_STUDY_H */
