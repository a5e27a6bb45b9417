/* sweep.c — run a scenario's grid of designs in parallel (OpenMP across
 * grid points). Each point is exactly what `quantcap design` does with the
 * point's settings: qc_settings_build, qc_design, and the same JSON report.
 * The points share their models: one instance per distinct model setting
 * (model_cache.c), built once and read by every thread, so that an APD
 * model's lattices or a table file are not made again at every point.
 * Finished points are appended to a checkpoint as they complete, so that a
 * killed sweep resumes where it stopped; the tables and plots are written
 * at the end from the records, in grid order, so that the number of
 * threads never changes a byte of them. */
#include "study/sweep.h"

#include "core/internal.h"
#include "study/report.h"
#include "study/scenario.h"
#include "study/checkpoint.h"
#include "core/parse.h"
#include "study/file_list.h"
#include "study/manifest.h"
#include "study/plot_sweep.h"

#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>
#ifdef _OPENMP
#include <omp.h>
#define OMP(directive) _Pragma(#directive)
#else
#define OMP(directive) /* built without OpenMP: one thread */
#endif

void qc_sweep_options_default(qc_sweep_options *opt)
{
    memset(opt, 0, sizeof *opt);
    opt->out_dir = ".";
    opt->plots = 1;
}

void qc_sweep_summary_clear(qc_sweep_summary *s)
{
    if (!s)
        return;
    for (size_t i = 0; i < s->nfiles; i++)
        free(s->files[i]);
    free(s->files);
    for (size_t i = 0; i < s->nnotes; i++)
        free(s->notes[i]);
    free(s->notes);
    for (size_t i = 0; i < s->nremoved; i++)
        free(s->removed[i]);
    free(s->removed);
    free(s->first_failure);
    memset(s, 0, sizeof *s);
}

const char *qc_sweep_status_name(qc_status st)
{
    switch (st) {
    case QC_OK: return "ok";
    case QC_EINVAL: return "invalid";
    case QC_EFORMAT: return "format";
    case QC_EIO: return "io";
    case QC_EINFEASIBLE: return "infeasible";
    case QC_ENOMEM: return "no-memory";
    case QC_ENOCONV: return "no-convergence";
    case QC_ENUMERIC: return "numeric";
    case QC_STATUS_COUNT: break;
    }
    return "unknown";
}

/* mkdir -p */
static qc_status make_dir(const char *dir)
{
    char path[4096];
    if (snprintf(path, sizeof path, "%s", dir) >= (int)sizeof path)
        return qc_fail(QC_EINVAL, "output folder name too long");
    for (char *p = path + 1;; p++) {
        int last = *p == '\0';
        if (*p == '/' || last) {
            *p = '\0';
            struct stat sb;
            if (stat(path, &sb) != 0) {
                if (mkdir(path, 0755) != 0 && errno != EEXIST)
                    return qc_fail(QC_EIO, "%s: cannot create the folder: %s", path,
                                   strerror(errno));
            } else if (!S_ISDIR(sb.st_mode)) {
                return qc_fail(QC_EIO, "%s: exists and is not a folder", path);
            }
            if (last)
                break;
            *p = '/';
        }
    }
    return QC_OK;
}

/* [require]: the value the point's settings need to meet the target, as
 * `quantcap require` finds it, added to the point's report; a target the
 * point cannot meet is recorded in `require_error`, not a failure of the
 * point. */
