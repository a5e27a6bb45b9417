/* plot.c — the figures of a sweep, drawn with PLplot: rate against the
 * sweep's x axis (SNR, power, photons...) with one curve per quantizer
 * resolution and the unquantized rate; rate against bits at chosen
 * operating points, one curve per alphabet, with the penalty or loss on a
 * second part; and the conditional densities (or count pmfs) of each
 * level of one design with its thresholds drawn over them. The other
 * dimensions of a figure kind are drawn as small multiples (one panel per
 * value, on one scale), then line styles, then separate files, so that a
 * study writes a handful of figures. Titles and axes say what is drawn in
 * words and units. White background, black text, and curves told apart by
 * colour, line style and markers centred on their points, so that they
 * stay distinct in print. Each file is drawn under a temporary name and
 * renamed when complete. */
#include "study/sweep.h"

#include "core/internal.h"
#include "quantcap/atomic_file.h"
#include "study/scenario.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#ifndef M_PI
#define M_PI 3.14159265358979323846
#endif

#ifndef QC_HAVE_PLPLOT

int qc_plots_available(void) { return 0; }

qc_status qc_plot_sweep(const qc_scenario *sc, json_t *const *records, const char *dir,
                        char ***files, size_t *nfiles, char ***notes, size_t *nnotes)
{
    (void)notes;
    (void)nnotes;
    (void)sc;
    (void)records;
    (void)dir;
    (void)files;
    (void)nfiles;
    return qc_fail(QC_EINVAL, "this build of quantcap draws no plots (built without PLplot)");
}

#else

#include <plplot.h>
#include <setjmp.h>
#include <sys/stat.h>
#include <unistd.h>

int qc_plots_available(void) { return 1; }

#define MAX_PLOTS_PER_KIND 256
#define DENSITY_SAMPLES 801

/* cmap0 slots */
enum { COL_WHITE = 0, COL_BLACK = 1, COL_GRID = 2, COL_FIRST = 3, NCOLOURS = 8 };

/* Okabe & Ito's colour-blind-safe palette (yellow and black left out:
 * too pale on white, and black is the unquantized curve), plus wine and
 * grey. */
static const int palette[NCOLOURS][3] = {
    {0, 114, 178}, {213, 94, 0},   {0, 158, 115}, {204, 121, 167},
    {230, 159, 0}, {86, 180, 233}, {136, 34, 85}, {110, 110, 110},
};
/* Legend glyphs of the markers drawn by draw_marker, in the same order. */
static const char *const markers[NCOLOURS] = {"\xe2\x97\x8b", "\xe2\x96\xa1", "\xe2\x96\xb3",
                                               "\xe2\x97\x87", "\xc3\x97",      "+",
                                               "\xe2\x96\xbd", "*"}; /* ○ □ △ ◇ × + ▽ * */
static const int line_styles[NCOLOURS] = {1, 2, 3, 4, 5, 6, 7, 8};

/* PLplot ends the process on a fatal error unless its exit handler jumps
 * away; the library never exits, so it does. */
static jmp_buf escape;
static int escape_armed;
static char plplot_message[512];
static char open_tmp[4400]; /* the page being drawn, removed if PLplot fails */

static int on_plexit(const char *msg)
{
    snprintf(plplot_message, sizeof plplot_message, "%s", msg ? msg : "fatal error");
    if (escape_armed) {
        escape_armed = 0;
        longjmp(escape, 1);
    }
    return 1;
}

static void on_plabort(const char *msg)
{
    snprintf(plplot_message, sizeof plplot_message, "%s", msg ? msg : "error");
}

/* ---------------------------------------------------------------- */
/* Devices and pages                                                  */
/* ---------------------------------------------------------------- */

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
 * libharu (PDF). Qt needs a display: without one it is pointed at its
 * off-screen platform (QT_QPA_PLATFORM=offscreen, set only when unset). */
static const char *pick_device(sc_format f)
{
    static const char *const png[] = {"pngcairo", "pngqt", NULL};
    static const char *const pdf[] = {"pdfcairo", "pdf", "pdfqt", NULL};
    static const char *const svg[] = {"svg", "svgcairo", "svgqt", NULL};
    const char *const *list = f == SC_FORMAT_PNG ? png : f == SC_FORMAT_PDF ? pdf : svg;
    for (size_t i = 0; list[i]; i++)
        if (have_device(list[i])) {
            if (strstr(list[i], "qt") && !getenv("DISPLAY") && !getenv("WAYLAND_DISPLAY"))
                setenv("QT_QPA_PLATFORM", "offscreen", 0);
            return list[i];
        }
    return NULL;
}

static const char *extension(sc_format f)
{
    return f == SC_FORMAT_PNG ? "png" : f == SC_FORMAT_PDF ? "pdf" : "svg";
}

typedef struct {
    char path[4300];
    qc_atomic_file *file; /* the page's output, complete or absent */
    const char *device;
} page;

static int page_width = 960, page_height = 640;
/* PLplot scales its characters with the page: on the larger pages of
 * several panels they are scaled back so that text keeps its size. */
static double font_scale = 1.0;

/* Start a page of w x h pixels writing to a temporary file beside `path`. */
static qc_status page_open(page *pg, const char *device, int w, int h)
{
    qc_status st = qc_atomic_file_open(pg->path, &pg->file);
    if (st != QC_OK)
        return st;
    const char *tmp = qc_atomic_file_temp_path(pg->file); /* PLplot writes it by name */
    snprintf(open_tmp, sizeof open_tmp, "%s", tmp);
    pg->device = device;
    plsexit(on_plexit);
    plsabort(on_plabort);
    plsdev(device);
    plsfnam(tmp);
    plspage(90.0, 90.0, w, h, 0, 0);
    font_scale = (double)(page_width + page_height) / (double)(w + h);
    plscolbg(255, 255, 255); /* colour 0: white background */
    plscmap0n(COL_FIRST + NCOLOURS);
    plscol0(COL_BLACK, 0, 0, 0); /* colour 1: black text and axes */
    plscol0(COL_GRID, 200, 200, 200);
    for (int i = 0; i < NCOLOURS; i++)
        plscol0(COL_FIRST + i, palette[i][0], palette[i][1], palette[i][2]);
    plinit();
    plsxax(7, 0); /* plain numbers up to 7 digits, no separate exponent */
    plsyax(7, 0);
    plcol0(COL_BLACK);
    return QC_OK;
}

static qc_status page_close(page *pg, char ***files, size_t *nfiles)
{
    plend();
    open_tmp[0] = '\0';
    qc_status st = qc_atomic_file_commit(pg->file);
    pg->file = NULL;
    if (st != QC_OK)
        return st;
    return qc_file_list_add(files, nfiles, pg->path);
}

/* ---------------------------------------------------------------- */
/* Drawing helpers                                                    */
/* ---------------------------------------------------------------- */

/* Colour i; line style `dash` when >= 0, else the style paired with i. */
static void set_style(int i, int dash)
{
    plcol0(COL_FIRST + i % NCOLOURS);
    pllsty(dash >= 0 ? line_styles[dash % NCOLOURS] : line_styles[(i + i / NCOLOURS) % NCOLOURS]);
    plwidth(2.0);
}

static int marker_index(int i) { return (i + 2 * (i / NCOLOURS)) % NCOLOURS; }
static const char *marker(int i) { return markers[marker_index(i)]; }

#define MARKER_MM 1.9 /* marker half-size on the page */
#define MARK_BELOW 6  /* the downward triangle: a value below the axis */

/* A marker drawn as lines centred exactly on (x, y), in world
 * coordinates of the current viewport (font glyphs sit off their
 * reference point by the font's baseline metrics). `filled`: solid. */
