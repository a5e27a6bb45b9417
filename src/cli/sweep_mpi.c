/* sweep_mpi.c — `quantcap sweep` spread over the processes of an MPI job
 * (Open MPI; MPI-3.1 standard, MPI Forum 2015: point-to-point messages
 * only). Rank 0 is the writer: it runs qc_sweep_run as a single process
 * would, with this file's executor, so the checkpoint, tables and plots
 * are written by one process, from records in grid order, and are the
 * same bytes as a run with --jobs 1. Points are handed out one at a time
 * (a master–worker self-scheduling loop), so that slow points do not hold
 * up a fixed block of others: every compute thread of every rank asks
 * rank 0 for a point, computes it (qc_sweep_worker_run) and sends back its
 * record with the next request; rank 0 checkpoints each record as it
 * arrives. A rank that dies loses only the points it was computing. Which
 * point a thread gets is the library's schedule (qc_sweep_schedule,
 * untimed: a thread asks ahead): each thread keeps to the points of one
 * model setting while they last, so that a rank builds a model and its
 * unquantized reference once for several points instead of every rank
 * building each.
 *
 * Messages (tags below): a request is an 8-byte point index, -1 when the
 * thread has nothing to give back, and the 8-byte tag to answer on (0:
 * no point wanted), followed by that point's record text; the answer is
 * an 8-byte index, -1 meaning stop. Each compute thread keeps one point
 * in reserve (its next request is answered while it computes), so it
 * never waits for the serving thread. The numbers travel as bytes: the
 * ranks of one job are assumed to share the machine type.
 * On rank 0 one thread serves the requests and the others compute points
 * of their own; on the other ranks the compute threads take turns at the
 * communication (MPI_THREAD_SERIALIZED). */
#include "sweep_mpi.h"

#include "cli.h"

#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* Started by a launcher: the size its environment gives (Open MPI's
 * mpirun, or a PMI/PMIx launcher such as Slurm's srun). */
size_t cli_mpi_launched(int *first)
{
    static const char *const size_vars[] = {"OMPI_COMM_WORLD_SIZE", "PMIX_SIZE", "PMI_SIZE",
                                            NULL};
    static const char *const rank_vars[] = {"OMPI_COMM_WORLD_RANK", "PMIX_RANK", "PMI_RANK",
                                            NULL};
    size_t size = 1;
    for (size_t i = 0; size_vars[i]; i++) {
        const char *v = getenv(size_vars[i]);
        if (v && atol(v) > 0) {
            size = (size_t)atol(v);
            break;
        }
    }
    *first = 1;
    for (size_t i = 0; rank_vars[i]; i++) {
        const char *v = getenv(rank_vars[i]);
        if (v) {
            *first = atol(v) == 0;
            break;
        }
    }
    /* srun with PMIx sets the rank but not always the size */
    if (size == 1 && getenv("PMIX_RANK") && getenv("SLURM_NTASKS") &&
        atol(getenv("SLURM_NTASKS")) > 1)
        size = (size_t)atol(getenv("SLURM_NTASKS"));
    return size;
}

#ifdef QC_HAVE_MPI
#include <mpi.h>
#include <time.h>
#ifdef _OPENMP
#include <omp.h>
#define OMP(directive) _Pragma(#directive)
#else
#define OMP(directive) /* built without OpenMP: one thread */
#endif

enum { TAG_ASK = 1, TAG_REPLY = 16 }; /* answers: TAG_REPLY + the thread's number */
#define HASH_LEN 64 /* room for a scenario hash */

int cli_mpi_start(cli_mpi *m, unsigned jobs)
{
    memset(m, 0, sizeof *m);
    int provided = MPI_THREAD_SINGLE;
    if (MPI_Init_thread(NULL, NULL, MPI_THREAD_SERIALIZED, &provided) != MPI_SUCCESS) {
        fprintf(stderr, "quantcap: error: sweep: MPI did not start\n");
        return CLI_NUMERIC;
    }
    MPI_Comm_rank(MPI_COMM_WORLD, &m->rank);
    MPI_Comm_size(MPI_COMM_WORLD, &m->size);
#ifdef _OPENMP
    m->jobs = jobs ? jobs : (unsigned)omp_get_num_procs();
    /* rank 0 counts on each rank's threads asking for work: the teams
     * must have the size announced */
    omp_set_dynamic(0);
    if (omp_get_thread_limit() > 1 && m->jobs + 1 > (unsigned)omp_get_thread_limit())
        m->jobs = (unsigned)omp_get_thread_limit() - 1;
#else
    (void)jobs;
    m->jobs = 1;
#endif
    /* other ranks' threads share one connection only when MPI allows it */
    if (provided < MPI_THREAD_SERIALIZED && m->rank != 0)
        m->jobs = 1;
    return 0;
}

