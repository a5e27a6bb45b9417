/* cmd_sweep.c — `quantcap sweep SCENARIO`: run a scenario's grid of
 * designs in parallel, resumable, and write the table, the JSON and the
 * plots into one folder. A progress bar goes to stderr when it is a
 * terminal. */
#include "cli.h"
#include "sweep_mpi.h"

#include <fcntl.h>

#include <math.h>
#include <signal.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>
#include <unistd.h>

#define MAX_SETS 64
#define ERROR_EXIT_DELAY_S 2 /* see cmd_sweep */

static const cli_opt sweep_options[] = {
    {"output-dir", "DIR", "folder for the results (default out/NAME, NAME = the file's stem)"},
    {"jobs", "N", "parallel threads (default: one per core)"},
    {"resume", NULL, "continue the checkpoint in DIR, skipping finished points"},
    {"set", "KEY=VALUE", "override a scenario key (repeatable; SECTION.KEY=VALUE too)"},
    {"no-plots", NULL, "write the tables only"},
    {"quiet", NULL, "no progress bar"},
    {NULL, NULL, NULL},
};

static void help(const cli_args *a)
{
    printf("usage: quantcap sweep SCENARIO [--output-dir DIR] [--jobs N] [--resume]\n"
           "                      [--set KEY=VALUE ...] [--no-plots] [--quiet]\n\n"
           "Runs every point of the scenario's grid (alphabets x sweep axes), each exactly\n"
           "as 'quantcap design' would with the point's settings, in parallel. Finished\n"
           "points go to DIR/checkpoint.jsonl as they complete: a sweep that was stopped\n"
           "continues with --resume. At the end DIR holds results.csv (one row per\n"
           "point), results.json and the plots the scenario asks for.\n"
           "A point whose design fails (infeasible, no convergence) is recorded with its\n"
           "message; an error in the scenario itself stops the sweep, naming the point.\n"
           "Under an MPI launcher (mpirun -n N quantcap sweep ...; a build with MPI) the\n"
           "N processes share the points, each with --jobs threads, and the first writes\n"
           "DIR: the same bytes as one process; --resume works with any N.\n"
           "Exit status: 0 done (some points may have failed: see the warning), 1 every\n"
           "point failed, 2 an error in the scenario or the options. Formats:\n"
           "docs/formats.md.\n\n"
           "options:\n");
    cli_print_options(a, stdout);
}

/* Default output folder: out/STEM for SCENARIO = .../STEM.ini */
static void default_out(const char *scenario, char *out, size_t cap)
{
    const char *base = strrchr(scenario, '/');
    base = base ? base + 1 : scenario;
    size_t n = strlen(base);
    const char *dot = strrchr(base, '.');
    if (dot && dot != base)
        n = (size_t)(dot - base);
    snprintf(out, cap, "out/%.*s", (int)n, base);
}

/* What an interrupted sweep leaves and how to go on, said on Ctrl-C or a
 * termination signal before the default action ends the process with its
 * usual status. The text is made beforehand: the handler only writes it
 * (write(2) is async-signal-safe). */
static char interrupt_text[4096 + 200];
static size_t interrupt_len;

static void on_interrupt(int sig)
{
    ssize_t ignored = write(STDERR_FILENO, interrupt_text, interrupt_len);
    (void)ignored;
    signal(sig, SIG_DFL);
    raise(sig);
}

/* Install the handler for a sweep writing to `dir`; NULL restores the
 * default action. */
static void say_on_interrupt(const char *dir)
{
    if (dir)
        snprintf(interrupt_text, sizeof interrupt_text,
                 "\nquantcap: sweep interrupted: the points finished are kept in "
                 "%s/checkpoint.jsonl; the same command with --resume continues from "
                 "them\n",
                 dir);
    interrupt_len = strlen(interrupt_text);
    signal(SIGINT, dir ? on_interrupt : SIG_DFL);
    signal(SIGTERM, dir ? on_interrupt : SIG_DFL);
}