static void draw_marker(double x, double y, int shape, int filled)
{
    PLFLT sx0, sx1, sy0, sy1, vx0, vx1, vy0, vy1, wx0, wx1, wy0, wy1;
    plgspa(&sx0, &sx1, &sy0, &sy1);
    plgvpd(&vx0, &vx1, &vy0, &vy1);
    plgvpw(&wx0, &wx1, &wy0, &wy1);
    double rx = MARKER_MM * (wx1 - wx0) / ((vx1 - vx0) * (sx1 - sx0));
    double ry = MARKER_MM * (wy1 - wy0) / ((vy1 - vy0) * (sy1 - sy0));
    static const double tri[4][2] = {{0, 1}, {-0.866, -0.5}, {0.866, -0.5}, {0, 1}};
    static const double dia[5][2] = {{0, 1.1}, {0.8, 0}, {0, -1.1}, {-0.8, 0}, {0, 1.1}};
    static const double sq[5][2] = {{-0.8, -0.8}, {0.8, -0.8}, {0.8, 0.8}, {-0.8, 0.8}, {-0.8, -0.8}};
    PLFLT px[25], py[25];
    int n = 0;
    switch (shape % NCOLOURS) {
    case 0: /* circle */
        for (n = 0; n < 25; n++) {
            px[n] = x + rx * cos(2.0 * M_PI * n / 24.0);
            py[n] = y + ry * sin(2.0 * M_PI * n / 24.0);
        }
        break;
    case 1:
        for (n = 0; n < 5; n++) {
            px[n] = x + rx * sq[n][0];
            py[n] = y + ry * sq[n][1];
        }
        break;
    case 2:
    case 6: /* triangle up, triangle down */
        for (n = 0; n < 4; n++) {
            px[n] = x + rx * tri[n][0];
            py[n] = y + (shape % NCOLOURS == 2 ? 1.0 : -1.0) * ry * tri[n][1];
        }
        break;
    case 3:
        for (n = 0; n < 5; n++) {
            px[n] = x + rx * dia[n][0];
            py[n] = y + ry * dia[n][1];
        }
        break;
    default: { /* ×, + and *: strokes through the centre */
        static const double ang[3][4] = {{45, 135, -1, -1}, {0, 90, -1, -1}, {90, 30, 150, -1}};
        int set = shape % NCOLOURS == 4 ? 0 : shape % NCOLOURS == 5 ? 1 : 2;
        for (int k = 0; k < 4 && ang[set][k] >= 0; k++) {
            double t = ang[set][k] * M_PI / 180.0;
            PLFLT lx[2] = {x - rx * cos(t), x + rx * cos(t)}, ly[2] = {y - ry * sin(t),
                                                                      y + ry * sin(t)};
            plline(2, lx, ly);
        }
        return;
    }
    }
    if (filled)
        plfill(n, px, py);
    plline(n, px, py);
}

/* Axes with a light grid under black frame, ticks and numbers. */
static void frame(double x0, double x1, double y0, double y1, const char *xopt_extra,
                  const char *yopt_extra)
{
    char xg[16], yg[16], xb[32], yb[32];
    snprintf(xg, sizeof xg, "g%s", xopt_extra);
    snprintf(yg, sizeof yg, "g%s", yopt_extra);
    snprintf(xb, sizeof xb, "bcnst%s", xopt_extra);
    snprintf(yb, sizeof yb, "bcnstv%s", yopt_extra);
    plwind(x0, x1, y0, y1);
    plcol0(COL_GRID);
    pllsty(1);
    plwidth(0.7);
    plbox(xg, 0.0, 0, yg, 0.0, 0);
    plcol0(COL_BLACK);
    plwidth(1.0);
    plbox(xb, 0.0, 0, yb, 0.0, 0);
}

/* Frame of a panel of the bits figure: x numbers only when `numbers`,
 * major x ticks every `xtick` (0: automatic). */
static void frame_ticks(double x0, double x1, double y0, double y1, int numbers, double xtick,
                        double ytick, const char *yopt_extra)
{
    char yg[16], yb[32];
    snprintf(yg, sizeof yg, "g%s", yopt_extra);
    snprintf(yb, sizeof yb, "bcnstv%s", yopt_extra);
    plwind(x0, x1, y0, y1);
    plcol0(COL_GRID);
    pllsty(1);
    plwidth(0.7);
    plbox("g", xtick, 1, yg, 0.0, 0);
    plcol0(COL_BLACK);
    plwidth(1.0);
    if (ytick > 1.0 && strchr(yopt_extra, 'l')) {
        /* a log axis over many decades: numbers every `ytick` decades
         * only, so that they do not run into each other */
        plbox(numbers ? "bcnst" : "bcst", xtick, 1, "bcstl", 0.0, 0);
        for (double d = ceil(y0); d <= y1 + 1e-9; d += ytick) {
            char num[32];
            snprintf(num, sizeof num, "10#u%d#d", (int)d);
            plmtex("lv", 0.7, (d - y0) / (y1 - y0), 1.0, num);
        }
    } else {
        plbox(numbers ? "bcnst" : "bcst", xtick, 1, yb, 0.0, 0);
    }
}

/* A polyline broken at NaN values in colour `style` (line style `dash`
 * when >= 0), with markers centred on every `every`-th point (starting at
 * `phase`). */
static void curve(int n, const double *x, const double *y, int style, int dash, int every,
                  int phase)
{
    set_style(style, dash);
    int start = -1;
    for (int i = 0; i <= n; i++) {
        int ok = i < n && isfinite(x[i]) && isfinite(y[i]);
        if (ok && start < 0)
            start = i;
        if (!ok && start >= 0) {
            if (i - start > 1)
                plline(i - start, x + start, y + start);
            start = -1;
        }
    }
    pllsty(1);
    plwidth(1.5);
    for (int i = phase % (every > 0 ? every : 1); every > 0 && i < n; i += every)
        if (isfinite(x[i]) && isfinite(y[i]))
            draw_marker(x[i], y[i], marker_index(style), 0);
}

/* Axis labels and title placed clear of the tick numbers. */
static void labels(const char *xlabel, const char *ylabel, const char *title)
{
    plcol0(COL_BLACK);
    if (xlabel && xlabel[0])
        plmtex("b", 3.0, 0.5, 0.5, xlabel);
    if (ylabel && ylabel[0])
        plmtex("l", 5.8, 0.5, 0.5, ylabel);
    if (title && title[0]) {
        /* shrink a long title to fit the width of the page */
        PLFLT def, ht;
        plgchr(&def, &ht);
        size_t n = strlen(title);
        double scale = n > 64 ? 64.0 / (double)n : 1.0;
        plschr(0.0, scale * ht / def);
        plmtex("t", 1.4 / scale, 0.5, 0.5, title);
        plschr(0.0, ht / def);
    }
}

/* Viewport of a one-panel figure, room on the right for the legend. */
#define VP_LEFT 0.15
#define VP_RIGHT 0.78

typedef struct {
    int n;
    const char *text[40];
    char buf[40][96];
    PLINT opt[40], text_col[40], line_col[40], line_sty[40], sym_col[40], sym_num[40];
    PLFLT line_w[40], sym_scale[40];
    const char *sym[40];
} legend;

static void legend_add(legend *lg, const char *text, int style, int with_marker)
{
    if (lg->n >= 40)
        return;
    int i = lg->n++;
    snprintf(lg->buf[i], sizeof lg->buf[i], "%s", text);
    lg->text[i] = lg->buf[i];
    lg->opt[i] = PL_LEGEND_LINE | (with_marker ? PL_LEGEND_SYMBOL : 0);
    lg->text_col[i] = COL_BLACK;
    lg->line_col[i] = COL_FIRST + style % NCOLOURS;
    lg->line_sty[i] = line_styles[(style + style / NCOLOURS) % NCOLOURS];
    lg->line_w[i] = 2.0;
    lg->sym_col[i] = lg->line_col[i];
    lg->sym_scale[i] = 1.0;
    lg->sym_num[i] = 1;
    lg->sym[i] = marker(style);
}

static void legend_draw(legend *lg, PLINT position, double plot_width)
{
    if (lg->n == 0)
        return;
    PLFLT w, h;
    pllsty(1);
    plwidth(1.0);
    int ncol = lg->n > 12 ? 2 : 1;
    for (int i = 0; i < lg->n; i++)
        lg->sym_scale[i] = font_scale;
    pllegend(&w, &h, PL_LEGEND_BACKGROUND | PL_LEGEND_BOUNDING_BOX, position, 0.015, 0.0, plot_width,
             COL_WHITE, COL_BLACK, 1, (lg->n + ncol - 1) / ncol, ncol, lg->n, lg->opt, 0.8, 0.75 * font_scale,
             2.0, 0.0, lg->text_col, lg->text, NULL, NULL, NULL, NULL, lg->line_col, lg->line_sty,
             lg->line_w, lg->sym_col, lg->sym_scale, lg->sym_num, lg->sym);
}

