/* sweep.c — run a scenario's grid of designs in parallel (OpenMP across
 * grid points). Each point is exactly what `quantcap design` does with the
 * point's settings: qc_settings_build, qc_design, and the same JSON report.
 * The points share their models (model_cache.c): an instance per model
 * setting and thread at most, lent to one design at a time, so that an
 * APD model's lattices or a table file are not made again at every point;
 * each thread keeps to the points of one setting while it can
 * (sweep_schedule.c), so that two threads seldom build the same model.
 * Finished points are appended to a checkpoint as they complete, so that a
 * killed sweep resumes where it stopped; the tables and plots are written
 * at the end from the records, in grid order, so that the number of
 * threads never changes a byte of them; once every point is in, the
 * checkpoint itself is rewritten in grid order. Instead of its own
 * threads, the sweep can take its points from an executor that computes
 * them elsewhere (other processes: the command line's MPI driver) and
 * gives each back as the text of its record (deliver), checkpointed at
 * once like a point computed here. */
#include "study/sweep.h"

#include "core/internal.h"
#include "study/scenario.h"
#include "study/checkpoint.h"
#include "study/file_list.h"
#include "study/manifest.h"
#include "study/plot_sweep.h"

#include <errno.h>
#include <pthread.h>
#include <stdint.h>
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

/* What the threads (or an executor's deliveries) share while points run. */
typedef struct {
    const qc_scenario *sc;
    const qc_sweep_options *opt;
    qc_sweep_summary *sum;
    qc_checkpoint *cp;
    json_t **records;
    size_t n, done_count;
    int failed;          /* first failure (qc_status); QC_OK while none   */
    char msg[1024];      /* its message                                   */
    size_t fail_point;   /* the failure reported: lowest point that failed */
    pthread_mutex_t lock; /* serializes accept_point                     */
} sweep_state;

/* Note a failure at point i (caller holds the lock or is alone). Points
 * already running when the first failure stops the sweep still finish; of
 * those that failed, the lowest point is reported, so the message does not
 * depend on which thread or process got there first. */
static void set_failure(sweep_state *s, size_t i, qc_status st)
{
    int failed;
    OMP(omp atomic read)
    failed = s->failed;
    if (failed == QC_OK || i < s->fail_point) {
        s->fail_point = i;
        snprintf(s->msg, sizeof s->msg, "%s", qc_last_error());
        OMP(omp atomic write)
        s->failed = (int)st;
    }
}

static qc_status status_of_name(const char *name)
{
    for (int st = QC_OK; st < QC_STATUS_COUNT; st++)
        if (name && strcmp(name, qc_sweep_status_name((qc_status)st)) == 0)
            return (qc_status)st;
    return QC_ENUMERIC;
}

/* A finished point (caller holds the lock): checkpointed and kept, or,
 * when its design rejected the request, the sweep's failure naming the
 * point. Takes the reference to rec (NULL: out of memory). */
static void accept_point(sweep_state *s, size_t i, json_t *rec)
{
    qc_status pst = rec ? status_of_name(json_string_value(json_object_get(rec, "status")))
                        : QC_ENOMEM;
    qc_status wst;
    if (!rec) {
        wst = qc_fail(QC_ENOMEM, "out of memory at point %zu", i + 1);
    } else if (s->records[i]) {
        wst = qc_fail(QC_EINVAL, "point %zu was computed twice", i + 1);
    } else if (scenario_error(pst)) {
        char point[512];
        sc_describe_point(s->sc, i, point, sizeof point);
        const char *err = json_string_value(json_object_get(rec, "error"));
        wst = qc_fail(pst, "%.100s: %.300s: %.600s", s->sc->file, point, err ? err : "");
    } else {
        wst = qc_checkpoint_append(s->cp, rec);
    }
    if (wst != QC_OK) {
        set_failure(s, i, wst);
        json_decref(rec);
        return;
    }
    s->records[i] = rec;
    s->done_count++;
    s->sum->computed++;
    if (s->opt->progress)
        s->opt->progress(s->opt->user, s->done_count, s->n);
}

/* qc_sweep_deliver_fn: a point computed elsewhere, as the text of its
 * record (sweep_worker.c). */
static qc_status deliver(void *ctx, size_t index, const char *text)
{
    sweep_state *s = ctx;
    json_t *rec = NULL;
    size_t point = 0;
    pthread_mutex_lock(&s->lock);
    if (index >= s->n) {
        set_failure(s, s->n, qc_fail(QC_EINVAL, "point %zu given back is outside the grid of "
                                                "%zu points", index + 1, s->n));
    } else if (!text || qc_checkpoint_parse_line(text, strlen(text), s->n, &rec, &point) != QC_OK ||
               point != index) {
        json_decref(rec);
        set_failure(s, index, qc_fail(QC_EFORMAT, "the record given back for point %zu is "
                                                  "not that point's record", index + 1));
    } else {
        accept_point(s, index, rec);
    }
    qc_status st = (qc_status)s->failed;
    pthread_mutex_unlock(&s->lock);
    return st;
}

