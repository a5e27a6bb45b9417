/* sweep_schedule.c — which point a sweep's thread computes next.
 *
 * A model instance is used by one design at a time (model_cache.c), so
 * two threads on points of the same model setting at once each build an
 * instance — an APD model's lattices, a table read from its file — and
 * each computes the unquantized reference the two points share
 * (unquantized_memo.c). Handing out the points one at a time in grid
 * order does exactly that wherever neighbouring points share a model.
 * Here the points are grouped by model setting, in the order in which the
 * settings first appear in the grid, and
 *
 *   - a thread keeps taking the points of its group while any are left;
 *   - a thread without one takes the first group no other thread is on;
 *   - when every group left has a thread, it joins the one with the most
 *     points left (self-scheduling, one point at a time, as OpenMP's
 *     dynamic schedule does), unless it would have to build another
 *     instance of that group's model and the build costs more than it
 *     saves: with n threads on L points of t seconds each, a thread that
 *     first spends B seconds on a build ends the group sooner only when
 *     L·t > n·B (an APD model's lattices take most of a sweep of a few
 *     resolutions, and a second build of them near its end takes as long
 *     as the points it would share). B and t are estimated from the
 *     points done so far (a thread's first point of a group, which built
 *     its instance, against its later ones); until both are known a
 *     thread joins. The rule needs each thread to ask when it has
 *     finished its last point, so that the time between two requests is
 *     a point's; an untimed schedule (the threads of other processes,
 *     which ask ahead) always joins.
 *
 * One thread takes the groups one after the other. Which thread computes
 * a point never changes its result: the sweep writes its tables from the
 * records in grid order. */
#include "core/internal.h"
#include "quantcap/study.h"

#include <pthread.h>
#include <stdint.h>
#include <stdlib.h>
#include <time.h>

typedef struct {
    size_t start, count; /* its points: order[start .. start + count) */
    size_t taken;        /* handed out so far                          */
    unsigned threads;    /* threads on it now                          */
    unsigned ever;       /* threads that have worked on it: instances   */
} group;

typedef struct {
    size_t group;   /* its group, SIZE_MAX for none                  */
    double started; /* monotonic seconds its point started, or < 0   */
    int built;      /* that point builds a model instance            */
} worker_state;

struct qc_sweep_schedule {
    pthread_mutex_t lock;
    size_t *order; /* the points, group by group, grid order within each */
    group *groups;
    size_t ngroups;
    size_t first_open; /* groups before it are all handed out */
    worker_state *current;
    unsigned workers;
    int timed; /* the join rule on; off: a worker always joins */
    /* seconds of the points that built an instance, and of the others */
    double build_s, point_s;
    size_t build_n, point_n;
};