/* ---------------------------------------------------------------- */
/* Data                                                               */
/* ---------------------------------------------------------------- */

/* A number from a point's result, NaN when the point failed or lacks it. */
static double field(json_t *rec, const char *name)
{
    const char *status = json_string_value(json_object_get(rec, "status"));
    if (!status || strcmp(status, "ok") != 0)
        return NAN;
    json_t *v = json_object_get(json_object_get(rec, "result"), name);
    return json_is_number(v) ? json_number_value(v) : NAN;
}

static size_t compose(const qc_scenario *sc, size_t alpha, const size_t *vi)
{
    size_t index = alpha;
    for (size_t k = 0; k < sc->naxes; k++)
        index = index * sc->axes[k].n + vi[k];
    return index;
}

/* Next combination of the axes not in `fixed` (odometer); 0 when done. */
static int next_combo(const qc_scenario *sc, size_t *vi, const int *fixed)
{
    for (size_t k = sc->naxes; k-- > 0;) {
        if (fixed[k])
            continue;
        if (++vi[k] < sc->axes[k].n)
            return 1;
        vi[k] = 0;
    }
    return 0;
}

/* ---------------------------------------------------------------- */
/* Words and units                                                    */
/* ---------------------------------------------------------------- */

/* The words and unit of a design key (a model parameter's unit is taken
 * from `model` first, then from any model that has the name). */
static void key_words(const char *key, const char *model, char *words, size_t wcap,
                      const char **unit)
{
    static const char *const known[][3] = {
        {"snr-db", "SNR", "dB"},
        {"osnr-db", "OSNR", "dB"},
        {"received-dbm", "received power", "dBm"},
        {"peak-dbm", "peak received power", "dBm"},
        {"extinction-db", "extinction ratio", "dB"},
        {"apd-gain", "APD gain", ""},
        {"apd-k", "ionization ratio k", ""},
        {"photons", "mean photons per slot", ""},
        {"quantizer", "quantizer", ""},
        {"objective", "objective", ""},
    };
    *unit = "";
    for (size_t i = 0; i < sizeof known / sizeof known[0]; i++)
        if (strcmp(key, known[i][0]) == 0) {
            snprintf(words, wcap, "%s", known[i][1]);
            *unit = known[i][2];
            return;
        }
    snprintf(words, wcap, "%s", key);
    for (char *c = words; *c; c++)
        if (*c == '-')
            *c = ' ';
    const qc_model_type *own = qc_model_type_find(model);
    int k = own ? qc_model_param_index(own, key) : -1;
    if (k >= 0) {
        *unit = own->params[k].unit;
        return;
    }
    const qc_model_type *const *types = qc_model_types();
    for (size_t t = 0; types[t]; t++) {
        k = qc_model_param_index(types[t], key);
        if (k >= 0 && types[t]->params[k].unit[0]) {
            *unit = types[t]->params[k].unit;
            return;
        }
    }
    size_t n = strlen(key);
    if (n > 4 && strcmp(key + n - 4, "-dbm") == 0) {
        words[n - 4] = '\0';
        *unit = "dBm";
    } else if (n > 3 && strcmp(key + n - 3, "-db") == 0) {
        words[n - 3] = '\0';
        *unit = "dB";
    }
}

/* A value as printed in words: a leading minus sign as U+2212. */
static void value_text(const char *v, char *out, size_t cap)
{
    if (v[0] == '-')
        snprintf(out, cap, "\xe2\x88\x92%s", v + 1);
    else
        snprintf(out, cap, "%s", v);
}

/* The model of the first alphabet (NULL when it is a sweep axis). */
static const char *scenario_model(const qc_scenario *sc)
{
    return qc_settings_get(sc->alphabets[0].settings, "model");
}

static int model_counts(const char *model)
{
    const qc_model_type *t = qc_model_type_find(model);
    return t && t->output == QC_OUTPUT_COUNTS;
}

/* "received power −24 dBm", "3-bit quantizer", "optimal quantizer". */
static void axis_value_words(const qc_scenario *sc, size_t k, size_t v, char *out, size_t cap)
{
    const sc_axis *a = &sc->axes[k];
    char words[96], val[96];
    const char *unit;
    value_text(a->values[v], val, sizeof val);
    if (strcmp(a->key, "bits") == 0) {
        snprintf(out, cap, "%s-bit quantizer", val);
        return;
    }
    if (strcmp(a->key, "cells") == 0) {
        snprintf(out, cap, "%s cells", val);
        return;
    }
    if (!a->number) {
        if (strcmp(a->key, "quantizer") == 0)
            snprintf(out, cap, "%s quantizer", val);
        else {
            key_words(a->key, scenario_model(sc), words, sizeof words, &unit);
            snprintf(out, cap, "%s %s", words, val);
        }
        return;
    }
    key_words(a->key, scenario_model(sc), words, sizeof words, &unit);
    snprintf(out, cap, "%s %s%s%s", words, val, unit[0] ? " " : "", unit);
}

/* Axis label of a design key: "received power (dBm)". The bits and cells
 * axes are named after what they count for the model: an ADC (uniform
 * quantizer of a continuous output), a quantizer, or the cells of a
 * photon counter's counts. */
static void key_label(const qc_scenario *sc, const char *key, char *buf, size_t cap)
{
    const char *model = scenario_model(sc);
    int counts = model_counts(model);
    const char *q = qc_settings_get(sc->alphabets[0].settings, "quantizer");
    int uniform = q && strcmp(q, "uniform") == 0;
    for (size_t k = 0; k < sc->naxes; k++)
        if (strcmp(sc->axes[k].key, "quantizer") == 0)
            uniform = 0;
    if (strcmp(key, "bits") == 0) {
        snprintf(buf, cap, "%s", counts    ? "count quantizer (bits; 2^bits count cells)"
                                 : uniform ? "ADC resolution (bits)"
                                           : "quantizer resolution (bits)");
        return;
    }
    if (strcmp(key, "cells") == 0) {
        snprintf(buf, cap, "%s", counts ? "count cells (quantizer cells)" : "quantizer cells");
        return;
    }
    char words[96];
    const char *unit;
    key_words(key, model, words, sizeof words, &unit);
    snprintf(buf, cap, "%s%s%s%s", words, unit[0] ? " (" : "", unit, unit[0] ? ")" : "");
}

/* 1 when the point's alphabet is two-dimensional (QAM: rates per complex
 * symbol, levels per quadrature). */
static int record_qam(json_t *rec)
{
    json_t *d = json_object_get(json_object_get(rec, "result"), "dimensions");
    return json_is_integer(d) && json_integer_value(d) == 2;
}

static int alphabet_qam(const qc_scenario *sc, size_t a)
{
    const char *s = qc_settings_get(sc->alphabets[a].settings, "alphabet");
    return s && strncmp(s, "qam", 3) == 0;
}

/* Unit of the rates of alphabets `a0` … `a1 − 1`. */
static const char *rate_unit(const qc_scenario *sc, size_t a0, size_t a1)
{
    size_t nq = 0;
    for (size_t a = a0; a < a1; a++)
        nq += (size_t)alphabet_qam(sc, a);
    return nq == 0 ? "bit/use" : nq == a1 - a0 ? "bit/complex symbol"
                                              : "bit/use; QAM: bit/complex symbol";
}

/* "_key-value" for file names: a negative value is written "minus…" so
 * that no name holds a double hyphen. */
static void file_part(char *file, size_t fcap, const char *key, const char *value)
{
    size_t fl = strlen(file);
    if (value[0] == '-')
        snprintf(file + fl, fcap - fl, "_%s-minus%s", key, value + 1);
    else
        snprintf(file + fl, fcap - fl, "_%s-%s", key, value);
}

static void safe_name(char *s)
{
    for (; *s; s++)
        if (!((*s >= 'a' && *s <= 'z') || (*s >= 'A' && *s <= 'Z') || (*s >= '0' && *s <= '9') ||
              *s == '-' || *s == '_' || *s == '.' || *s == '+'))
            *s = '_';
}

static void append(char *buf, size_t cap, const char *sep, const char *text)
{
    if (!text[0])
        return;
    size_t l = strlen(buf);
    snprintf(buf + l, cap - l, "%s%s", l ? sep : "", text);
}