/* Under an MPI launcher, the ranks after the first keep quiet while the
 * options are read (each would print the same message): stderr goes to
 * /dev/null until unmute(). Returns the saved descriptor, or -1. */
static int mute(size_t launched, int first)
{
    if (launched < 2 || first)
        return -1;
    fflush(stderr);
    int saved = dup(STDERR_FILENO), nul = open("/dev/null", O_WRONLY);
    if (saved >= 0 && nul >= 0)
        dup2(nul, STDERR_FILENO);
    if (nul >= 0)
        close(nul);
    return saved;
}

static void unmute(int saved)
{
    if (saved < 0)
        return;
    fflush(stderr);
    dup2(saved, STDERR_FILENO);
    close(saved);
}

static int sweep_main(int argc, char **argv, size_t launched, int first, int *muted);

int cmd_sweep(int argc, char **argv)
{
    int first = 1;
    size_t launched = cli_mpi_launched(&first);
    int saved = mute(launched, first);
    int rc = sweep_main(argc, argv, launched, first, &saved);
    unmute(saved);
    /* A rank after the first that stops on the options (before MPI is up)
     * waits before it exits: the launcher tears the job down at the first
     * non-zero exit, which must not come before the first rank has said
     * why. */
    if (rc != 0 && launched > 1 && !first && saved >= 0)
        sleep(ERROR_EXIT_DELAY_S);
    return rc;
}