static void add_require(const qc_scenario *sc, const qc_settings *s, json_t *result)
{
    const sc_require *r = &sc->require;
    const char *key = r->solve_for;
    double lo = r->lo, hi = r->hi, op = NAN;
    qc_require_result res;
    memset(&res, 0, sizeof res);
    res.required = res.unquantized_required = res.penalty_db = NAN;
    qc_status st = r->range_given ? QC_OK : qc_settings_require_range(s, key, &lo, &hi);
    size_t kl = strlen(key);
    const char *unit = !qc_setting_in_db(key)                        ? NULL
                       : kl > 4 && strcmp(key + kl - 4, "-dbm") == 0 ? " dBm"
                                                                     : " dB";
    if (st == QC_OK)
        st = qc_settings_require(s, key, &r->target, lo, hi, unit, &res);
    const char *v = qc_settings_get(s, key);
    if (v && qc_parse_double(v, &op) != QC_OK)
        op = NAN;
    json_t *t = json_object();
    json_object_set_new(t, "kind", json_string(qc_target_name(r->target.kind)));
    json_object_set_new(t, "value", qc_report_real(r->target.value));
    json_object_set_new(t, "fec", r->target.from_fec ? json_string(r->target.fec.name)
                                                     : json_null());
    json_object_set_new(result, "solve_for", json_string(key));
    json_object_set_new(result, "target", t);
    json_object_set_new(result, "required", qc_report_real(res.required));
    json_object_set_new(result, "unquantized_required", qc_report_real(res.unquantized_required));
    json_object_set_new(result, "penalty_db", qc_report_real(res.penalty_db));
    json_object_set_new(result, "margin_db",
                        qc_report_real(st == QC_OK ? qc_require_margin_db(
                                                         &res, !qc_setting_in_db(key), op)
                                                   : NAN));
    json_object_set_new(result, "require_error",
                        st == QC_OK ? json_null() : json_string(qc_last_error()));
}

/* A point with a FEC code and no [require]: the penalty at the code's
 * threshold, as `quantcap design --fec` reports it. */
static qc_status add_fec_penalty(const qc_settings *s, const qc_fec *fec, json_t *result)
{
    qc_fec_penalty p;
    qc_status st = qc_settings_fec_penalty(s, fec, &p);
    if (st != QC_OK)
        return st;
    json_object_set_new(result, "penalty_solve_for", p.key ? json_string(p.key) : json_null());
    json_object_set_new(result, "penalty_db", qc_report_real(p.db));
    json_object_set_new(result, "penalty_note",
                        isfinite(p.db) ? json_null() : json_string(p.note));
    return QC_OK;
}

/* One grid point, as `quantcap design --json` computes it. The record is
 * NULL only when memory runs out; *status receives the design's status
 * (its message stays in this thread's qc_last_error). */
static json_t *run_point(const qc_scenario *sc, qc_model_cache *cache, size_t index,
                         qc_status *status)
{
    qc_settings *s = NULL;
    const qc_model *m = NULL;
    qc_design_request req;
    qc_design_result res;
    memset(&res, 0, sizeof res);
    json_t *result = NULL;
    qc_status st = qc_scenario_point_settings(sc, index, &s);
    if (st == QC_OK)
        st = qc_settings_build_cached(s, cache, &m, &req);
    if (st == QC_OK)
        st = qc_design(&req, &res);
    if (st == QC_OK && !(result = qc_report_design(&req, &res)))
        st = qc_fail(QC_ENOMEM, "out of memory building the report");
    if (st == QC_OK && sc->require.on)
        add_require(sc, s, result);
    else if (st == QC_OK && res.fec_given)
        st = add_fec_penalty(s, &res.fec, result);
    json_t *rec = json_object();
    if (rec) {
        json_object_set_new(rec, "point", json_integer((json_int_t)index + 1)); /* from 1 */
        json_object_set_new(rec, "status", json_string(qc_sweep_status_name(st)));
        json_object_set_new(rec, "error", st == QC_OK ? json_null()
                                                       : json_string(qc_last_error()[0]
                                                                         ? qc_last_error()
                                                                         : qc_strerror(st)));
        json_object_set_new(rec, "result", result ? result : json_null());
    } else {
        json_decref(result);
    }
    qc_design_result_clear(&res);
    qc_model_cache_release(cache, m);
    qc_settings_free(s);
    *status = st;
    return rec;
}