static void range_of(const double *v, size_t n, double *lo, double *hi)
{
    *lo = INFINITY;
    *hi = -INFINITY;
    for (size_t i = 0; i < n; i++)
        if (isfinite(v[i])) {
            if (v[i] < *lo)
                *lo = v[i];
            if (v[i] > *hi)
                *hi = v[i];
        }
}

static void pad_range(double *lo, double *hi, double frac)
{
    if (!isfinite(*lo) || !isfinite(*hi)) {
        *lo = 0;
        *hi = 1;
    }
    double span = *hi - *lo;
    if (span <= 0)
        span = fabs(*hi) > 0 ? fabs(*hi) : 1.0;
    *lo -= frac * span;
    *hi += frac * span;
}

static int any_finite(const double *v, size_t n)
{
    for (size_t i = 0; i < n; i++)
        if (isfinite(v[i]))
            return 1;
    return 0;
}

static qc_status note(char ***notes, size_t *nnotes, const char *fmt, const char *a,
                      const char *b)
{
    char text[4600];
    snprintf(text, sizeof text, fmt, a, b);
    return qc_file_list_add(notes, nnotes, text);
}

/* ---------------------------------------------------------------- */
/* Layout: panels, line styles and files                              */
/* ---------------------------------------------------------------- */

#define MAX_PANELS 6 /* small multiples per figure                       */
#define MAX_STYLES 4 /* combinations told apart by line style            */

enum { PANEL_NONE = -1, PANEL_GROUP = -2 };

/* How the dimensions of a figure kind beyond its x axis and its curves are
 * spread: one of them over panels of one figure (an axis, or the kind's
 * group: the alphabets of rate against x, the operating points of rate
 * against bits), a few more over line styles, the rest over files. */
typedef struct {
    int panel;                            /* axis index, PANEL_GROUP or PANEL_NONE */
    size_t npanels;
    int style[QC_SCENARIO_MAX_AXES];      /* 1: told apart by line style */
    size_t nstyles;                       /* combinations of the style axes */
    int fixed[QC_SCENARIO_MAX_AXES];      /* 1: not iterated over files  */
    size_t ncols, nrows;
} layout;

static void choose_layout(const qc_scenario *sc, const int *used, size_t ngroup,
                          int group_first, layout *L)
{
    memset(L, 0, sizeof *L);
    L->panel = PANEL_NONE;
    L->npanels = 1;
    L->nstyles = 1;
    int taken[QC_SCENARIO_MAX_AXES] = {0};
    if (group_first && ngroup > 1 && ngroup <= MAX_PANELS) {
        L->panel = PANEL_GROUP;
        L->npanels = ngroup;
    } else {
        size_t best = 1;
        for (size_t k = 0; k < sc->naxes; k++)
            if (!used[k] && sc->axes[k].n > best && sc->axes[k].n <= MAX_PANELS) {
                best = sc->axes[k].n;
                L->panel = (int)k;
            }
        if (L->panel >= 0) {
            L->npanels = best;
            taken[L->panel] = 1;
        } else if (ngroup > 1 && ngroup <= MAX_PANELS) {
            L->panel = PANEL_GROUP;
            L->npanels = ngroup;
        }
    }
    /* line styles: the remaining axes, largest first, while few enough */
    for (;;) {
        int pick = -1;
        for (size_t k = 0; k < sc->naxes; k++)
            if (!used[k] && !taken[k] && !L->style[k] && sc->axes[k].n > 1 &&
                L->nstyles * sc->axes[k].n <= MAX_STYLES &&
                (pick < 0 || sc->axes[k].n > sc->axes[pick].n))
                pick = (int)k;
        if (pick < 0)
            break;
        L->style[pick] = 1;
        L->nstyles *= sc->axes[pick].n;
    }
    for (size_t k = 0; k < sc->naxes; k++)
        L->fixed[k] = used[k] || (int)k == L->panel || L->style[k] || sc->axes[k].n == 1;
    L->ncols = L->npanels <= 3 ? L->npanels : L->npanels == 4 ? 2 : 3;
    L->nrows = (L->npanels + L->ncols - 1) / L->ncols;
}

/* Set the style axes of vi to combination s (last style axis fastest). */
static void set_style_combo(const qc_scenario *sc, const layout *L, size_t s, size_t *vi)
{
    for (size_t k = sc->naxes; k-- > 0;)
        if (L->style[k]) {
            vi[k] = s % sc->axes[k].n;
            s /= sc->axes[k].n;
        }
}

static void style_words(const qc_scenario *sc, const layout *L, size_t s, char *out, size_t cap)
{
    size_t vi[QC_SCENARIO_MAX_AXES] = {0};
    set_style_combo(sc, L, s, vi);
    out[0] = '\0';
    for (size_t k = 0; k < sc->naxes; k++)
        if (L->style[k]) {
            char w[160];
            axis_value_words(sc, k, vi[k], w, sizeof w);
            append(out, cap, ", ", w);
        }
}

/* File name parts and title words of the axes iterated over files, and
 * title words of the single-valued axes. */
static void file_combo_text(const qc_scenario *sc, const layout *L, const size_t *vi, char *file,
                            size_t fcap, char *title, size_t tcap)
{
    for (size_t k = 0; k < sc->naxes; k++) {
        const sc_axis *a = &sc->axes[k];
        if (L->fixed[k] && a->n != 1)
            continue;
        char w[160];
        axis_value_words(sc, k, vi[k], w, sizeof w);
        append(title, tcap, ", ", w);
        if (a->n > 1)
            file_part(file, fcap, a->key, a->values[vi[k]]);
    }
}

/* Page geometry, in pixels, of a figure of L's panels. `split`: panels
 * with a rate part above a loss part. */
#define PX_LEFT 125.0
#define PX_GAP 115.0
#define PX_LEGEND 330.0
#define PX_TOP 110.0
#define PX_PANEL_TITLE 32.0
#define PX_BOTTOM 78.0
#define PX_ROW_GAP 95.0

static void page_size(const layout *L, int split, int *w, int *h)
{
    *w = (int)(page_width * (1.0 + 0.62 * (double)(L->ncols - 1)));
    *h = (int)(page_height * (split ? 1.3 : 1.0) * (1.0 + 0.8 * (double)(L->nrows - 1)));
}

/* Viewport (normalized page coordinates) of panel p: x0, x1, y0, y1. */
static void panel_box(const layout *L, size_t p, int w, int h, double box[4])
{
    double cw = ((double)w - PX_LEFT - PX_LEGEND - PX_GAP * (double)(L->ncols - 1)) /
                (double)L->ncols;
    double ch = ((double)h - PX_TOP - PX_BOTTOM - PX_ROW_GAP * (double)(L->nrows - 1)) /
                (double)L->nrows;
    size_t col = p % L->ncols, row = p / L->ncols;
    double x0 = PX_LEFT + (double)col * (cw + PX_GAP);
    double ytop = PX_TOP + (double)row * (ch + PX_ROW_GAP) + (L->npanels > 1 ? PX_PANEL_TITLE : 0);
    double yb = PX_TOP + (double)row * (ch + PX_ROW_GAP) + ch;
    box[0] = x0 / w;
    box[1] = (x0 + cw) / w;
    box[2] = 1.0 - yb / h;
    box[3] = 1.0 - ytop / h;
}

/* Two-line figure title at the top of the page: the scenario's title and
 * what the figure shows. */
/* Three-line figure title at the top of the page: the scenario's title,
 * what the figure shows, and the values it is drawn at. */
static void figure_title(const qc_scenario *sc, const char *subject, const char *details, int w,
                         int h)
{
    plvpor(0.0, 1.0, 0.0, 1.0);
    plwind(0.0, 1.0, 0.0, 1.0);
    plcol0(COL_BLACK);
    PLFLT def, ht;
    plgchr(&def, &ht);
    double fit = (double)w / 12.0; /* characters that fit the width (about) */
    if (sc->title && sc->title[0]) {
        plschr(0.0, 1.1 * ht / def);
        plptex(0.5, 1.0 - 30.0 / h, 1.0, 0.0, 0.5, sc->title);
    }
    const char *line[2] = {subject, details};
    for (int i = 0; i < 2; i++) {
        size_t n = strlen(line[i]);
        double scale = (double)n > fit ? fit / (double)n : 1.0;
        plschr(0.0, 0.9 * scale * ht / def);
        plptex(0.5, 1.0 - (56.0 + 22.0 * i) / h, 1.0, 0.0, 0.5, line[i]);
    }
    plschr(0.0, ht / def);
}