static double now_seconds(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

static int compare_size(const void *pa, const void *pb)
{
    const size_t a = *(const size_t *)pa, b = *(const size_t *)pb;
    return (a > b) - (a < b);
}

/* The group of each point (by its setting, numbered in order of first
 * appearance) into gid[0 .. ntodo); returns the number of groups, or
 * SIZE_MAX out of memory. */
static size_t number_groups(const size_t *todo, size_t ntodo, const size_t *setting, size_t *gid)
{
    /* the distinct settings, sorted, each with its first appearance */
    size_t *sorted = qc_malloc_array(ntodo, sizeof *sorted);
    size_t *first = qc_malloc_array(ntodo, sizeof *first);
    if (!sorted || !first) {
        free(sorted);
        free(first);
        return SIZE_MAX;
    }
    for (size_t t = 0; t < ntodo; t++)
        sorted[t] = setting[todo[t]];
    qsort(sorted, ntodo, sizeof *sorted, compare_size);
    size_t nd = 0;
    for (size_t t = 0; t < ntodo; t++)
        if (nd == 0 || sorted[t] != sorted[nd - 1])
            sorted[nd++] = sorted[t];
    for (size_t k = 0; k < nd; k++)
        first[k] = SIZE_MAX;
    size_t ngroups = 0;
    for (size_t t = 0; t < ntodo; t++) {
        const size_t key = setting[todo[t]];
        size_t lo = 0, hi = nd; /* bisection: sorted[lo] == key */
        while (hi - lo > 1) {
            const size_t mid = lo + (hi - lo) / 2;
            if (sorted[mid] <= key)
                lo = mid;
            else
                hi = mid;
        }
        if (first[lo] == SIZE_MAX)
            first[lo] = ngroups++;
        gid[t] = first[lo];
    }
    free(sorted);
    free(first);
    return ngroups;
}

qc_status qc_sweep_schedule_alloc(const size_t *todo, size_t ntodo, const size_t *setting,
                                  unsigned workers, int timed, qc_sweep_schedule **out)
{
    *out = NULL;
    qc_sweep_schedule *s = calloc(1, sizeof *s);
    size_t *gid = qc_malloc_array(ntodo ? ntodo : 1, sizeof *gid);
    if (!s || !gid)
        goto nomem;
    s->workers = workers ? workers : 1;
    s->timed = timed;
    s->order = qc_malloc_array(ntodo ? ntodo : 1, sizeof *s->order);
    s->current = qc_malloc_array(s->workers, sizeof *s->current);
    if (!s->order || !s->current)
        goto nomem;
    s->ngroups = ntodo ? number_groups(todo, ntodo, setting, gid) : 0;
    if (s->ngroups == SIZE_MAX || !(s->groups = calloc(s->ngroups ? s->ngroups : 1,
                                                       sizeof *s->groups)))
        goto nomem;
    /* counting sort by group; grid order kept within each */
    for (size_t t = 0; t < ntodo; t++)
        s->groups[gid[t]].count++;
    for (size_t g = 0, at = 0; g < s->ngroups; g++) {
        s->groups[g].start = at;
        at += s->groups[g].count;
    }
    for (size_t t = 0; t < ntodo; t++) {
        group *g = &s->groups[gid[t]];
        s->order[g->start + g->taken++] = todo[t];
    }
    for (size_t g = 0; g < s->ngroups; g++)
        s->groups[g].taken = 0;
    for (unsigned w = 0; w < s->workers; w++)
        s->current[w] = (worker_state){SIZE_MAX, -1.0, 0};
    if (pthread_mutex_init(&s->lock, NULL) != 0)
        goto nomem;
    free(gid);
    *out = s;
    return QC_OK;
nomem:
    free(gid);
    if (s) {
        free(s->order);
        free(s->current);
        free(s->groups);
        free(s);
    }
    return qc_fail(QC_ENOMEM, "out of memory for the order of %zu points", ntodo);
}

/* Whether a thread should join group g, which has threads on it, at
 * time `now` (caller holds the lock): the header's rule. A build of the
 * group's own still running counts at least for the time it has taken. */
static int worth_joining(const qc_sweep_schedule *s, size_t g, double now)
{
    const group *gr = &s->groups[g];
    if (!s->timed || gr->threads < gr->ever) /* untimed, or an instance is idle */
        return 1;
    if (s->build_n == 0 || s->point_n == 0)
        return 1;
    const double t = s->point_s / (double)s->point_n;
    double build = s->build_s / (double)s->build_n - t;
    for (unsigned w = 0; w < s->workers; w++)
        if (s->current[w].group == g && s->current[w].built && s->current[w].started >= 0.0 &&
            now - s->current[w].started > build)
            build = now - s->current[w].started;
    return (double)(gr->count - gr->taken) * t > (double)gr->threads * build;
}

/* The group a thread without one takes at time `now` (caller holds the
 * lock), or SIZE_MAX when every point is out or none is worth joining. */
static size_t choose_group(qc_sweep_schedule *s, double now)
{
    while (s->first_open < s->ngroups &&
           s->groups[s->first_open].taken == s->groups[s->first_open].count)
        s->first_open++;
    size_t busiest = SIZE_MAX, most = 0;
    for (size_t g = s->first_open; g < s->ngroups; g++) {
        const size_t left = s->groups[g].count - s->groups[g].taken;
        if (left == 0)
            continue;
        if (s->groups[g].threads == 0)
            return g;
        if (left > most) {
            most = left;
            busiest = g;
        }
    }
    return busiest != SIZE_MAX && worth_joining(s, busiest, now) ? busiest : SIZE_MAX;
}

size_t qc_sweep_schedule_next(qc_sweep_schedule *s, unsigned worker)
{
    if (!s || worker >= s->workers)
        return SIZE_MAX;
    pthread_mutex_lock(&s->lock);
    worker_state *w = &s->current[worker];
    const double now = now_seconds();
    if (w->started >= 0.0) { /* the point it finished */
        if (w->built) {
            s->build_s += now - w->started;
            s->build_n++;
        } else {
            s->point_s += now - w->started;
            s->point_n++;
        }
    }
    size_t g = w->group;
    w->built = 0;
    if (g == SIZE_MAX || s->groups[g].taken == s->groups[g].count) {
        if (g != SIZE_MAX)
            s->groups[g].threads--;
        g = choose_group(s, now);
        w->group = g;
        if (g != SIZE_MAX) {
            group *gr = &s->groups[g];
            if (gr->threads >= gr->ever) { /* every instance is out: it builds one */
                gr->ever++;
                w->built = 1;
            }
            gr->threads++;
        }
    }
    size_t point = SIZE_MAX;
    w->started = -1.0;
    if (g != SIZE_MAX) {
        group *gr = &s->groups[g];
        point = s->order[gr->start + gr->taken++];
        w->started = now;
    }
    pthread_mutex_unlock(&s->lock);
    return point;
}

void qc_sweep_schedule_free(qc_sweep_schedule *s)
{
    if (!s)
        return;
    pthread_mutex_destroy(&s->lock);
    free(s->order);
    free(s->groups);
    free(s->current);
    free(s);
}
