/* plot.h — what the files of the plots share (private to src/study/plot_*.c):
 * the plotting context, the page and its PLplot error handling
 * (plot_page.c), drawing helpers (plot_draw.c), words, units and file
 * names (plot_text.c), the layout of panels and line styles
 * (plot_layout.c), the numbers read out of a sweep's records
 * (plot_records.c) and the figures (plot_rate.c, plot_figures.c,
 * plot_density.c).
 *
 * All state of a drawing lives in one plot_ctx passed down: no file of the
 * plots keeps process-wide state of its own. PLplot itself does (one
 * stream, and exit/abort handlers that take no user pointer), so figures
 * are drawn one at a time: plot_ctx_begin takes a lock that plot_ctx_end
 * releases, and the handlers reach the context through a thread-local
 * pointer set between the two. A fatal PLplot error leaves through the
 * context's jmp_buf: everything a figure allocates is recorded in the
 * context (plot_alloc, ctx->settings, ctx->model, ctx->page), so
 * plot_ctx_end frees it on that path as on every other. */
#ifndef QC_PLOT_H
#define QC_PLOT_H

#include <setjmp.h>
#include <stddef.h>

#include <jansson.h>
#include <plplot.h>

#include "core/internal.h"
#include "quantcap/atomic_file.h"
#include "study/scenario.h"

#define PLOT_MAX_OWNED 16 /* allocations of one figure */

typedef struct {
    const qc_scenario *sc;
    json_t *const *records; /* the sweep's records, in grid order */
    const char *dir;        /* output folder */
    const char *device;     /* PLplot device */
    int width, height;      /* page of a one-panel figure, pixels */
    /* PLplot scales its characters with the page: on the larger pages of
     * several panels they are scaled back so that text keeps its size. */
    double font_scale;
    char ***files, ***notes; /* where written files and notes are listed */
    size_t *nfiles, *nnotes;
    /* the figure being drawn */
    qc_atomic_file *page; /* its output (NULL between pages) */
    int stream_open;      /* PLplot's stream started, not yet ended */
    void *owned[PLOT_MAX_OWNED];
    size_t nowned;
    qc_settings *settings; /* density: the point's settings and model */
    qc_model *model;
    /* PLplot errors */
    jmp_buf escape;
    char message[512];
} plot_ctx;

/* plot_page.c -------------------------------------------------------- */

/* Take the plotting lock, pick the device for the scenario's format and
 * make ctx the current context of this thread. QC_EINVAL when no device
 * for the format is installed (the lock is then not held). */
qc_status plot_ctx_begin(plot_ctx *ctx);
/* Discard an unfinished page, free everything the figure owns, release
 * the lock. */
void plot_ctx_end(plot_ctx *ctx);
/* A malloc'd block owned by the figure until plot_release (NULL and
 * QC_ENOMEM in the error message when out of memory or slots). */
void *plot_alloc(plot_ctx *ctx, size_t size);
/* Free the blocks, settings and model the figure owns. */
void plot_release(plot_ctx *ctx);
/* "svg", "png" or "pdf". */
const char *plot_extension(sc_format f);
/* Start a page of w x h pixels that becomes `path` when closed. */
qc_status plot_page_open(plot_ctx *ctx, const char *path, int w, int h);
/* Finish the page, rename it into place and list it in ctx->files. */
qc_status plot_page_close(plot_ctx *ctx, const char *path);
/* End the page without writing it (the error path of a figure). */
void plot_page_discard(plot_ctx *ctx);

/* plot_draw.c -------------------------------------------------------- */

/* cmap0 slots */
enum { COL_WHITE = 0, COL_BLACK = 1, COL_GRID = 2, COL_FIRST = 3, NCOLOURS = 8 };
extern const int plot_palette[NCOLOURS][3];
extern const int plot_line_styles[NCOLOURS];

#define MARK_BELOW 6 /* the downward triangle: a value below the axis */
/* Viewport of a one-panel figure, room on the right for the legend. */
#define VP_LEFT 0.15
#define VP_RIGHT 0.78
#define PX_TOP 110.0
#define PX_PANEL_TITLE 32.0
#define PX_LEGEND 330.0

typedef struct {
    int n;
    const char *text[40];
    char buf[40][96];
    PLINT opt[40], text_col[40], line_col[40], line_sty[40], sym_col[40], sym_num[40];
    PLFLT line_w[40], sym_scale[40];
    const char *sym[40];
} legend;

void plot_set_style(int i, int dash);
int plot_marker_index(int i);
void plot_draw_marker(double x, double y, int shape, int filled);
void plot_frame(double x0, double x1, double y0, double y1, const char *xopt_extra,
           const char *yopt_extra);
void plot_frame_ticks(double x0, double x1, double y0, double y1, int numbers, double xtick,
                 double ytick, const char *yopt_extra);