static void panel_title(const char *text)
{
    plcol0(COL_BLACK);
    plmtex("t", 0.8, 0.5, 0.5, text);
}

/* The legend in the strip right of the panels. */
static void legend_strip(legend *lg, int w, int h)
{
    plvpor(1.0 - (PX_LEGEND - 8.0) / w, 1.0, 0.1, 1.0 - (PX_TOP + PX_PANEL_TITLE) / h);
    plwind(0.0, 1.0, 0.0, 1.0);
    legend_draw(lg, PL_POSITION_TOP | PL_POSITION_LEFT | PL_POSITION_INSIDE, 0.13);
}

/* Decades between major ticks of a log axis spanning `decades`. */
static double log_step(double decades) { return decades > 4.0 ? ceil(decades / 4.0) : 1.0; }

/* ---------------------------------------------------------------- */
/* Rate against x, one curve per bit count                            */
/* ---------------------------------------------------------------- */

static qc_status plot_rate_vs_x(const qc_scenario *sc, json_t *const *records, const char *dir,
                                const char *device, char ***files, size_t *nfiles,
                                char ***notes, size_t *nnotes)
{
    const sc_plots *p = &sc->plots;
    const sc_axis *xa = &sc->axes[p->x_axis];
    const sc_axis *ca = p->curve_axis >= 0 ? &sc->axes[p->curve_axis] : NULL;
    size_t ncurves = ca ? ca->n : 1, nx = xa->n;
    int used[QC_SCENARIO_MAX_AXES] = {0};
    used[p->x_axis] = 1;
    if (ca)
        used[p->curve_axis] = 1;
    layout L;
    choose_layout(sc, used, sc->nalphabets, 0, &L);
    int alpha_panels = L.panel == PANEL_GROUP;
    size_t np = L.npanels, ns = L.nstyles;
    /* rate[((p * ns + s) * ncurves + c) * nx + j]; unq[(p * ns + s) * nx + j] */
    double *x = malloc(nx * sizeof *x), *rate = malloc(np * ns * ncurves * nx * sizeof *rate),
           *unq = malloc(np * ns * nx * sizeof *unq);
    if (!x || !rate || !unq) {
        free(x);
        free(rate);
        free(unq);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    char xlabel[160];
    key_label(sc, xa->key, xlabel, sizeof xlabel);
    qc_status st = QC_OK;
    size_t count = 0;
    size_t ngroups = alpha_panels ? 1 : sc->nalphabets;
    for (size_t g = 0; g < ngroups && st == QC_OK; g++) {
        size_t vi[QC_SCENARIO_MAX_AXES] = {0};
        do {
            if (count++ >= MAX_PLOTS_PER_KIND)
                break;
            char ftext[1024] = "", ttext[640] = "";
            file_combo_text(sc, &L, vi, ftext, sizeof ftext, ttext, sizeof ttext);
            page pg;
            snprintf(pg.path, sizeof pg.path, "%s/rate-vs-%s%s%s%s.%s", dir, xa->key,
                     alpha_panels ? "" : "_", alpha_panels ? "" : sc->alphabets[g].name, ftext,
                     extension(p->format));
            safe_name(strrchr(pg.path, '/') + 1);
            for (size_t pi = 0; pi < np; pi++)
                for (size_t s = 0; s < ns; s++) {
                    size_t a = alpha_panels ? pi : g;
                    if (L.panel >= 0)
                        vi[L.panel] = pi;
                    set_style_combo(sc, &L, s, vi);
                    for (size_t j = 0; j < nx; j++) {
                        vi[p->x_axis] = j;
                        double *u = &unq[(pi * ns + s) * nx + j];
                        *u = NAN;
                        for (size_t c = 0; c < ncurves; c++) {
                            if (ca)
                                vi[p->curve_axis] = c;
                            json_t *rec = records[compose(sc, a, vi)];
                            rate[((pi * ns + s) * ncurves + c) * nx + j] = field(rec, "rate_bits");
                            /* the unquantized rate does not depend on the
                             * quantizer: take it from any curve that has it */
                            if (!isfinite(*u))
                                *u = field(rec, "unquantized_bits");
                        }
                    }
                }
            if (!any_finite(rate, np * ns * ncurves * nx)) {
                st = note(notes, nnotes, "skipped %s: every point in it failed (see %s)",
                          strrchr(pg.path, '/') + 1, "results.csv");
                continue;
            }
            double x0, x1, y1, dummy;
            for (size_t j = 0; j < nx; j++)
                x[j] = xa->number[j];
            range_of(x, nx, &x0, &x1);
            /* positive values over two decades or more: logarithmic x */
            int logx = x0 > 0 && x1 / x0 >= 100.0;
            if (logx) {
                for (size_t j = 0; j < nx; j++)
                    x[j] = log10(x[j]);
                x0 = log10(x0);
                x1 = log10(x1);
            }
            pad_range(&x0, &x1, nx > 1 ? 0.0 : 0.5);
            range_of(rate, np * ns * ncurves * nx, &dummy, &y1);
            double u1;
            range_of(unq, np * ns * nx, &dummy, &u1);
            if (isfinite(u1) && u1 > y1)
                y1 = u1;
            if (!isfinite(y1) || y1 <= 0)
                y1 = 1.0;
            y1 *= 1.08;

            int w, h;
            page_size(&L, 0, &w, &h);
            if ((st = page_open(&pg, device, w, h)) != QC_OK)
                break;
            pladv(0);
            plschr(0.0, font_scale);
            char subject[1200] = "";
            if (!alpha_panels)
                append(subject, sizeof subject, ": ", sc->alphabets[g].label);
            char what[300];
            snprintf(what, sizeof what, "information rate against %s", xlabel);
            if (!alpha_panels) {
                append(subject, sizeof subject, ": ", what);
            } else {
                snprintf(subject, sizeof subject, "%s", what);
            }
            figure_title(sc, subject, ttext, w, h);
            const char *unit = alpha_panels ? rate_unit(sc, 0, sc->nalphabets)
                                            : rate_unit(sc, g, g + 1);
            char ylabel[160];
            snprintf(ylabel, sizeof ylabel, "information rate (%s)", unit);
            int every = nx > 10 ? (int)(nx / 8) : 1;
            for (size_t pi = 0; pi < np; pi++) {
                double box[4];
                panel_box(&L, pi, w, h, box);
                plvpor(box[0], box[1], box[2], box[3]);
                frame(x0, x1, 0.0, y1, logx ? "l" : "", "");
                labels(pi / L.ncols == L.nrows - 1 || pi + L.ncols >= np ? xlabel : "",
                       pi % L.ncols == 0 ? ylabel : "", "");
                if (np > 1) {
                    char pt[200];
                    if (alpha_panels) {
                        snprintf(pt, sizeof pt, "%s%s", sc->alphabets[pi].label,
                                 alphabet_qam(sc, pi) ? " (per complex symbol)" : "");
                    } else
                        axis_value_words(sc, (size_t)L.panel, pi, pt, sizeof pt);
                    panel_title(pt);
                }
                for (size_t s = 0; s < ns; s++) {
                    for (size_t c = 0; c < ncurves; c++)
                        curve((int)nx, x, rate + ((pi * ns + s) * ncurves + c) * nx, (int)c,
                              ns > 1 ? (int)s : -1, every, (int)c);
                    /* unquantized: thick black line (in the style's dashes) */
                    const double *u = unq + (pi * ns + s) * nx;
                    plcol0(COL_BLACK);
                    pllsty(ns > 1 ? line_styles[s % NCOLOURS] : 1);
                    plwidth(3.0);
                    for (size_t j = 0; j + 1 < nx; j++)
                        if (isfinite(u[j]) && isfinite(u[j + 1]))
                            plline(2, &x[j], &u[j]);
                    pllsty(1);
                }
            }
            legend lg = {0};
            for (size_t c = 0; c < ncurves; c++) {
                char name[96];
                if (ca)
                    snprintf(name, sizeof name, "%s %s", ca->values[c],
                             strcmp(ca->key, "bits") == 0
                                 ? (strcmp(ca->values[c], "1") ? "bits" : "bit")
                                 : ca->key);
                else
                    snprintf(name, sizeof name, "quantized");
                int drawn = 0;
                for (size_t q = 0; q < np * ns && !drawn; q++)
                    drawn = any_finite(rate + (q * ncurves + c) * nx, nx);
                if (!drawn)
                    append(name, sizeof name, " ", "(every point failed)");
                legend_add(&lg, name, (int)c, 1);
                if (ns > 1)
                    lg.line_sty[lg.n - 1] = 1;
            }
            legend_add(&lg, "unquantized", 0, 0);
            lg.line_col[lg.n - 1] = COL_BLACK;
            lg.line_sty[lg.n - 1] = 1;
            lg.line_w[lg.n - 1] = 3.0;
            for (size_t s = 0; ns > 1 && s < ns; s++) {
                char name[160];
                style_words(sc, &L, s, name, sizeof name);
                legend_add(&lg, name, 0, 0);
                lg.line_col[lg.n - 1] = COL_BLACK;
                lg.line_sty[lg.n - 1] = line_styles[s % NCOLOURS];
                lg.line_w[lg.n - 1] = 2.0;
            }
            legend_strip(&lg, w, h);
            st = page_close(&pg, files, nfiles);
        } while (st == QC_OK && next_combo(sc, vi, L.fixed));
    }
    free(x);
    free(rate);
    free(unq);
    return st;
}

/* ---------------------------------------------------------------- */
/* Rate against bits at operating points, one curve per alphabet      */
/* ---------------------------------------------------------------- */

/* Lower panel on a log scale: values below the floor (0 among them) are
 * left out of the lines and marked on the floor instead. */
#define LOSS_DECADES 6.0

static qc_status plot_rate_vs_bits(const qc_scenario *sc, json_t *const *records,
                                   const char *dir, const char *device, char ***files,
                                   size_t *nfiles, char ***notes, size_t *nnotes)
{
    const sc_plots *p = &sc->plots;
    const sc_axis *ba = &sc->axes[p->curve_axis];
    const sc_axis *xa = p->x_axis >= 0 ? &sc->axes[p->x_axis] : NULL;
    size_t nb = ba->n, na = sc->nalphabets;
    size_t nat = xa ? p->nbits_at : 1;
    int used[QC_SCENARIO_MAX_AXES] = {0};
    used[p->curve_axis] = 1;
    if (xa)
        used[p->x_axis] = 1;
    layout L;
    choose_layout(sc, used, nat, 1, &L);
    int point_panels = L.panel == PANEL_GROUP;
    size_t np = L.npanels, ns = L.nstyles;
    size_t ncell = np * ns * na * nb; /* [((p * ns + s) * na + a) * nb + b] */
    double *bx = malloc(nb * sizeof *bx), *rate = malloc(ncell * sizeof *rate),
           *low = malloc(ncell * sizeof *low), *unq = malloc(np * ns * na * sizeof *unq);
    unsigned char *below = malloc(ncell);
    if (!bx || !rate || !low || !unq || !below) {
        free(bx);
        free(rate);
        free(low);
        free(unq);
        free(below);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    for (size_t b = 0; b < nb; b++)
        bx[b] = ba->number ? ba->number[b] : (double)b;
    qc_status st = QC_OK;
    size_t count = 0;
    char blabel[160];
    key_label(sc, ba->key, blabel, sizeof blabel);
    size_t ngroups = point_panels ? 1 : nat;
    for (size_t o = 0; o < ngroups && st == QC_OK; o++) {
        size_t vi[QC_SCENARIO_MAX_AXES] = {0};
        do {
            if (count++ >= MAX_PLOTS_PER_KIND)
                break;
            char ftext[1024] = "", ttext[640] = "";
            if (xa && !point_panels && xa->n > 1) { /* one value: named below */
                char w[160];
                axis_value_words(sc, (size_t)p->x_axis, p->bits_at[o], w, sizeof w);
                append(ttext, sizeof ttext, ", ", w);
                file_part(ftext, sizeof ftext, xa->key, xa->values[p->bits_at[o]]);
            }
            file_combo_text(sc, &L, vi, ftext, sizeof ftext, ttext, sizeof ttext);
            page pg;
            snprintf(pg.path, sizeof pg.path, "%s/rate-vs-%s%s.%s", dir, ba->key, ftext,
                     extension(p->format));
            safe_name(strrchr(pg.path, '/') + 1);
            /* the lower panel shows the SNR penalty when the model defines
             * one at these points, else the loss in bits */
            int penalty_db = 0;
            for (int pass = 0; pass < 2; pass++)
                for (size_t pi = 0; pi < np; pi++)
                    for (size_t s = 0; s < ns; s++) {
                        if (xa)
                            vi[p->x_axis] = p->bits_at[point_panels ? pi : o];
                        if (L.panel >= 0)
                            vi[L.panel] = pi;
                        set_style_combo(sc, &L, s, vi);
                        for (size_t a = 0; a < na; a++) {
                            size_t cell = (pi * ns + s) * na + a;
                            if (pass == 1)
                                unq[cell] = NAN;
                            for (size_t b = 0; b < nb; b++) {
                                vi[p->curve_axis] = b;
                                json_t *rec = records[compose(sc, a, vi)];
                                if (pass == 0) {
                                    penalty_db |= isfinite(field(rec, "snr_penalty_db"));
                                    continue;
                                }
                                rate[cell * nb + b] = field(rec, "rate_bits");
                                low[cell * nb + b] =
                                    field(rec, penalty_db ? "snr_penalty_db" : "loss_bits");
                                if (!isfinite(unq[cell]))
                                    unq[cell] = field(rec, "unquantized_bits");
                            }
                        }
                    }
            vi[p->curve_axis] = 0;
            if (!any_finite(rate, ncell)) {
                st = note(notes, nnotes, "skipped %s: every point in it failed (see %s)",
                          strrchr(pg.path, '/') + 1, "results.csv");
                continue;
            }
            double x0, x1, y1, dummy;
            range_of(bx, nb, &x0, &x1);
            pad_range(&x0, &x1, 0.03);
            range_of(rate, ncell, &dummy, &y1);
            double u1;
            range_of(unq, np * ns * na, &dummy, &u1);
            if (isfinite(u1) && (!isfinite(y1) || u1 > y1))
                y1 = u1;
            if (!isfinite(y1) || y1 <= 0)
                y1 = 1.0;
            y1 *= 1.08;
            /* lower panel: penalty in dB (linear) or loss in bits (log) */
            int logscale = !penalty_db;
            double l0, l1;
            int any_below = 0;
            memset(below, 0, ncell);
            if (logscale) {
                double floor_v = INFINITY, top = -INFINITY;
                for (size_t i = 0; i < ncell; i++)
                    if (isfinite(low[i]) && low[i] > 0) {
                        floor_v = fmin(floor_v, low[i]);
                        top = fmax(top, low[i]);
                    }
                if (!isfinite(floor_v)) {
                    floor_v = 1e-6;
                    top = 1.0;
                }
                /* at most LOSS_DECADES decades; smaller losses (and 0) are
                 * marked on the floor as below the axis range */
                floor_v = fmax(floor_v, pow(10.0, -LOSS_DECADES) * top);
                l0 = floor(log10(floor_v));
                l1 = ceil(log10(top) + 0.05);
                if (l1 <= l0)
                    l1 = l0 + 1;
                for (size_t i = 0; i < ncell; i++) {
                    if (isfinite(low[i]) && low[i] < pow(10.0, l0)) {
                        below[i] = 1;
                        any_below = 1;
                        low[i] = NAN;
                    } else {
                        low[i] = isfinite(low[i]) ? log10(low[i]) : NAN;
                    }
                }
            } else {
                range_of(low, ncell, &l0, &l1);
                if (!isfinite(l0)) {
                    l0 = 0;
                    l1 = 1;
                }
                l0 = fmin(l0, 0.0);
                pad_range(&l0, &l1, 0.05);
            }

            int w, h;
            page_size(&L, 1, &w, &h);
            if ((st = page_open(&pg, device, w, h)) != QC_OK)
                break;
            pladv(0);
            plschr(0.0, 0.95 * font_scale);
            char subject[1400];
            snprintf(subject, sizeof subject, "information rate against %s", blabel);
            figure_title(sc, subject, ttext, w, h);
            char ylabel[160];
            snprintf(ylabel, sizeof ylabel, "rate (%s)", rate_unit(sc, 0, na));
            char lylabel[160];
            if (penalty_db)
                snprintf(lylabel, sizeof lylabel, "SNR penalty (dB)");
            else
                snprintf(lylabel, sizeof lylabel, "rate loss (%s)", rate_unit(sc, 0, na));
            const char *ticks = (x1 - x0) <= 20 ? "i" : ""; /* whole bits */
            for (size_t pi = 0; pi < np; pi++) {
                double box[4];
                panel_box(&L, pi, w, h, box);
                double split = box[2] + 0.42 * (box[3] - box[2]);
                double gap = 32.0 / h;
                /* upper part: rate */
                plvpor(box[0], box[1], split + gap, box[3]);
                frame_ticks(x0, x1, 0.0, y1, 0, ticks[0] ? 1.0 : 0.0, 0.0, "");
                labels("", pi % L.ncols == 0 ? ylabel : "", "");
                if (np > 1) {
                    char pt[200];
                    if (point_panels)
                        axis_value_words(sc, (size_t)p->x_axis, p->bits_at[pi], pt, sizeof pt);
                    else
                        axis_value_words(sc, (size_t)L.panel, pi, pt, sizeof pt);
                    panel_title(pt);
                }
                for (size_t s = 0; s < ns; s++)
                    for (size_t a = 0; a < na; a++) {
                        size_t cell = (pi * ns + s) * na + a;
                        curve((int)nb, bx, rate + cell * nb, (int)a, ns > 1 ? (int)s : -1, 1, 0);
                        /* the unquantized rate: thin dotted line in its colour */
                        if (isfinite(unq[cell])) {
                            double hx[2] = {x0, x1}, hy[2] = {unq[cell], unq[cell]};
                            plcol0(COL_FIRST + (int)a % NCOLOURS);
                            pllsty(3);
                            plwidth(1.0);
                            plline(2, hx, hy);
                            pllsty(1);
                        }
                    }
                /* lower part */
                plvpor(box[0], box[1], box[2], split);
                frame_ticks(x0, x1, l0, l1, 1, ticks[0] ? 1.0 : 0.0,
                            logscale ? log_step(l1 - l0) : 0.0, logscale ? "l" : "");
                labels(pi / L.ncols == L.nrows - 1 || pi + L.ncols >= np ? blabel : "",
                       pi % L.ncols == 0 ? lylabel : "", "");
                for (size_t s = 0; s < ns; s++)
                    for (size_t a = 0; a < na; a++) {
                        size_t cell = (pi * ns + s) * na + a;
                        curve((int)nb, bx, low + cell * nb, (int)a, ns > 1 ? (int)s : -1, 1, 0);
                        plcol0(COL_FIRST + (int)a % NCOLOURS);
                        plwidth(1.5);
                        for (size_t b = 0; b < nb; b++)
                            if (below[cell * nb + b])
                                draw_marker(bx[b], l0 + 0.06 * (l1 - l0), MARK_BELOW, 1);
                    }
            }
            legend lg = {0};
            for (size_t a = 0; a < na; a++) {
                /* an alphabet whose every point here failed has no curve */
                int drawn = 0;
                for (size_t c = 0; c < np * ns && !drawn; c++)
                    drawn = any_finite(rate + (c * na + a) * nb, nb);
                char name[160];
                snprintf(name, sizeof name, "%s%s", sc->alphabets[a].label,
                         drawn ? "" : " (every point failed)");
                legend_add(&lg, name, (int)a, 1);
                if (ns > 1)
                    lg.line_sty[lg.n - 1] = 1;
            }
            legend_add(&lg, "unquantized", 0, 0);
            lg.line_col[lg.n - 1] = COL_BLACK;
            lg.line_sty[lg.n - 1] = 3;
            lg.line_w[lg.n - 1] = 1.0;
            for (size_t s = 0; ns > 1 && s < ns; s++) {
                char name[160];
                style_words(sc, &L, s, name, sizeof name);
                legend_add(&lg, name, 0, 0);
                lg.line_col[lg.n - 1] = COL_BLACK;
                lg.line_sty[lg.n - 1] = line_styles[s % NCOLOURS];
            }
            if (any_below) {
                char name[96];
                {
                    snprintf(name, sizeof name, "loss < 10#u%s%d#d or 0",
                             l0 < 0 ? "\xe2\x88\x92" : "", abs((int)l0));
                }
                legend_add(&lg, name, 0, 0);
                lg.opt[lg.n - 1] = PL_LEGEND_SYMBOL;
                lg.sym_col[lg.n - 1] = COL_BLACK;
                lg.sym[lg.n - 1] = "\xe2\x96\xbc"; /* ▼ */
            }
            legend_strip(&lg, w, h);
            st = page_close(&pg, files, nfiles);
        } while (st == QC_OK && next_combo(sc, vi, L.fixed));
    }
    free(bx);
    free(rate);
    free(low);
    free(unq);
    free(below);
    return st;
}

/* ---------------------------------------------------------------- */
/* Conditional densities of one design with its thresholds            */
/* ---------------------------------------------------------------- */

static qc_status array_of(json_t *a, double **out, size_t *n)
{
    *n = json_array_size(a);
    *out = calloc(*n ? *n : 1, sizeof **out);
    if (!*out)
        return qc_fail(QC_ENOMEM, "out of memory");
    for (size_t i = 0; i < *n; i++)
        (*out)[i] = json_number_value(json_array_get(a, i));
    return QC_OK;
}

/* Unit of a model's output y for the plots: electrons for the APD
 * models, photons for the counter, amperes for a Gaussian model given by
 * a physical front end (received power), else the units of its levels. */
static const char *output_unit(const qc_model_type *type, const qc_settings *s)
{
    if (strcmp(type->name, "apd") == 0 || strcmp(type->name, "apd-gauss") == 0)
        return "electrons";
    if (strcmp(type->name, "poisson") == 0)
        return "photons";
    if (strcmp(type->name, "preamp") == 0)
        return "ASE energy per mode";
    if (strcmp(type->name, "table") == 0)
        return "units of the table";
    if (qc_settings_get(s, "power-dbm") || qc_settings_get(s, "peak-dbm"))
        return "A";
    return "normalized units";
}

static qc_status plot_density(const qc_scenario *sc, json_t *const *records, const char *dir,
                              const char *device, char ***files, size_t *nfiles, char ***notes,
                              size_t *nnotes)
{
    size_t index = sc->plots.density_point;
    json_t *rec = records[index];
    const char *status = json_string_value(json_object_get(rec, "status"));
    if (!status || strcmp(status, "ok") != 0) {
        char point[600];
        sc_describe_point(sc, index, point, sizeof point);
        return note(notes, nnotes, "skipped the density plot: its design, %s, failed (%s)", point,
                    status ? status : "no result");
    }
    json_t *result = json_object_get(rec, "result");
    qc_settings *s = NULL;
    qc_model *m = NULL;
    qc_design_request req;
    double *th = NULL, *lev = NULL, *xs = NULL, *ys = NULL;
    size_t nth, nlev;
    qc_status st = qc_scenario_point_settings(sc, index, &s);
    if (st == QC_OK)
        st = qc_settings_build(s, &m, &req);
    if (st == QC_OK)
        st = array_of(json_object_get(result, "thresholds"), &th, &nth);
    if (st == QC_OK)
        st = array_of(json_object_get(result, "levels"), &lev, &nlev);
    if (st != QC_OK || nlev == 0)
        goto done;
    const qc_model_type *type = qc_model_get_type(m);
    int counts = type->output == QC_OUTPUT_COUNTS;
    double lo = INFINITY, hi = -INFINITY;
    for (size_t i = 0; i < nlev; i++) {
        double a, b;
        type->support(m, lev[i], &a, &b);
        lo = fmin(lo, a);
        hi = fmax(hi, b);
    }
    if (counts) {
        lo = fmax(0.0, floor(lo));
        hi = ceil(hi);
    }
    size_t ns = counts ? (size_t)(hi - lo) + 1 : DENSITY_SAMPLES;
    if (ns > 100000)
        ns = 100000;
    xs = malloc(ns * sizeof *xs);
    ys = malloc(nlev * ns * sizeof *ys);
    if (!xs || !ys) {
        st = qc_fail(QC_ENOMEM, "out of memory");
        goto done;
    }
    double peak = 0.0;
    for (size_t k = 0; k < ns; k++) {
        xs[k] = counts ? lo + (double)k : lo + (hi - lo) * (double)k / (double)(ns - 1);
        for (size_t i = 0; i < nlev; i++) {
            double d = type->density(m, lev[i], xs[k]);
            ys[i * ns + k] = isfinite(d) && d > 0 ? d : 0.0;
            peak = fmax(peak, ys[i * ns + k]);
        }
    }
    /* trim the far tails where every density is below 1e-3 of the peak */
    size_t k0 = 0, k1 = ns;
    while (k0 + 1 < k1) {
        int small = 1;
        for (size_t i = 0; i < nlev; i++)
            small &= ys[i * ns + k0] < 1e-3 * peak;
        if (!small)
            break;
        k0++;
    }
    while (k1 > k0 + 1) {
        int small = 1;
        for (size_t i = 0; i < nlev; i++)
            small &= ys[i * ns + k1 - 1] < 1e-3 * peak;
        if (!small)
            break;
        k1--;
    }
    double x0 = xs[k0], x1 = xs[k1 - 1];
    if (counts) {
        x0 -= 0.5;
        x1 += 0.5;
    }
    pad_range(&x0, &x1, counts ? 0.0 : 0.02);
    if (!(peak > 0))
        peak = 1.0;
    /* a density of very small or large numbers is drawn in units of 10^e
     * per output unit, so that the tick numbers stay short */
    int e = counts ? 0 : (int)floor(log10(peak));
    if (e > -2 && e < 3)
        e = 0;
    for (size_t k = 0; e != 0 && k < nlev * ns; k++)
        ys[k] *= pow(10.0, -e);
    peak *= pow(10.0, -e);
    char per[48] = "";
    if (e != 0)
        snprintf(per, sizeof per, "10#u%s%d#d ", e < 0 ? "\xe2\x88\x92" : "", abs(e));

    page pg;
    size_t alpha, vi[QC_SCENARIO_MAX_AXES];
    sc_point_coords(sc, index, &alpha, vi);
    char ftext[1024] = "", ttext[640] = "";
    for (size_t k = 0; k < sc->naxes; k++) {
        char w[160];
        axis_value_words(sc, k, vi[k], w, sizeof w);
        append(ttext, sizeof ttext, ", ", w);
        if (sc->axes[k].n > 1)
            file_part(ftext, sizeof ftext, sc->axes[k].key, sc->axes[k].values[vi[k]]);
    }
    snprintf(pg.path, sizeof pg.path, "%s/density_%s%s.%s", dir, sc->alphabets[alpha].name,
             ftext, extension(sc->plots.format));
    safe_name(strrchr(pg.path, '/') + 1);
    if ((st = page_open(&pg, device, page_width, page_height)) != QC_OK)
        goto done;
    pladv(0);
    plschr(0.0, font_scale);
    int qam = record_qam(rec);
    const char *unit = output_unit(type, s);
    char subject[1200];
    snprintf(subject, sizeof subject, "%s%s: %s of the receiver output given each level",
             sc->alphabets[alpha].label, qam ? ", one quadrature (the other is alike)" : "",
             counts ? "count distributions" : "densities");
    figure_title(sc, subject, ttext, page_width, page_height);
    plvpor(VP_LEFT, VP_RIGHT, 0.13, 1.0 - PX_TOP / page_height);
    frame(x0, x1, 0.0, 1.08 * peak, "", "");
    char xlabel[160], ylabel[160];
    if (counts)
        snprintf(xlabel, sizeof xlabel, "photon count y (%s per slot)", unit);
    else
        snprintf(xlabel, sizeof xlabel, "receiver output y%s (%s)", qam ? ", one quadrature" : "",
                 unit);
    if (counts)
        snprintf(ylabel, sizeof ylabel, "probability P(y | x)");
    else if (strcmp(unit, "electrons") == 0 || strcmp(unit, "A") == 0)
        snprintf(ylabel, sizeof ylabel, "density p(y | x) (%sper %s)", per,
                 strcmp(unit, "A") == 0 ? "A" : "electron");
    else
        snprintf(ylabel, sizeof ylabel, "density p(y | x) (%sper unit of y)", per);
    labels(xlabel, ylabel, "");

    /* thresholds: grey dashed verticals (for counts, between t-1 and t) */
    plcol0(COL_BLACK);
    pllsty(2);
    plwidth(1.0);
    for (size_t j = 0; j < nth; j++) {
        double t = counts ? th[j] - 0.5 : th[j];
        double tx[2] = {t, t}, ty[2] = {0.0, 1.08 * peak};
        if (t >= x0 && t <= x1)
            plline(2, tx, ty);
    }
    legend lg = {0};
    for (size_t i = 0; i < nlev; i++) {
        const double *y = ys + i * ns;
        set_style((int)i, -1);
        if (counts) { /* pmf as steps */
            size_t nstep = 2 * (k1 - k0);
            double *sx = malloc(nstep * sizeof *sx), *sy = malloc(nstep * sizeof *sy);
            if (!sx || !sy) {
                free(sx);
                free(sy);
                plend();
                qc_atomic_file_discard(pg.file);
                open_tmp[0] = '\0';
                st = qc_fail(QC_ENOMEM, "out of memory");
                goto done;
            }
            for (size_t k = k0; k < k1; k++) {
                sx[2 * (k - k0)] = xs[k] - 0.5;
                sx[2 * (k - k0) + 1] = xs[k] + 0.5;
                sy[2 * (k - k0)] = sy[2 * (k - k0) + 1] = y[k];
            }
            plline((PLINT)nstep, sx, sy);
            free(sx);
            free(sy);
        } else {
            plline((PLINT)(k1 - k0), xs + k0, y + k0);
        }
        /* a marker at the peak of each level names its curve */
        size_t kp = k0;
        for (size_t k = k0; k < k1; k++)
            if (y[k] > y[kp])
                kp = k;
        pllsty(1);
        plwidth(1.5);
        draw_marker(xs[kp], y[kp], marker_index((int)i), 0);
        char name[96];
        snprintf(name, sizeof name, "level x = %.4g", lev[i]);
        legend_add(&lg, name, (int)i, 1);
    }
    if (nth > 0) {
        legend_add(&lg, nth == 1 ? "threshold" : "thresholds", 0, 0);
        lg.line_col[lg.n - 1] = COL_BLACK;
        lg.line_sty[lg.n - 1] = 2;
        lg.line_w[lg.n - 1] = 1.0;
    }
    legend_draw(&lg, PL_POSITION_RIGHT | PL_POSITION_OUTSIDE, 0.06);
    st = page_close(&pg, files, nfiles);
done:
    free(th);
    free(lev);
    free(xs);
    free(ys);
    qc_model_free(m);
    qc_settings_free(s);
    return st;
}

/* ---------------------------------------------------------------- */
/* All plots                                                          */
/* ---------------------------------------------------------------- */

qc_status qc_plot_sweep(const qc_scenario *sc, json_t *const *records, const char *dir,
                        char ***files, size_t *nfiles, char ***notes, size_t *nnotes)
{
    const char *device = pick_device(sc->plots.format);
    if (!device)
        return qc_fail(QC_EINVAL, "no PLplot device for %s output is installed",
                       extension(sc->plots.format));
    plplot_message[0] = '\0';
    page_width = sc->plots.width;
    page_height = sc->plots.height;
    volatile qc_status st = QC_OK;
    if (setjmp(escape)) {
        escape_armed = 0;
        if (open_tmp[0])
            unlink(open_tmp);
        open_tmp[0] = '\0';
        return qc_fail(QC_EIO, "plots in %s: PLplot failed: %s", dir, plplot_message);
    }
    escape_armed = 1;
    if (sc->plots.rate_vs_x)
        st = plot_rate_vs_x(sc, records, dir, device, files, nfiles, notes, nnotes);
    if (st == QC_OK && sc->plots.rate_vs_bits)
        st = plot_rate_vs_bits(sc, records, dir, device, files, nfiles, notes, nnotes);
    if (st == QC_OK && sc->plots.density)
        st = plot_density(sc, records, dir, device, files, nfiles, notes, nnotes);
    escape_armed = 0;
    return st;
}

#endif /* QC_HAVE_PLPLOT */