int cli_mpi_agree(cli_mpi *m, const qc_scenario *sc, qc_status read_status)
{
    int ok = read_status == QC_OK;
    m->sc = sc;
    int *oks = malloc((size_t)m->size * sizeof *oks);
    char *hashes = malloc((size_t)m->size * HASH_LEN);
    m->remote_threads = calloc((size_t)m->size, sizeof *m->remote_threads);
    if (!oks || !hashes || !m->remote_threads) {
        fprintf(stderr, "quantcap: error: out of memory\n");
        MPI_Abort(MPI_COMM_WORLD, CLI_USAGE);
    }
    MPI_Allgather(&ok, 1, MPI_INT, oks, 1, MPI_INT, MPI_COMM_WORLD);
    int all = 1;
    for (int r = 0; r < m->size; r++)
        all = all && oks[r];
    int rc = 0;
    if (!all) {
        /* every rank that failed says why; when rank 0 failed too, the
         * others had the same trouble and stay quiet */
        if (!ok && m->rank == 0)
            fprintf(stderr, "quantcap: error: %s\n", qc_last_error());
        else if (!ok && oks[0])
            fprintf(stderr, "quantcap: error: rank %d: %s\n", m->rank, qc_last_error());
        rc = CLI_USAGE;
    } else {
        char mine[HASH_LEN] = "";
        snprintf(mine, sizeof mine, "%s", qc_scenario_hash(sc));
        MPI_Gather(mine, HASH_LEN, MPI_CHAR, hashes, HASH_LEN, MPI_CHAR, 0, MPI_COMM_WORLD);
        int same = 1;
        if (m->rank == 0)
            for (int r = 1; r < m->size; r++)
                if (strncmp(hashes, hashes + (size_t)r * HASH_LEN, HASH_LEN) != 0) {
                    fprintf(stderr,
                            "quantcap: error: sweep: rank %d read another scenario (hash %.20s; "
                            "rank 0 has %.20s): every process must see the same file and "
                            "--set options\n",
                            r, hashes + (size_t)r * HASH_LEN, hashes);
                    same = 0;
                    break;
                }
        MPI_Bcast(&same, 1, MPI_INT, 0, MPI_COMM_WORLD);
        rc = same ? 0 : CLI_USAGE;
    }
    int jobs = (int)m->jobs;
    MPI_Gather(&jobs, 1, MPI_INT, m->remote_threads, 1, MPI_INT, 0, MPI_COMM_WORLD);
    /* the other ranks ask for work only when all agreed */
    if (m->rank == 0 && rc == 0)
        for (int r = 1; r < m->size; r++)
            m->remote_active += (size_t)m->remote_threads[r];
    free(oks);
    free(hashes);
    return rc;
}

/* Sleeps between polls of the link: the first short, each next one
 * twice as long while nothing comes, up to NAP_MAX_NS. A wait that ends
 * soon (an answer to a request) costs little latency, and a link that
 * stays quiet (rank 0 while every rank computes a slow point, a rank
 * waiting for rank 0 to write the tables) costs few wake-ups: with a
 * fixed 0.1 ms the wake-ups of the serving thread took a sizeable share
 * of the CPU time of a sweep over two ranks. */
#define NAP_MIN_NS 50000L   /* 0.05 ms */
#define NAP_MAX_NS 2000000L /* 2 ms: well below a typical point */

static void nap(long *ns)
{
    struct timespec pause = {0, *ns};
    nanosleep(&pause, NULL);
    *ns = *ns * 2 > NAP_MAX_NS ? NAP_MAX_NS : *ns * 2;
}

/* Wait for a request to complete, asleep between tests, not in a busy
 * MPI_Wait: ranks may share their cores with others. */
static void wait_asleep(MPI_Request *req)
{
    long ns = NAP_MIN_NS;
    for (int got = 0;;) {
        MPI_Test(req, &got, MPI_STATUS_IGNORE);
        if (got)
            return;
        nap(&ns);
    }
}

static void fail_rank(const cli_mpi *m, const char *what)
{
    fprintf(stderr, "quantcap: error: rank %d: %s\n", m->rank, what);
    MPI_Abort(MPI_COMM_WORLD, CLI_NUMERIC);
}

/* A computing thread's request in flight: the record of the point it
 * finished (if any) and, when it wants one, the next point, answered on
 * the thread's own tag so that the threads of a rank never take each
 * other's answers. */
typedef struct {
    MPI_Request send, recv;
    char *msg;
    int64_t next;
    int want;
} ask;