/* The points to do, computed in this process with `threads` threads,
 * each taking the points of one model setting while it can
 * (sweep_schedule.c); setting[p]: point p's setting. */
static void run_here(sweep_state *s, const size_t *todo, size_t ntodo, const size_t *setting,
                     qc_model_cache *cache, unsigned threads)
{
    qc_sweep_schedule *plan;
    if (qc_sweep_schedule_alloc(todo, ntodo, setting, threads, 1, &plan) != QC_OK) {
        set_failure(s, s->n, QC_ENOMEM);
        return;
    }
    OMP(omp parallel num_threads(threads))
    {
#ifdef _OPENMP
        const unsigned worker = (unsigned)omp_get_thread_num();
#else
        const unsigned worker = 0;
#endif
        for (size_t i; (i = qc_sweep_schedule_next(plan, worker)) != SIZE_MAX;) {
            int stop;
            OMP(omp atomic read)
            stop = s->failed;
            if (stop != QC_OK)
                break;
            qc_status pst;
            json_t *rec = qc_sweep_point_record(s->sc, cache, i, &pst);
            pthread_mutex_lock(&s->lock);
            accept_point(s, i, rec);
            pthread_mutex_unlock(&s->lock);
        }
    }
    qc_sweep_schedule_free(plan);
}

qc_status qc_sweep_run(const qc_scenario *sc, const qc_sweep_options *opt,
                       qc_sweep_summary *sum)
{
    memset(sum, 0, sizeof *sum);
    qc_gsl_init();
    qc_model_cache *cache = NULL; /* the points' models, shared by the threads */
    const size_t n = sc->npoints;
    size_t *setting = qc_malloc_array(n ? n : 1, sizeof *setting); /* each point's model */
    qc_status st = setting ? qc_model_cache_alloc(&cache)
                           : qc_fail(QC_ENOMEM, "out of memory for %zu points", n);
    if (st == QC_OK)
        st = sc_check_points(sc, cache, setting);
    if (st != QC_OK) {
        qc_model_cache_free(cache);
        free(setting);
        return st;
    }
    sum->points = n;
    const char *dir = opt->out_dir ? opt->out_dir : ".";
    struct stat dir_sb;
    int dir_existed = stat(dir, &dir_sb) == 0;
    char cp_path[4200], path[4200];
    int created = 0; /* this run wrote a fresh checkpoint */
    if ((st = make_dir(dir)) != QC_OK ||
        (st = join_path(dir, QC_CHECKPOINT_NAME, cp_path, sizeof cp_path)) != QC_OK) {
        qc_model_cache_free(cache);
        free(setting);
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

    sweep_state ss = {.sc = sc, .opt = opt, .sum = sum, .cp = &cp, .records = records,
                      .n = n, .done_count = done_count, .failed = QC_OK, .fail_point = n};
    if (pthread_mutex_init(&ss.lock, NULL) != 0) {
        st = qc_fail(QC_ENOMEM, "cannot make the sweep's lock");
        goto done;
    }
    if (opt->execute) {
        char msg[1024] = "";
        qc_status est = opt->execute(opt->execute_user, todo, ntodo, setting, deliver, &ss,
                                     msg, sizeof msg);
        if (est != QC_OK && ss.failed == QC_OK)
            set_failure(&ss, n, qc_fail(est, "%s", msg[0] ? msg : qc_strerror(est)));
        for (size_t t = 0; t < ntodo && ss.failed == QC_OK; t++)
            if (!records[todo[t]])
                set_failure(&ss, todo[t], qc_fail(QC_EIO, "point %zu was never given back "
                                                         "by the processes computing the sweep",
                                                  todo[t] + 1));
    } else {
        run_here(&ss, todo, ntodo, setting, cache, thread_count(opt->jobs));
    }
    pthread_mutex_destroy(&ss.lock);
    if (ss.failed != QC_OK) {
        st = qc_fail((qc_status)ss.failed, "%s", ss.msg);
        goto done;
    }
    qc_checkpoint_close(&cp);
    /* every point is done: the checkpoint in grid order, the same bytes
     * whatever the threads, processes or resumes that made it */
    if ((st = qc_checkpoint_rewrite(cp_path, sc->hash, n, records)) != QC_OK)
        goto done;

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
                                    sc->plots.required_vs_x || sc->plots.photon_efficiency ||
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
    free(setting);
    qc_model_cache_free(cache);
    return st;
}
