/* plot_page.c — the pages of the plots: the PLplot device for a format,
 * a page drawn under a temporary name and renamed when complete (one
 * atomic file, quantcap/atomic_file.h), and PLplot's fatal errors turned
 * into a status. PLplot ends the process on a fatal error unless its exit
 * handler jumps away; the library never exits, so the handler jumps back
 * to the context's jmp_buf, and plot_ctx_end frees what the figure owned.
 *
 * PLplot's handlers take no user pointer: they reach the context through
 * `current`, a thread-local pointer set by plot_ctx_begin and cleared by
 * plot_ctx_end. PLplot keeps one global stream, so drawing is serialized
 * by `plot_lock`: a program that plots from several threads draws one
 * sweep's figures at a time. These two are the only state of the plots
 * outside the context. */
#include "study/plot.h"

#include "study/file_list.h"

#include <pthread.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static pthread_mutex_t plot_lock = PTHREAD_MUTEX_INITIALIZER;
static _Thread_local plot_ctx *current;

/* Outside a context (a program drawing with PLplot itself after a sweep)
 * PLplot's default stands: it ends the process. */
static int on_plexit(const char *msg)
{
    plot_ctx *ctx = current;
    if (!ctx)
        return 1;
    snprintf(ctx->message, sizeof ctx->message, "%s", msg ? msg : "fatal error");
    longjmp(ctx->escape, 1);
}

static void on_plabort(const char *msg)
{
    plot_ctx *ctx = current;
    if (ctx)
        snprintf(ctx->message, sizeof ctx->message, "%s", msg ? msg : "error");
}

static int have_device(const char *name)
{
    const char *menu[128], *devs[128];
    const char **pm = menu, **pd = devs;
    int n = 128;
    plgDevs(&pm, &pd, &n);
    for (int i = 0; i < n; i++)
        if (strcmp(devs[i], name) == 0)
            return 1;
    return 0;
}

/* PLplot device for a format: cairo when installed, else Qt (PNG) or
 * libharu (PDF). Qt needs a display; without one the program sets
 * QT_QPA_PLATFORM=offscreen before it starts (the library changes no
 * environment). */
static const char *pick_device(sc_format f)
{
    static const char *const png[] = {"pngcairo", "pngqt", NULL};
    static const char *const pdf[] = {"pdfcairo", "pdf", "pdfqt", NULL};
    static const char *const svg[] = {"svg", "svgcairo", "svgqt", NULL};
    const char *const *list = f == SC_FORMAT_PNG ? png : f == SC_FORMAT_PDF ? pdf : svg;
    for (size_t i = 0; list[i]; i++)
        if (have_device(list[i]))
            return list[i];
    return NULL;
}

const char *plot_extension(sc_format f)
{
    return f == SC_FORMAT_PNG ? "png" : f == SC_FORMAT_PDF ? "pdf" : "svg";
}

qc_status plot_ctx_begin(plot_ctx *ctx)
{
    pthread_mutex_lock(&plot_lock);
    ctx->device = pick_device(ctx->sc->plots.format);
    if (!ctx->device) {
        pthread_mutex_unlock(&plot_lock);
        return qc_fail(QC_EINVAL, "no PLplot device for %s output is installed",
                       plot_extension(ctx->sc->plots.format));
    }
    ctx->width = ctx->sc->plots.width;
    ctx->height = ctx->sc->plots.height;
    ctx->font_scale = 1.0;
    ctx->message[0] = '\0';
    current = ctx;
    return QC_OK;
}

void *plot_alloc(plot_ctx *ctx, size_t size)
{
    void *p = ctx->nowned < PLOT_MAX_OWNED ? malloc(size) : NULL;
    if (!p) {
        qc_fail(QC_ENOMEM, "out of memory");
        return NULL;
    }
    ctx->owned[ctx->nowned++] = p;
    return p;
}

void plot_release(plot_ctx *ctx)
{
    for (size_t i = 0; i < ctx->nowned; i++)
        free(ctx->owned[i]);
    ctx->nowned = 0;
    qc_model_free(ctx->model);
    qc_settings_free(ctx->settings);
    ctx->model = NULL;
    ctx->settings = NULL;
}

void plot_page_discard(plot_ctx *ctx)
{
    if (ctx->page)
        qc_atomic_file_discard(ctx->page);
    ctx->page = NULL;
}

void plot_ctx_end(plot_ctx *ctx)
{
    /* PLplot's own exit path ends the stream after the exit handler,
     * which jumped away: end it here, or the next figure's device settings
     * would meet a stream still open (and PLplot would ask for a device on
     * stdin). A failure inside plend jumps back here once and is left. */
    if (ctx->stream_open) {
        ctx->stream_open = 0;
        if (setjmp(ctx->escape) == 0)
            plend();
    }
    plot_page_discard(ctx);
    plot_release(ctx);
    current = NULL;
    pthread_mutex_unlock(&plot_lock);
}

qc_status plot_page_open(plot_ctx *ctx, const char *path, int w, int h)
{
    qc_status st = qc_atomic_file_open(path, &ctx->page);
    if (st != QC_OK) {
        ctx->page = NULL;
        return st;
    }
    plsexit(on_plexit);
    plsabort(on_plabort);
    ctx->stream_open = 1;
    plsdev(ctx->device);
    plsfnam(qc_atomic_file_temp_path(ctx->page)); /* PLplot writes it by name */
    plspage(90.0, 90.0, w, h, 0, 0);
    ctx->font_scale = (double)(ctx->width + ctx->height) / (double)(w + h);
    plscolbg(255, 255, 255); /* colour 0: white background */
    plscmap0n(COL_FIRST + NCOLOURS);
    plscol0(COL_BLACK, 0, 0, 0); /* colour 1: black text and axes */
    plscol0(COL_GRID, 200, 200, 200);
    for (int i = 0; i < NCOLOURS; i++)
        plscol0(COL_FIRST + i, plot_palette[i][0], plot_palette[i][1], plot_palette[i][2]);
    plinit();
    plsxax(7, 0); /* plain numbers up to 7 digits, no separate exponent */
    plsyax(7, 0);
    plcol0(COL_BLACK);
    return QC_OK;
}

qc_status plot_page_close(plot_ctx *ctx, const char *path)
{
    plend();
    ctx->stream_open = 0;
    qc_status st = qc_atomic_file_commit(ctx->page);
    ctx->page = NULL;
    if (st != QC_OK)
        return st;
    return qc_file_list_add(ctx->files, ctx->nfiles, path);
}