void plot_curve(int n, const double *x, const double *y, int style, int dash, int every, int phase);
void plot_labels(const char *xlabel, const char *ylabel, const char *title);
void plot_legend_add(legend *lg, const char *text, int style, int with_marker);
void plot_legend_draw(const plot_ctx *ctx, legend *lg, PLINT position, double plot_width);
void plot_legend_strip(const plot_ctx *ctx, legend *lg, int w, int h);
void plot_figure_title(const qc_scenario *sc, const char *subject, const char *details, int w,
                       int h);
void plot_panel_title(const char *text);
double plot_log_step(double decades);
/* A frame with log y (x log when `logx`, x numbered when `xnum`) in
 * world coordinates log10: a light grid, ticks, the y numbers as powers
 * of ten, every decade or, over many decades, every plot_log_step. */
void plot_log_frame(double x0, double x1, double y0, double y1, int logx, int xnum);

/* plot_text.c -------------------------------------------------------- */

void plot_axis_value_words(const qc_scenario *sc, size_t k, size_t v, char *out, size_t cap);
void plot_key_label(const qc_scenario *sc, const char *key, char *buf, size_t cap);
int plot_alphabet_qam(const qc_scenario *sc, size_t a);
const char *plot_rate_unit(const qc_scenario *sc, size_t a0, size_t a1);
const char *plot_output_unit(const qc_model_type *type, const qc_settings *s);
void plot_file_part(char *file, size_t fcap, const char *key, const char *value);
void plot_safe_name(char *s);
void plot_append(char *buf, size_t cap, const char *sep, const char *text);
qc_status plot_note(plot_ctx *ctx, const char *fmt, const char *a, const char *b);

/* plot_layout.c ------------------------------------------------------ */

enum { PANEL_NONE = -1, PANEL_GROUP = -2 };

/* How the dimensions of a figure kind beyond its x axis and its curves are
 * spread: one of them over panels of one figure (an axis, or the kind's
 * group: the alphabets of rate against x, the operating points of rate
 * against bits), a few more over line styles, the rest over files. */
typedef struct {
    int panel;                       /* axis index, PANEL_GROUP or PANEL_NONE */
    size_t npanels;
    int style[QC_SCENARIO_MAX_AXES]; /* 1: told apart by line style */
    size_t nstyles;                  /* combinations of the style axes */
    int fixed[QC_SCENARIO_MAX_AXES]; /* 1: not iterated over files  */
    size_t ncols, nrows;
} layout;

void plot_choose_layout(const qc_scenario *sc, const int *used, size_t ngroup, int group_first,
                   layout *L);
void plot_set_style_combo(const qc_scenario *sc, const layout *L, size_t s, size_t *vi);
void plot_style_words(const qc_scenario *sc, const layout *L, size_t s, char *out, size_t cap);
void plot_file_combo_text(const qc_scenario *sc, const layout *L, const size_t *vi, char *file,
                     size_t fcap, char *title, size_t tcap);
void plot_page_size(const plot_ctx *ctx, const layout *L, int split, int *w, int *h);
void plot_panel_box(const layout *L, size_t p, int w, int h, double box[4]);
size_t plot_point_index(const qc_scenario *sc, size_t alpha, const size_t *vi);
int plot_next_combo(const qc_scenario *sc, size_t *vi, const int *fixed);
void plot_range_of(const double *v, size_t n, double *lo, double *hi);
void plot_pad_range(double *lo, double *hi, double frac);
int plot_any_finite(const double *v, size_t n);

/* plot_records.c ----------------------------------------------------- */

/* A number of a point's result, NaN when the point failed or lacks it. */
double plot_record_number(json_t *rec, const char *key);
/* 1 when the point's result is of a two-dimensional alphabet (QAM). */
int plot_record_qam(json_t *rec);
/* What the rate of the sweep's points is, for titles and axes: "GMI" when
 * every point's objective is gmi (the rate is then the BICM GMI), else
 * "information rate" (points that failed do not count). */
const char *plot_rate_name(const plot_ctx *ctx);
/* The status name of a point's record (NULL when it has none). */
const char *plot_record_status(json_t *rec);
/* The numbers of an array of a point's result, owned by the figure. */
qc_status plot_record_array(plot_ctx *ctx, json_t *rec, const char *key, double **out, size_t *n);

/* the figures -------------------------------------------------------- */

#define MAX_PLOTS_PER_KIND 256

qc_status plot_rate_vs_x(plot_ctx *ctx);    /* plot_rate.c */
qc_status plot_rate_vs_bits(plot_ctx *ctx); /* plot_rate.c */
qc_status plot_density(plot_ctx *ctx);      /* plot_density.c */
qc_status plot_ber_vs_x(plot_ctx *ctx);         /* plot_figures.c */
qc_status plot_required_vs_bits(plot_ctx *ctx); /* plot_figures.c */
qc_status plot_required_vs_x(plot_ctx *ctx);    /* the same against x */
qc_status plot_photon_efficiency(plot_ctx *ctx); /* plot_photon.c */

#endif