static int sweep_main(int argc, char **argv, size_t launched, int first, int *muted)
{
    /* --set may repeat: take those out before the usual parsing */
    const char *sets[MAX_SETS];
    size_t nsets = 0;
    char **rest = malloc((size_t)(argc + 1) * sizeof *rest);
    if (!rest)
        return cli_usage_error("out of memory");
    int nrest = 0;
    for (int i = 0; i < argc; i++) {
        const char *v = NULL;
        if (strcmp(argv[i], "--set") == 0) {
            if (i + 1 >= argc) {
                free(rest);
                return cli_usage_error("sweep: option '--set' needs a value (KEY=VALUE)");
            }
            v = argv[++i];
        } else if (strncmp(argv[i], "--set=", 6) == 0) {
            v = argv[i] + 6;
        }
        if (v) {
            if (nsets == MAX_SETS) {
                free(rest);
                return cli_usage_error("sweep: more than %d --set options", MAX_SETS);
            }
            sets[nsets++] = v;
        } else {
            rest[nrest++] = argv[i];
        }
    }
    cli_args a;
    cli_args_init(&a, "sweep", sweep_options);
    int rc = cli_parse(&a, nrest, rest, 1);
    if (rc == CLI_HELP) {
        if (first)
            help(&a);
        free(rest);
        return CLI_OK;
    }
    if (rc) {
        free(rest);
        return rc;
    }
    if (a.npositional != 1) {
        free(rest);
        return cli_usage_error("sweep: expected one SCENARIO file (see 'quantcap sweep --help')");
    }
    const char *file = a.positional[0];
    size_t jobs = 0;
    if (cli_has(&a, "jobs") && (rc = cli_size("jobs", cli_get(&a, "jobs"), 1, 1024, &jobs))) {
        free(rest);
        return rc;
    }
#ifdef QC_HAVE_MPI
    cli_mpi mpi;
    int use_mpi = launched > 1;
    if (use_mpi && (rc = cli_mpi_start(&mpi, (unsigned)jobs)) != 0) {
        free(rest);
        return rc;
    }
#else
    (void)muted;
    if (launched > 1) {
        free(rest);
        return cli_usage_error("sweep: started as %zu processes by an MPI launcher, but this "
                               "quantcap was built without MPI (configure with -Dmpi=enabled "
                               "and Open MPI installed); run it as one process",
                               launched);
    }
#endif
    char out[4096];
    if (cli_has(&a, "output-dir"))
        snprintf(out, sizeof out, "%s", cli_get(&a, "output-dir"));
    else
        default_out(file, out, sizeof out);

    qc_scenario *sc = NULL;
    qc_sweep_summary sum;
    memset(&sum, 0, sizeof sum);
    qc_status st = qc_scenario_read(file, &sc);
    for (size_t i = 0; st == QC_OK && i < nsets; i++)
        st = qc_scenario_override(sc, sets[i]);
#ifdef QC_HAVE_MPI
    /* the ranks go on together or stop together; the first writes, the
     * others compute the points it hands out (sweep_mpi.c) */
    if (use_mpi) {
        /* from here on, rank 0's own messages are the ones to see */
        unmute(*muted);
        *muted = -1;
        if ((rc = cli_mpi_agree(&mpi, sc, st)) != 0)
            goto done;
        if (mpi.rank != 0) {
            rc = cli_mpi_work(&mpi, sc);
            goto done;
        }
    } else
#endif
    if (st != QC_OK) {
        rc = cli_lib_error(st);
        goto done;
    }
    cli_progress ps;
    cli_progress_init(&ps, cli_has(&a, "quiet"), "points");
    qc_sweep_options opt;
    qc_sweep_options_default(&opt);
    opt.out_dir = out;
    opt.jobs = (unsigned)jobs;
    opt.resume = cli_has(&a, "resume");
    opt.plots = !cli_has(&a, "no-plots");
    /* PLplot's Qt devices (used when cairo is not installed) need a
     * display; without one they are pointed at Qt's off-screen platform,
     * set only when unset. The program sets it, before any thread starts:
     * the library changes no environment. */
    if (opt.plots && !getenv("DISPLAY") && !getenv("WAYLAND_DISPLAY"))
        setenv("QT_QPA_PLATFORM", "offscreen", 0);
    opt.progress = cli_progress_report;
    opt.user = &ps;
#ifdef QC_HAVE_MPI
    if (use_mpi) {
        opt.execute = cli_mpi_execute;
        opt.execute_user = &mpi;
    }
#endif
    struct timespec t0, t1;
    clock_gettime(CLOCK_MONOTONIC, &t0);
    say_on_interrupt(out);
    st = qc_sweep_run(sc, &opt, &sum);
    say_on_interrupt(NULL);
    clock_gettime(CLOCK_MONOTONIC, &t1);
    cli_progress_end(&ps);
    if (st != QC_OK) {
        rc = cli_lib_error(st);
        goto done;
    }
    printf("sweep: %zu %s (%zu resumed, %zu computed, %zu failed) in %.1f s\n", sum.points,
           cli_plural(sum.points, "point", "points"), sum.resumed, sum.computed, sum.failed,
           cli_seconds_between(&t0, &t1));
    for (size_t i = 0; i < sum.nfiles; i++)
        printf("wrote %s\n", sum.files[i]);
    for (size_t i = 0; i < sum.nnotes; i++)
        printf("plot %s\n", sum.notes[i]);
    for (size_t i = 0; i < sum.nremoved; i++)
        printf("removed %s (written by an earlier sweep, not by this one)\n", sum.removed[i]);
    if (sum.plots_skipped)
        printf("plots skipped: this build of quantcap has no PLplot\n");
    if (sum.failed) {
        fprintf(stderr, "quantcap: warning: %zu of %zu points failed (see the status column); "
                        "first: %s\n",
                sum.failed, sum.points, sum.first_failure);
        if (sum.failed == sum.points)
            rc = CLI_NUMERIC;
    }
done:
#ifdef QC_HAVE_MPI
    if (use_mpi) {
        fflush(stdout);
        rc = cli_mpi_end(&mpi, rc);
    }
#endif
    qc_sweep_summary_clear(&sum);
    qc_scenario_free(sc);
    free(rest);
    return rc;
}