static void ask_post(cli_mpi *m, ask *a, int64_t done, const char *text, int reply_tag)
{
    size_t len = text ? strlen(text) : 0;
    const int64_t head[2] = {done, reply_tag}; /* reply_tag 0: no point wanted */
    if (!(a->msg = malloc(sizeof head + len)))
        fail_rank(m, "out of memory");
    memcpy(a->msg, head, sizeof head);
    if (len)
        memcpy(a->msg + sizeof head, text, len);
    a->want = reply_tag != 0;
    a->next = -1;
    OMP(omp critical(cli_mpi_link))
    {
        MPI_Isend(a->msg, (int)(sizeof head + len), MPI_BYTE, 0, TAG_ASK, MPI_COMM_WORLD,
                  &a->send);
        if (a->want)
            MPI_Irecv(&a->next, (int)sizeof a->next, MPI_BYTE, 0, reply_tag, MPI_COMM_WORLD,
                      &a->recv);
    }
}

/* Wait (asleep) for the request to be sent and answered; the point to do
 * next, or -1 (none wanted, or none left). */
static int64_t ask_wait(ask *a)
{
    long ns = NAP_MIN_NS;
    for (;;) {
        int sent = 0, answered = 1;
        OMP(omp critical(cli_mpi_link))
        {
            MPI_Test(&a->send, &sent, MPI_STATUS_IGNORE);
            if (a->want)
                MPI_Test(&a->recv, &answered, MPI_STATUS_IGNORE);
        }
        if (sent && answered)
            break;
        nap(&ns);
    }
    free(a->msg);
    a->msg = NULL;
    return a->want ? a->next : -1;
}

/* Each compute thread keeps one point in reserve: while it computes a
 * point, its request for the next one is already on its way, so it never
 * waits for rank 0's serving thread, which may be asleep. */
int cli_mpi_work(cli_mpi *m, const qc_scenario *sc)
{
    if (qc_sweep_worker_alloc(sc, &m->worker) != QC_OK)
        fail_rank(m, qc_last_error());
    unsigned threads = m->jobs;
    (void)threads;
    OMP(omp parallel num_threads(threads))
    {
#ifdef _OPENMP
        const int tag = TAG_REPLY + omp_get_thread_num();
#else
        const int tag = TAG_REPLY;
#endif
        ask a = {0};
        ask_post(m, &a, -1, NULL, tag);
        int64_t cur = ask_wait(&a);
        int asking = cur >= 0;
        if (asking)
            ask_post(m, &a, -1, NULL, tag); /* the reserve */
        while (cur >= 0) {
            char *text = NULL;
            if (qc_sweep_worker_run(m->worker, (size_t)cur, &text) != QC_OK)
                fail_rank(m, qc_last_error());
            int64_t reserve = asking ? ask_wait(&a) : -1;
            asking = reserve >= 0;
            /* give the record back, and ask for another while there are */
            ask_post(m, &a, cur, text, asking ? tag : 0);
            free(text);
            cur = reserve;
        }
        ask_wait(&a);
    }
    return 0;
}

/* What rank 0's threads share while the executor runs. */
typedef struct {
    cli_mpi *m;
    qc_sweep_schedule *plan; /* who gets which point                       */
    size_t *first_worker;    /* per rank: the number of its thread 0        */
    int stop;                /* the sweep stopped: hand out no more         */
    qc_sweep_deliver_fn deliver;
    void *ctx;
} dispatch;

/* The next point for worker `worker` (the threads of every rank numbered
 * in rank order), or -1: none left, or the sweep stopped. */
static int64_t claim(dispatch *d, unsigned worker)
{
    int stop;
    OMP(omp atomic read)
    stop = d->stop;
    if (stop || !d->plan)
        return -1;
    size_t i = qc_sweep_schedule_next(d->plan, worker);
    return i == SIZE_MAX ? -1 : (int64_t)i;
}

static void give_back(dispatch *d, size_t index, const char *text)
{
    if (d->deliver(d->ctx, index, text) != QC_OK) {
        OMP(omp atomic write)
        d->stop = 1;
    }
}

/* Answer the other ranks' requests until each of their threads has been
 * told to stop and every point handed out has come back. Polls, sleeping
 * when nothing waits (longer while the link stays quiet), so that the
 * serving thread leaves the cores to the computing ones. */
