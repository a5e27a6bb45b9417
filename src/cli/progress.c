/* progress.c — the progress bar of long runs (sweeps, single designs):
 * drawn on stderr, only when stderr is a terminal, at most ten times a
 * second, with the rate and the time left estimated from the rate so far.
 * The library reports work through callbacks and never prints itself. */
#include "cli.h"

#include <math.h>
#include <unistd.h>

double cli_seconds_between(const struct timespec *a, const struct timespec *b)
{
    return (double)(b->tv_sec - a->tv_sec) + 1e-9 * (double)(b->tv_nsec - a->tv_nsec);
}

void cli_progress_init(cli_progress *p, int quiet, const char *unit)
{
    *p = (cli_progress){.tty = !quiet && isatty(STDERR_FILENO), .unit = unit};
}

void cli_progress_report(void *user, size_t done, size_t total)
{
    cli_progress *p = user;
    struct timespec now;
    clock_gettime(CLOCK_MONOTONIC, &now);
    if (!p->drawn) {
        p->start = now;
        p->first_done = done;
    } else if (done < total && cli_seconds_between(&p->last, &now) < 0.1) {
        return;
    }
    p->last = now;
    p->drawn = 1;
    p->finished = done >= total;
    double elapsed = cli_seconds_between(&p->start, &now);
    if (!p->tty || (!p->shown && elapsed < p->delay_s))
        return; /* a run shorter than the delay draws nothing */
    p->shown = 1;
    double rate = elapsed > 0 && done > p->first_done
                      ? (double)(done - p->first_done) / elapsed : 0.0;
    char left[48] = "time left not yet known";
    if (rate > 0) {
        long s = lround((double)(total - done) / rate);
        if (s < 60)
            snprintf(left, sizeof left, "%ld s left", s);
        else if (s < 3600)
            snprintf(left, sizeof left, "%ld min %02ld s left", s / 60, s % 60);
        else
            snprintf(left, sizeof left, "%ld h %02ld min left", s / 3600, s / 60 % 60);
    }
    const int width = 30;
    int filled = total ? (int)((double)width * (double)done / (double)total) : width;
    char bar[64];
    for (int i = 0; i < width; i++)
        bar[i] = i < filled ? '#' : '.';
    bar[width] = '\0';
    fprintf(stderr, "\r[%s] %zu/%zu %s  %.1f %s/s  %s   ", bar, done, total,
            p->unit, rate, p->unit, left);
    if (done >= total)
        fputc('\n', stderr);
    fflush(stderr);
}

void cli_progress_end(cli_progress *p)
{
    if (p->tty && p->shown && !p->finished)
        fputc('\n', stderr);
}