/* A design that rejects its request (QC_EINVAL, QC_EFORMAT) means the
 * scenario asks for something invalid: that stops the sweep. Other
 * failures (infeasible, no convergence, numerical) are outcomes of the
 * point and are recorded. */
static int scenario_error(qc_status st) { return st == QC_EINVAL || st == QC_EFORMAT; }

static qc_status join_path(const char *dir, const char *name, char *out, size_t cap)
{
    if (snprintf(out, cap, "%s/%s", dir, name) >= (int)cap)
        return qc_fail(QC_EINVAL, "output path too long: %s/%s", dir, name);
    return QC_OK;
}

static unsigned thread_count(unsigned jobs)
{
#ifdef _OPENMP
    return jobs ? jobs : (unsigned)omp_get_num_procs();
#else
    (void)jobs;
    return 1;
#endif
}

qc_status qc_sweep_run(const qc_scenario *sc, const qc_sweep_options *opt,
                       qc_sweep_summary *sum)
{
    memset(sum, 0, sizeof *sum);
    qc_gsl_init();
    qc_model_cache *cache = NULL; /* the points' models, shared by the threads */
    qc_status st = qc_model_cache_alloc(&cache);
    if (st == QC_OK)
        st = sc_check_points(sc, cache);
    if (st != QC_OK) {
        qc_model_cache_free(cache);
        return st;
    }
    const size_t n = sc->npoints;
    sum->points = n;
    const char *dir = opt->out_dir ? opt->out_dir : ".";
    struct stat dir_sb;
    int dir_existed = stat(dir, &dir_sb) == 0;
    char cp_path[4200], path[4200];
    int created = 0; /* this run wrote a fresh checkpoint */
    if ((st = make_dir(dir)) != QC_OK ||
        (st = join_path(dir, QC_CHECKPOINT_NAME, cp_path, sizeof cp_path)) != QC_OK) {
        qc_model_cache_free(cache);
        return st;
    }

    json_t **records = calloc(n, sizeof *records);
    size_t *todo = malloc(n * sizeof *todo);
    qc_checkpoint cp = {.fd = -1};
    if (!records || !todo) {
        st = qc_fail(QC_ENOMEM, "out of memory for %zu points", n);
        goto done;
    }
    json_t *seed = json_object(); /* set jansson's hash seed before threads start */
    json_decref(seed);
    if (opt->resume)
        st = qc_checkpoint_resume(&cp, cp_path, sc->hash, n, records, &sum->resumed);
    else if ((st = qc_checkpoint_create(&cp, cp_path, sc->hash, n)) == QC_OK)
        created = 1;
    if (st != QC_OK)
        goto done;

    size_t ntodo = 0, done_count = sum->resumed;
    for (size_t i = 0; i < n; i++)
        if (!records[i])
            todo[ntodo++] = i;
    if (opt->progress)
        opt->progress(opt->user, done_count, n);

    int shared_st = QC_OK; /* first failure to write the checkpoint */
    char shared_msg[1024] = "";
    size_t shared_point = n; /* the failure reported: lowest point that failed */
    unsigned threads = thread_count(opt->jobs);
    (void)threads;
    OMP(omp parallel for schedule(dynamic, 1) num_threads(threads))
    for (size_t t = 0; t < ntodo; t++) {
        int stop;
        OMP(omp atomic read)
        stop = shared_st;
        if (stop != QC_OK)
            continue;
        size_t i = todo[t];
        qc_status pst;
        json_t *rec = run_point(sc, cache, i, &pst);
        char point_msg[1024] = "";
        if (scenario_error(pst)) {
            char point[512];
            sc_describe_point(sc, i, point, sizeof point);
            snprintf(point_msg, sizeof point_msg, "%.100s: %.300s: %.600s", sc->file, point,
                     qc_last_error());
        }
        OMP(omp critical(qc_sweep_checkpoint))
        {
            qc_status wst = !rec                  ? qc_fail(QC_ENOMEM, "out of memory at point %zu", i + 1)
                            : scenario_error(pst) ? qc_fail(pst, "%s", point_msg)
                                                  : qc_checkpoint_append(&cp, rec);
            /* Points already running when the first failure stops the
             * sweep still finish; of those that failed, the lowest point is
             * reported, so the message does not depend on which thread
             * got there first. */
            if (wst != QC_OK && (shared_st == QC_OK || i < shared_point)) {
                shared_point = i;
                snprintf(shared_msg, sizeof shared_msg, "%s", qc_last_error());
                OMP(omp atomic write)
                shared_st = (int)wst;
            }
            if (wst == QC_OK) {
                records[i] = rec;
                rec = NULL;
                done_count++;
                sum->computed++;
                if (opt->progress)
                    opt->progress(opt->user, done_count, n);
            }
        }
        json_decref(rec);
    }
    if (shared_st != QC_OK) {
        st = qc_fail((qc_status)shared_st, "%s", shared_msg);
        goto done;
    }
    qc_checkpoint_close(&cp);

    for (size_t i = 0; i < n; i++) {
        const char *status = json_string_value(json_object_get(records[i], "status"));
        if (status && strcmp(status, "ok") != 0) {
            if (sum->failed++ == 0) {
                char point[512];
                sc_describe_point(sc, i, point, sizeof point);
                const char *err = json_string_value(json_object_get(records[i], "error"));
                size_t len = strlen(point) + (err ? strlen(err) : 0) + 3;
                if (!(sum->first_failure = malloc(len))) {
                    st = qc_fail(QC_ENOMEM, "out of memory");
                    goto done;
                }
                snprintf(sum->first_failure, len, "%s: %s", point, err ? err : "");
            }
        }
    }
    if ((st = join_path(dir, "results.csv", path, sizeof path)) != QC_OK ||
        (st = qc_results_write_csv(sc, records, path)) != QC_OK ||
        (st = qc_file_list_add(&sum->files, &sum->nfiles, path)) != QC_OK ||
        (st = join_path(dir, "results.json", path, sizeof path)) != QC_OK ||
        (st = qc_results_write_json(sc, records, path)) != QC_OK ||
        (st = qc_file_list_add(&sum->files, &sum->nfiles, path)) != QC_OK)
        goto done;
    int want_plots = opt->plots && (sc->plots.rate_vs_x || sc->plots.rate_vs_bits ||
                                    sc->plots.ber_vs_x || sc->plots.required_vs_bits ||
                                    sc->plots.density);
    if (want_plots && !qc_plots_available())
        sum->plots_skipped = 1;
    else if (want_plots)
        st = qc_plot_sweep(sc, records, dir, &sum->files, &sum->nfiles, &sum->notes,
                           &sum->nnotes);
    /* the manifest: a finished run that drew its plots prunes what it no
     * longer writes; a run stopped while plotting, or one that draws no
     * plots (--no-plots, no PLplot), keeps the old list beside its own */
    {
        int drew = want_plots && !sum->plots_skipped;
        qc_status mst = qc_manifest_update(dir, sum->files, sum->nfiles, st == QC_OK && drew,
                                           &sum->removed, &sum->nremoved);
        if (st == QC_OK)
            st = mst;
    }
done:
    qc_checkpoint_close(&cp);
    /* A fresh sweep that stops before any point is recorded leaves nothing
     * behind: its checkpoint holds only the header, and the folder is
     * removed when this run made it (and it is empty). */
    if (st != QC_OK && created && sum->computed == 0) {
        unlink(cp_path);
        if (!dir_existed)
            rmdir(dir);
    }
    if (records)
        for (size_t i = 0; i < n; i++)
            json_decref(records[i]);
    free(records);
    free(todo);
    qc_model_cache_free(cache);
    return st;
}