static void serve(dispatch *d)
{
    cli_mpi *m = d->m;
    long ns = NAP_MIN_NS;
    while (m->remote_active > 0 || m->remote_holding > 0) {
        int flag = 0;
        MPI_Status status;
        MPI_Iprobe(MPI_ANY_SOURCE, TAG_ASK, MPI_COMM_WORLD, &flag, &status);
        if (!flag) {
            nap(&ns);
            continue;
        }
        ns = NAP_MIN_NS;
        int count = 0;
        MPI_Get_count(&status, MPI_BYTE, &count);
        char *msg = malloc((size_t)count + 1);
        int64_t head[2] = {-1, 0};
        if (msg && (size_t)count >= sizeof head) {
            MPI_Recv(msg, count, MPI_BYTE, status.MPI_SOURCE, TAG_ASK, MPI_COMM_WORLD,
                     MPI_STATUS_IGNORE);
            memcpy(head, msg, sizeof head);
        }
        const int source = status.MPI_SOURCE;
        if (!msg || (size_t)count < sizeof head ||
            (head[1] != 0 && (head[1] < TAG_REPLY || source <= 0 || source >= m->size ||
                              head[1] - TAG_REPLY >= m->remote_threads[source]))) {
            fprintf(stderr, "quantcap: error: %s from rank %d\n",
                    msg ? "a malformed request" : "out of memory for a record", status.MPI_SOURCE);
            MPI_Abort(MPI_COMM_WORLD, CLI_NUMERIC);
        }
        msg[count] = '\0';
        /* the asking thread gets its next point before its record is
         * checkpointed, so that it never waits for the disk */
        if (head[1] != 0) {
            int64_t next =
                d->deliver ? claim(d, (unsigned)(d->first_worker[source] +
                                                 (size_t)(head[1] - TAG_REPLY)))
                           : -1;
            MPI_Send(&next, (int)sizeof next, MPI_BYTE, status.MPI_SOURCE, (int)head[1],
                     MPI_COMM_WORLD);
            if (next < 0)
                m->remote_active--;
            else
                m->remote_holding++;
        }
        if (head[0] >= 0) {
            if (m->remote_holding > 0)
                m->remote_holding--;
            if (d->deliver)
                give_back(d, (size_t)head[0], msg + sizeof head);
        }
        free(msg);
    }
}

qc_status cli_mpi_execute(void *user, const size_t *todo, size_t ntodo,
                          const size_t *setting, qc_sweep_deliver_fn deliver, void *ctx,
                          char *msg, size_t cap)
{
    cli_mpi *m = user;
    dispatch d = {.m = m, .deliver = deliver, .ctx = ctx};
    /* rank 0's compute threads are workers 0 .. jobs − 1, then each
     * rank's threads in rank order */
    d.first_worker = malloc((size_t)m->size * sizeof *d.first_worker);
    size_t workers = 0;
    for (int r = 0; d.first_worker && r < m->size; r++) {
        d.first_worker[r] = workers;
        workers += r == 0 ? m->jobs : (size_t)m->remote_threads[r];
    }
    if (!d.first_worker ||
        qc_sweep_schedule_alloc(todo, ntodo, setting, (unsigned)workers, 0, &d.plan) != QC_OK ||
        (!m->worker && qc_sweep_worker_alloc(m->sc, &m->worker) != QC_OK)) {
        snprintf(msg, cap, "%s", d.first_worker ? qc_last_error() : "out of memory");
        dispatch none = {.m = m};
        serve(&none); /* the other ranks wait for an answer */
        qc_sweep_schedule_free(d.plan);
        free(d.first_worker);
        return QC_ENOMEM;
    }
    qc_status failed = QC_OK;
    unsigned threads = 1 + m->jobs; /* the server, and the computing threads */
    (void)threads;
    OMP(omp parallel num_threads(threads))
    {
#ifdef _OPENMP
        int id = omp_get_thread_num();
#else
        int id = 0;
#endif
        if (id == 0) {
            serve(&d);
        } else {
            for (int64_t i; (i = claim(&d, (unsigned)(id - 1))) >= 0;) {
                char *text = NULL;
                qc_status st = qc_sweep_worker_run(m->worker, (size_t)i, &text);
                if (st != QC_OK) {
                    OMP(omp critical(cli_mpi_claim))
                    {
                        if (failed == QC_OK) {
                            failed = st;
                            snprintf(msg, cap, "%s", qc_last_error());
                        }
                        OMP(omp atomic write)
                        d.stop = 1;
                    }
                } else {
                    give_back(&d, (size_t)i, text);
                }
                free(text);
            }
        }
    }
    qc_sweep_schedule_free(d.plan);
    free(d.first_worker);
    return failed;
}

int cli_mpi_end(cli_mpi *m, int rc)
{
    if (m->rank == 0) {
        dispatch d = {.m = m}; /* no deliver: every request is told to stop */
        serve(&d);
    }
    /* the other ranks wait here while rank 0 writes the tables and plots:
     * asleep, not in a blocking collective that polls at full speed */
    MPI_Request req;
    MPI_Ibcast(&rc, 1, MPI_INT, 0, MPI_COMM_WORLD, &req);
    wait_asleep(&req);
    qc_sweep_worker_free(m->worker);
    free(m->remote_threads);
    memset(m, 0, sizeof *m);
    MPI_Finalize();
    return rc;
}
#endif
