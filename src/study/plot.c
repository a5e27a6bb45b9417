/* plot.c — the figures of a sweep, drawn with PLplot: rate against the
 * sweep's x axis (SNR, power, photons...) with one curve per ADC
 * resolution and the unquantized rate; rate against ADC bits at chosen
 * operating points, one curve per alphabet, with the penalty on a second
 * panel; and the conditional densities (or count pmfs) of each level of
 * one design with its thresholds drawn over them. White background, black
 * text, and curves told apart by colour, line style and marker so that
 * they stay distinct in print. Each file is drawn under a temporary name
 * and renamed when complete. */
#include "study/sweep.h"

#include "core/internal.h"
#include "quantcap/atomic_file.h"
#include "study/scenario.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#ifndef QC_HAVE_PLPLOT

int qc_plots_available(void) { return 0; }

qc_status qc_plot_sweep(const qc_scenario *sc, json_t *const *records, const char *dir,
                        char ***files, size_t *nfiles)
{
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
static const char *const markers[NCOLOURS] = {"○", "□", "△", "◇", "×", "+", "▽", "☆"};
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

/* Start a page writing to a temporary file beside `path`. */
static qc_status page_open(page *pg, const char *device)
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
    plspage(90.0, 90.0, page_width, page_height, 0, 0);
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

static void set_style(int i)
{
    plcol0(COL_FIRST + i % NCOLOURS);
    pllsty(line_styles[(i + i / NCOLOURS) % NCOLOURS]);
    plwidth(2.0);
}

static const char *marker(int i) { return markers[(i + 2 * (i / NCOLOURS)) % NCOLOURS]; }

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
                        const char *yopt_extra)
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
    plbox(numbers ? "bcnst" : "bcst", xtick, 1, yb, 0.0, 0);
}

/* A polyline broken at NaN values, with markers on every `every`-th
 * point (starting at `phase`). */
static void curve(int n, const double *x, const double *y, int style, int every, int phase)
{
    set_style(style);
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
            plstring(1, &x[i], &y[i], marker(style));
}

/* Axis labels and title placed clear of the tick numbers. */
static void labels(const char *xlabel, const char *ylabel, const char *title)
{
    plcol0(COL_BLACK);
    if (xlabel && xlabel[0])
        plmtex("b", 3.0, 0.5, 0.5, xlabel);
    if (ylabel && ylabel[0])
        plmtex("l", 5.4, 0.5, 0.5, ylabel);
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
#define VP_LEFT 0.12
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

static void legend_draw(legend *lg, PLINT position)
{
    if (lg->n == 0)
        return;
    PLFLT w, h;
    pllsty(1);
    plwidth(1.0);
    int ncol = lg->n > 12 ? 2 : 1;
    pllegend(&w, &h, PL_LEGEND_BACKGROUND | PL_LEGEND_BOUNDING_BOX, position, 0.015, 0.0, 0.06,
             COL_WHITE, COL_BLACK, 1, (lg->n + ncol - 1) / ncol, ncol, lg->n, lg->opt, 0.8, 0.75,
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

/* Human label of a design key, with its unit (a parameter's unit is
 * taken from `model` first, then from any model that has the name). */
static void key_label(const char *key, const char *model, char *buf, size_t cap)
{
    static const char *const known[][2] = {
        {"snr-db", "SNR (dB)"},
        {"osnr-db", "OSNR (dB)"},
        {"power-dbm", "received power (dBm)"},
        {"photons", "mean photons per slot"},
        {"bits", "ADC resolution (bits)"},
        {"cells", "quantizer cells"},
    };
    for (size_t i = 0; i < sizeof known / sizeof known[0]; i++)
        if (strcmp(key, known[i][0]) == 0) {
            snprintf(buf, cap, "%s", known[i][1]);
            return;
        }
    const qc_model_type *own = qc_model_type_find(model);
    int k = own ? qc_model_param_index(own, key) : -1;
    if (k >= 0) {
        if (own->params[k].unit[0])
            snprintf(buf, cap, "%s (%s)", key, own->params[k].unit);
        else
            snprintf(buf, cap, "%s", key);
        return;
    }
    const qc_model_type *const *types = qc_model_types();
    for (size_t t = 0; types[t]; t++) {
        k = qc_model_param_index(types[t], key);
        if (k >= 0 && types[t]->params[k].unit[0]) {
            snprintf(buf, cap, "%s (%s)", key, types[t]->params[k].unit);
            return;
        }
    }
    size_t n = strlen(key);
    if (n > 4 && strcmp(key + n - 4, "-dbm") == 0)
        snprintf(buf, cap, "%.*s (dBm)", (int)(n - 4), key);
    else if (n > 3 && strcmp(key + n - 3, "-db") == 0)
        snprintf(buf, cap, "%.*s (dB)", (int)(n - 3), key);
    else
        snprintf(buf, cap, "%s", key);
}

/* "scenario title: head" when that fits on one line, else head. */
static void with_scenario_title(const qc_scenario *sc, const char *head, char *out, size_t cap)
{
    if (sc->title && (!head[0] || strlen(sc->title) + 2 + strlen(head) <= 64))
        snprintf(out, cap, "%s%s%s", sc->title, head[0] ? ": " : "", head);
    else
        snprintf(out, cap, "%s", head);
}

/* The model of the first alphabet (NULL when it is a sweep axis). */
static const char *scenario_model(const qc_scenario *sc)
{
    return qc_settings_get(sc->alphabets[0].settings, "model");
}

/* "_key-value" for each axis not fixed, for file names; and ", key = value"
 * for titles. */
static void combo_text(const qc_scenario *sc, const size_t *vi, const int *fixed, char *file,
                       size_t fcap, char *title, size_t tcap)
{
    file[0] = title[0] = '\0';
    for (size_t k = 0; k < sc->naxes; k++) {
        if (fixed[k])
            continue;
        size_t fl = strlen(file), tl = strlen(title);
        snprintf(file + fl, fcap - fl, "_%s-%s", sc->axes[k].key, sc->axes[k].values[vi[k]]);
        snprintf(title + tl, tcap - tl, "%s%s = %s", tl ? ", " : "", sc->axes[k].key,
                 sc->axes[k].values[vi[k]]);
    }
}

static void safe_name(char *s)
{
    for (; *s; s++)
        if (!((*s >= 'a' && *s <= 'z') || (*s >= 'A' && *s <= 'Z') || (*s >= '0' && *s <= '9') ||
              *s == '-' || *s == '_' || *s == '.' || *s == '+'))
            *s = '_';
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

/* ---------------------------------------------------------------- */
/* Rate against x, one curve per bit count                            */
/* ---------------------------------------------------------------- */

static qc_status plot_rate_vs_x(const qc_scenario *sc, json_t *const *records, const char *dir,
                                const char *device, char ***files, size_t *nfiles)
{
    const sc_plots *p = &sc->plots;
    const sc_axis *xa = &sc->axes[p->x_axis];
    const sc_axis *ca = p->curve_axis >= 0 ? &sc->axes[p->curve_axis] : NULL;
    size_t ncurves = ca ? ca->n : 1, nx = xa->n;
    double *x = malloc(nx * sizeof *x), *y = malloc(nx * sizeof *y), *u = malloc(nx * sizeof *u);
    double *all = malloc((ncurves + 1) * nx * sizeof *all);
    if (!x || !y || !u || !all) {
        free(x);
        free(y);
        free(u);
        free(all);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    int fixed[QC_SCENARIO_MAX_AXES] = {0};
    fixed[p->x_axis] = 1;
    if (ca)
        fixed[p->curve_axis] = 1;
    char xlabel[128], clabel[128];
    key_label(xa->key, scenario_model(sc), xlabel, sizeof xlabel);
    qc_status st = QC_OK;
    size_t count = 0;
    for (size_t a = 0; a < sc->nalphabets && st == QC_OK; a++) {
        size_t vi[QC_SCENARIO_MAX_AXES] = {0};
        do {
            if (count++ >= MAX_PLOTS_PER_KIND)
                break;
            char ftext[1024], ttext[512];
            combo_text(sc, vi, fixed, ftext, sizeof ftext, ttext, sizeof ttext);
            page pg;
            snprintf(pg.path, sizeof pg.path, "%s/rate-vs-%s_%s%s.%s", dir, xa->key,
                     sc->alphabets[a].name, ftext, extension(p->format));
            safe_name(strrchr(pg.path, '/') + 1);
            /* gather: curves then the unquantized rate */
            for (size_t c = 0; c < ncurves; c++)
                for (size_t j = 0; j < nx; j++) {
                    vi[p->x_axis] = j;
                    if (ca)
                        vi[p->curve_axis] = c;
                    json_t *rec = records[compose(sc, a, vi)];
                    all[c * nx + j] = field(rec, "rate_bits");
                    if (c == 0)
                        u[j] = field(rec, "unquantized_bits");
                }
            for (size_t j = 0; j < nx; j++) {
                x[j] = xa->number[j];
                all[ncurves * nx + j] = u[j];
                /* the unquantized rate does not depend on the quantizer: take
                 * it from any curve that has it */
                for (size_t c = 0; !isfinite(u[j]) && c < ncurves; c++) {
                    vi[p->x_axis] = j;
                    if (ca)
                        vi[p->curve_axis] = c;
                    u[j] = field(records[compose(sc, a, vi)], "unquantized_bits");
                    all[ncurves * nx + j] = u[j];
                }
            }
            vi[p->x_axis] = 0;
            if (ca)
                vi[p->curve_axis] = 0;
            double x0, x1, y0 = 0.0, y1, dummy;
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
            range_of(all, (ncurves + 1) * nx, &dummy, &y1);
            if (!isfinite(y1) || y1 <= 0)
                y1 = 1.0;
            y1 *= 1.08;

            if ((st = page_open(&pg, device)) != QC_OK)
                break;
            pladv(0);
            plschr(0.0, 1.0);
            plvpor(VP_LEFT, VP_RIGHT, 0.12, 0.91);
            frame(x0, x1, y0, y1, logx ? "l" : "", "");
            char title[800], head[640];
            snprintf(head, sizeof head, "%s%s%s", sc->alphabets[a].label, ttext[0] ? ", " : "",
                     ttext);
            with_scenario_title(sc, head, title, sizeof title);
            labels(xlabel, "information rate (bit/use)", title);
            legend lg = {0};
            int every = nx > 10 ? (int)(nx / 8) : 1;
            for (size_t c = 0; c < ncurves; c++) {
                for (size_t j = 0; j < nx; j++)
                    y[j] = all[c * nx + j];
                curve((int)nx, x, y, (int)c, every, (int)c);
                char name[96];
                if (ca) {
                    key_label(ca->key, scenario_model(sc), clabel, sizeof clabel);
                    snprintf(name, sizeof name, "%s %s", ca->values[c],
                             strcmp(ca->key, "bits") == 0 ? (strcmp(ca->values[c], "1") ? "bits"
                                                                                         : "bit")
                                                          : ca->key);
                } else {
                    snprintf(name, sizeof name, "quantized");
                }
                legend_add(&lg, name, (int)c, 1);
            }
            /* unquantized: thick black solid line */
            plcol0(COL_BLACK);
            pllsty(1);
            plwidth(3.0);
            for (size_t j = 0; j + 1 < nx; j++)
                if (isfinite(u[j]) && isfinite(u[j + 1]))
                    plline(2, &x[j], &u[j]);
            if (lg.n < 40) {
                int i = lg.n;
                legend_add(&lg, "unquantized", 0, 0);
                lg.line_col[i] = COL_BLACK;
                lg.line_sty[i] = 1;
                lg.line_w[i] = 3.0;
            }
            legend_draw(&lg, PL_POSITION_RIGHT | PL_POSITION_OUTSIDE);
            st = page_close(&pg, files, nfiles);
        } while (st == QC_OK && next_combo(sc, vi, fixed));
    }
    free(x);
    free(y);
    free(u);
    free(all);
    return st;
}

/* ---------------------------------------------------------------- */
/* Pre-FEC BER against x, one curve per bit count                     */
/* ---------------------------------------------------------------- */

/* log10 of a point's pre-FEC BER; NaN when undefined or zero. */
static double log_ber(json_t *rec)
{
    double b = field(rec, "pre_fec_ber");
    return b > 0.0 ? log10(b) : NAN;
}

/* log10 of the hard-decision FEC threshold of a point; NaN without one. */
static double log_fec_threshold(json_t *rec, char *name, size_t n)
{
    json_t *fec = json_object_get(json_object_get(rec, "result"), "fec");
    const char *kind = json_string_value(json_object_get(fec, "threshold_kind"));
    if (!kind || strcmp(kind, "ber") != 0)
        return NAN;
    snprintf(name, n, "%s", json_string_value(json_object_get(fec, "name")));
    double t = json_number_value(json_object_get(fec, "threshold"));
    return t > 0.0 ? log10(t) : NAN;
}

static qc_status plot_ber_vs_x(const qc_scenario *sc, json_t *const *records, const char *dir,
                               const char *device, char ***files, size_t *nfiles)
{
    const sc_plots *p = &sc->plots;
    const sc_axis *xa = &sc->axes[p->x_axis];
    const sc_axis *ca = p->curve_axis >= 0 ? &sc->axes[p->curve_axis] : NULL;
    size_t ncurves = ca ? ca->n : 1, nx = xa->n;
    double *x = malloc(nx * sizeof *x), *y = malloc(nx * sizeof *y);
    double *all = malloc(ncurves * nx * sizeof *all);
    if (!x || !y || !all) {
        free(x);
        free(y);
        free(all);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    int fixed[QC_SCENARIO_MAX_AXES] = {0};
    fixed[p->x_axis] = 1;
    if (ca)
        fixed[p->curve_axis] = 1;
    char xlabel[128], clabel[128];
    key_label(xa->key, scenario_model(sc), xlabel, sizeof xlabel);
    qc_status st = QC_OK;
    size_t count = 0;
    for (size_t a = 0; a < sc->nalphabets && st == QC_OK; a++) {
        size_t vi[QC_SCENARIO_MAX_AXES] = {0};
        do {
            if (count++ >= MAX_PLOTS_PER_KIND)
                break;
            double lo = INFINITY, hi = -INFINITY, thr = NAN;
            char fec_name[QC_FEC_NAME_MAX] = "";
            for (size_t c = 0; c < ncurves; c++)
                for (size_t j = 0; j < nx; j++) {
                    vi[p->x_axis] = j;
                    if (ca)
                        vi[p->curve_axis] = c;
                    json_t *rec = records[compose(sc, a, vi)];
                    double v = all[c * nx + j] = log_ber(rec);
                    if (isfinite(v)) {
                        lo = fmin(lo, v);
                        hi = fmax(hi, v);
                    }
                    if (isnan(thr))
                        thr = log_fec_threshold(rec, fec_name, sizeof fec_name);
                }
            vi[p->x_axis] = 0;
            if (ca)
                vi[p->curve_axis] = 0;
            if (!(lo <= hi)) /* no BER defined: no page */
                continue;
            if (isfinite(thr)) {
                lo = fmin(lo, thr);
                hi = fmax(hi, thr);
            }
            double y0 = floor(lo), y1 = ceil(hi);
            if (y1 - y0 < 1.0)
                y1 = y0 + 1.0;
            char ftext[1024], ttext[512];
            combo_text(sc, vi, fixed, ftext, sizeof ftext, ttext, sizeof ttext);
            page pg;
            snprintf(pg.path, sizeof pg.path, "%s/ber-vs-%s_%s%s.%s", dir, xa->key,
                     sc->alphabets[a].name, ftext, extension(p->format));
            safe_name(strrchr(pg.path, '/') + 1);
            for (size_t j = 0; j < nx; j++)
                x[j] = xa->number[j];
            double x0, x1;
            range_of(x, nx, &x0, &x1);
            int logx = x0 > 0 && x1 / x0 >= 100.0;
            if (logx) {
                for (size_t j = 0; j < nx; j++)
                    x[j] = log10(x[j]);
                x0 = log10(x0);
                x1 = log10(x1);
            }
            pad_range(&x0, &x1, nx > 1 ? 0.0 : 0.5);
            if ((st = page_open(&pg, device)) != QC_OK)
                break;
            pladv(0);
            plschr(0.0, 1.0);
            plvpor(VP_LEFT, VP_RIGHT, 0.12, 0.91);
            frame(x0, x1, y0, y1, logx ? "l" : "", "l");
            char title[800], head[640];
            snprintf(head, sizeof head, "%s%s%s", sc->alphabets[a].label, ttext[0] ? ", " : "",
                     ttext);
            with_scenario_title(sc, head, title, sizeof title);
            labels(xlabel, "pre-FEC bit error rate (MAP hard decisions)", title);
            legend lg = {0};
            int every = nx > 10 ? (int)(nx / 8) : 1;
            for (size_t c = 0; c < ncurves; c++) {
                for (size_t j = 0; j < nx; j++)
                    y[j] = all[c * nx + j];
                curve((int)nx, x, y, (int)c, every, (int)c);
                char name[96];
                if (ca) {
                    key_label(ca->key, scenario_model(sc), clabel, sizeof clabel);
                    snprintf(name, sizeof name, "%s %s", ca->values[c],
                             strcmp(ca->key, "bits") == 0 ? (strcmp(ca->values[c], "1") ? "bits"
                                                                                         : "bit")
                                                          : ca->key);
                } else {
                    snprintf(name, sizeof name, "quantized");
                }
                legend_add(&lg, name, (int)c, 1);
            }
            if (isfinite(thr)) { /* the FEC threshold: black dashed */
                double tx[2] = {x0, x1}, ty[2] = {thr, thr};
                plcol0(COL_BLACK);
                pllsty(2);
                plwidth(2.0);
                plline(2, tx, ty);
                if (lg.n < 40) {
                    int i = lg.n;
                    char name[96];
                    snprintf(name, sizeof name, "FEC %s", fec_name);
                    legend_add(&lg, name, 0, 0);
                    lg.line_col[i] = COL_BLACK;
                    lg.line_sty[i] = 2;
                    lg.line_w[i] = 2.0;
                }
            }
            legend_draw(&lg, PL_POSITION_RIGHT | PL_POSITION_OUTSIDE);
            st = page_close(&pg, files, nfiles);
        } while (st == QC_OK && next_combo(sc, vi, fixed));
    }
    free(x);
    free(y);
    free(all);
    return st;
}

/* ---------------------------------------------------------------- */
/* Required value against bits, one curve per alphabet ([require])    */
/* ---------------------------------------------------------------- */

static int axis_index_of(const qc_scenario *sc, const char *key)
{
    for (size_t i = 0; i < sc->naxes; i++)
        if (strcmp(sc->axes[i].key, key) == 0)
            return (int)i;
    return -1;
}

static qc_status plot_required_vs_bits(const qc_scenario *sc, json_t *const *records,
                                       const char *dir, const char *device, char ***files,
                                       size_t *nfiles)
{
    int bax = axis_index_of(sc, "bits");
    if (bax < 0)
        bax = axis_index_of(sc, "cells");
    const sc_axis *ba = &sc->axes[bax];
    const char *key = sc->require.solve_for;
    int kax = axis_index_of(sc, key);
    size_t nb = ba->n, na = sc->nalphabets;
    double *bx = malloc(nb * sizeof *bx), *req = malloc(na * nb * sizeof *req),
           *unq = malloc(na * nb * sizeof *unq), *y = malloc(nb * sizeof *y);
    if (!bx || !req || !unq || !y) {
        free(bx);
        free(req);
        free(unq);
        free(y);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    int fixed[QC_SCENARIO_MAX_AXES] = {0};
    fixed[bax] = 1;
    if (kax >= 0) /* the required value does not depend on the operating value */
        fixed[kax] = 1;
    char ylabel[160], xlabel[128];
    key_label(key, scenario_model(sc), xlabel, sizeof xlabel);
    snprintf(ylabel, sizeof ylabel, "required %s", xlabel);
    key_label(ba->key, scenario_model(sc), xlabel, sizeof xlabel);
    for (size_t b = 0; b < nb; b++)
        bx[b] = ba->number ? ba->number[b] : (double)b;
    qc_status st = QC_OK;
    size_t count = 0;
    size_t vi[QC_SCENARIO_MAX_AXES] = {0};
    do {
        if (count++ >= MAX_PLOTS_PER_KIND)
            break;
        double lo = INFINITY, hi = -INFINITY;
        for (size_t a = 0; a < na; a++)
            for (size_t b = 0; b < nb; b++) {
                vi[bax] = b;
                json_t *rec = records[compose(sc, a, vi)];
                double r = req[a * nb + b] = field(rec, "required");
                double u = unq[a * nb + b] = field(rec, "unquantized_required");
                if (isfinite(r)) {
                    lo = fmin(lo, r);
                    hi = fmax(hi, r);
                }
                if (isfinite(u)) {
                    lo = fmin(lo, u);
                    hi = fmax(hi, u);
                }
            }
        vi[bax] = 0;
        if (!(lo <= hi)) /* no point met the target: no page */
            continue;
        char ftext[1024], ttext[512];
        combo_text(sc, vi, fixed, ftext, sizeof ftext, ttext, sizeof ttext);
        page pg;
        snprintf(pg.path, sizeof pg.path, "%s/required-vs-%s%s.%s", dir, ba->key, ftext,
                 extension(sc->plots.format));
        safe_name(strrchr(pg.path, '/') + 1);
        double x0, x1, y0 = lo, y1 = hi;
        range_of(bx, nb, &x0, &x1);
        pad_range(&x0, &x1, 0.05);
        pad_range(&y0, &y1, 0.08);
        if ((st = page_open(&pg, device)) != QC_OK)
            break;
        pladv(0);
        plschr(0.0, 1.0);
        plvpor(VP_LEFT, VP_RIGHT, 0.12, 0.91);
        frame(x0, x1, y0, y1, "", "");
        char title[800], head[640];
        const qc_target *t = &sc->require.target;
        const char *figure = t->kind == QC_TARGET_BER    ? "pre-FEC BER"
                             : t->kind == QC_TARGET_NGMI ? "NGMI"
                             : t->kind == QC_TARGET_GMI  ? "GMI (bit/symbol)"
                                                         : "rate (bit/symbol)";
        if (t->from_fec)
            snprintf(head, sizeof head, "FEC %s: %s %g%s%s", t->fec.name, figure, t->value,
                     ttext[0] ? ", " : "", ttext);
        else
            snprintf(head, sizeof head, "target %s %g%s%s", figure, t->value,
                     ttext[0] ? ", " : "", ttext);
        with_scenario_title(sc, head, title, sizeof title);
        labels(xlabel, ylabel, title);
        legend lg = {0};
        for (size_t a = 0; a < na; a++) {
            for (size_t b = 0; b < nb; b++)
                y[b] = req[a * nb + b];
            curve((int)nb, bx, y, (int)a, 1, 0);
            legend_add(&lg, sc->alphabets[a].label, (int)a, 1);
            /* the unquantized receiver: thin dashed, same colour */
            for (size_t b = 0; b < nb; b++)
                y[b] = unq[a * nb + b];
            plcol0(COL_FIRST + (int)a % NCOLOURS);
            pllsty(2);
            plwidth(1.0);
            for (size_t b = 0; b + 1 < nb; b++)
                if (isfinite(y[b]) && isfinite(y[b + 1]))
                    plline(2, &bx[b], &y[b]);
        }
        if (lg.n < 40) {
            int i = lg.n;
            legend_add(&lg, "unquantized", 0, 0);
            lg.line_col[i] = COL_BLACK;
            lg.line_sty[i] = 2;
            lg.line_w[i] = 1.0;
        }
        legend_draw(&lg, PL_POSITION_RIGHT | PL_POSITION_OUTSIDE);
        st = page_close(&pg, files, nfiles);
    } while (st == QC_OK && next_combo(sc, vi, fixed));
    free(bx);
    free(req);
    free(unq);
    free(y);
    return st;
}

/* ---------------------------------------------------------------- */
/* Rate against bits at operating points, one curve per alphabet      */
/* ---------------------------------------------------------------- */

static qc_status plot_rate_vs_bits(const qc_scenario *sc, json_t *const *records,
                                   const char *dir, const char *device, char ***files,
                                   size_t *nfiles)
{
    const sc_plots *p = &sc->plots;
    const sc_axis *ba = &sc->axes[p->curve_axis];
    const sc_axis *xa = p->x_axis >= 0 ? &sc->axes[p->x_axis] : NULL;
    size_t nb = ba->n, na = sc->nalphabets;
    double *bx = malloc(nb * sizeof *bx), *rate = malloc(na * nb * sizeof *rate),
           *low = malloc(na * nb * sizeof *low), *unq = malloc(na * sizeof *unq);
    if (!bx || !rate || !low || !unq) {
        free(bx);
        free(rate);
        free(low);
        free(unq);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    for (size_t b = 0; b < nb; b++)
        bx[b] = ba->number ? ba->number[b] : (double)b;
    int fixed[QC_SCENARIO_MAX_AXES] = {0};
    fixed[p->curve_axis] = 1;
    if (xa)
        fixed[p->x_axis] = 1;
    size_t nat = xa ? p->nbits_at : 1;
    qc_status st = QC_OK;
    size_t count = 0;
    char blabel[128];
    key_label(ba->key, scenario_model(sc), blabel, sizeof blabel);
    for (size_t o = 0; o < nat && st == QC_OK; o++) {
        size_t vi[QC_SCENARIO_MAX_AXES] = {0};
        do {
            if (count++ >= MAX_PLOTS_PER_KIND)
                break;
            if (xa)
                vi[p->x_axis] = p->bits_at[o];
            char ftext[1024], ttext[512];
            combo_text(sc, vi, fixed, ftext, sizeof ftext, ttext, sizeof ttext);
            page pg;
            if (xa)
                snprintf(pg.path, sizeof pg.path, "%s/rate-vs-%s_%s-%s%s.%s", dir, ba->key,
                         xa->key, xa->values[p->bits_at[o]], ftext, extension(p->format));
            else
                snprintf(pg.path, sizeof pg.path, "%s/rate-vs-%s%s.%s", dir, ba->key, ftext,
                         extension(p->format));
            safe_name(strrchr(pg.path, '/') + 1);
            /* the lower panel shows the penalty at the [require] target when
             * one is given (the dB the quantizer costs where it matters),
             * else the SNR penalty at the operating rate when the model
             * defines one at these points, else the loss in bits */
            int penalty_db = 0, at_target = sc->require.on;
            for (size_t a = 0; a < na; a++)
                for (size_t b = 0; b < nb; b++) {
                    vi[p->curve_axis] = b;
                    penalty_db |= isfinite(field(records[compose(sc, a, vi)],
                                                 at_target ? "penalty_db" : "snr_penalty_db"));
                }
            at_target &= penalty_db;
            const char *lower_field = at_target    ? "penalty_db"
                                      : penalty_db ? "snr_penalty_db"
                                                   : "loss_bits";
            for (size_t a = 0; a < na; a++) {
                unq[a] = NAN;
                for (size_t b = 0; b < nb; b++) {
                    vi[p->curve_axis] = b;
                    json_t *rec = records[compose(sc, a, vi)];
                    rate[a * nb + b] = field(rec, "rate_bits");
                    low[a * nb + b] = field(rec, lower_field);
                    if (!isfinite(unq[a]))
                        unq[a] = field(rec, "unquantized_bits");
                }
            }
            vi[p->curve_axis] = 0;
            double x0, x1, y1, dummy;
            range_of(bx, nb, &x0, &x1);
            pad_range(&x0, &x1, 0.03);
            range_of(rate, na * nb, &dummy, &y1);
            double u1;
            range_of(unq, na, &dummy, &u1);
            if (isfinite(u1) && (!isfinite(y1) || u1 > y1))
                y1 = u1;
            if (!isfinite(y1) || y1 <= 0)
                y1 = 1.0;
            y1 *= 1.08;
            /* lower panel: penalty in dB (linear) or loss in bits (log) */
            int logscale = !penalty_db;
            double l0, l1;
            if (logscale) {
                double floor_v = INFINITY, top = -INFINITY;
                for (size_t i = 0; i < na * nb; i++)
                    if (isfinite(low[i]) && low[i] > 0) {
                        floor_v = fmin(floor_v, low[i]);
                        top = fmax(top, low[i]);
                    }
                if (!isfinite(floor_v)) {
                    floor_v = 1e-6;
                    top = 1.0;
                }
                /* at most 6 decades; smaller losses are drawn on the floor */
                floor_v = fmax(floor_v, 1e-6 * top);
                for (size_t i = 0; i < na * nb; i++)
                    low[i] = isfinite(low[i]) ? log10(fmax(low[i], floor_v)) : NAN;
                l0 = floor(log10(floor_v));
                l1 = ceil(log10(top) + 0.05);
                if (l1 <= l0)
                    l1 = l0 + 1;
            } else {
                range_of(low, na * nb, &l0, &l1);
                if (!isfinite(l0)) {
                    l0 = 0;
                    l1 = 1;
                }
                l0 = fmin(l0, 0.0);
                pad_range(&l0, &l1, 0.05);
            }

            if ((st = page_open(&pg, device)) != QC_OK)
                break;
            pladv(0);
            plschr(0.0, 0.95);
            char title[800], head[640] = "";
            if (xa)
                snprintf(head, sizeof head, "%s = %s%s%s", xa->key, xa->values[p->bits_at[o]],
                         ttext[0] ? ", " : "", ttext);
            else
                snprintf(head, sizeof head, "%s", ttext);
            with_scenario_title(sc, head, title, sizeof title);
            /* upper panel: rate */
            const char *ticks = (x1 - x0) <= 20 ? "i" : ""; /* whole bits */
            plvpor(VP_LEFT, VP_RIGHT, 0.47, 0.91);
            frame_ticks(x0, x1, 0.0, y1, 0, ticks[0] ? 1.0 : 0.0, "");
            labels("", "rate (bit/use)", title);
            legend lg = {0};
            for (size_t a = 0; a < na; a++) {
                curve((int)nb, bx, rate + a * nb, (int)a, 1, 0);
                /* the unquantized rate of the alphabet: thin line in its colour */
                if (isfinite(unq[a])) {
                    double hx[2] = {x0, x1}, hy[2] = {unq[a], unq[a]};
                    plcol0(COL_FIRST + (int)a % NCOLOURS);
                    pllsty(2);
                    plwidth(1.0);
                    plline(2, hx, hy);
                    pllsty(1);
                }
                char name[96];
                snprintf(name, sizeof name, "%s", sc->alphabets[a].label);
                legend_add(&lg, name, (int)a, 1);
            }
            legend_add(&lg, "unquantized", 0, 0);
            lg.line_col[lg.n - 1] = COL_BLACK;
            lg.line_sty[lg.n - 1] = 2;
            lg.line_w[lg.n - 1] = 1.0;
            legend_draw(&lg, PL_POSITION_RIGHT | PL_POSITION_OUTSIDE);
            /* lower panel */
            plvpor(VP_LEFT, VP_RIGHT, 0.11, 0.40);
            frame_ticks(x0, x1, l0, l1, 1, ticks[0] ? 1.0 : 0.0, logscale ? "l" : "");
            labels(blabel,
                   at_target    ? "penalty at the target (dB)"
                   : penalty_db ? "SNR penalty (dB)"
                                : "loss (bit/use)",
                   "");
            for (size_t a = 0; a < na; a++)
                curve((int)nb, bx, low + a * nb, (int)a, 1, 0);
            st = page_close(&pg, files, nfiles);
        } while (st == QC_OK && next_combo(sc, vi, fixed));
    }
    free(bx);
    free(rate);
    free(low);
    free(unq);
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

static qc_status plot_density(const qc_scenario *sc, json_t *const *records, const char *dir,
                              const char *device, char ***files, size_t *nfiles)
{
    size_t index = sc->plots.density_point;
    json_t *rec = records[index];
    const char *status = json_string_value(json_object_get(rec, "status"));
    if (!status || strcmp(status, "ok") != 0)
        return QC_OK; /* the chosen design failed: nothing to draw */
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
    const qc_model_type *type = m->type;
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

    page pg;
    size_t alpha, vi[QC_SCENARIO_MAX_AXES];
    sc_point_coords(sc, index, &alpha, vi);
    int none[QC_SCENARIO_MAX_AXES] = {0};
    char ftext[1024], ttext[512];
    combo_text(sc, vi, none, ftext, sizeof ftext, ttext, sizeof ttext);
    snprintf(pg.path, sizeof pg.path, "%s/density_%s%s.%s", dir, sc->alphabets[alpha].name,
             ftext, extension(sc->plots.format));
    safe_name(strrchr(pg.path, '/') + 1);
    if ((st = page_open(&pg, device)) != QC_OK)
        goto done;
    pladv(0);
    plschr(0.0, 1.0);
    plvpor(VP_LEFT, VP_RIGHT, 0.12, 0.91);
    frame(x0, x1, 0.0, 1.08 * peak, "", "");
    char title[800], xlabel[160];
    snprintf(title, sizeof title, "%s%s%s", sc->alphabets[alpha].label, ttext[0] ? ", " : "",
             ttext);
    snprintf(xlabel, sizeof xlabel, "receiver output y (model '%s'%s)", type->name,
             counts ? ", counts" : "");
    labels(xlabel, counts ? "P(y | x)" : "p(y | x)", title);
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
        set_style((int)i);
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
        plstring(1, &xs[kp], &y[kp], marker((int)i));
        char name[96];
        snprintf(name, sizeof name, "x = %g", lev[i]);
        legend_add(&lg, name, (int)i, 1);
    }
    if (nth > 0) {
        legend_add(&lg, nth == 1 ? "threshold" : "thresholds", 0, 0);
        lg.line_col[lg.n - 1] = COL_BLACK;
        lg.line_sty[lg.n - 1] = 2;
        lg.line_w[lg.n - 1] = 1.0;
    }
    legend_draw(&lg, PL_POSITION_RIGHT | PL_POSITION_OUTSIDE);
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
                        char ***files, size_t *nfiles)
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
        st = plot_rate_vs_x(sc, records, dir, device, files, nfiles);
    if (st == QC_OK && sc->plots.rate_vs_bits)
        st = plot_rate_vs_bits(sc, records, dir, device, files, nfiles);
    if (st == QC_OK && sc->plots.density)
        st = plot_density(sc, records, dir, device, files, nfiles);
    if (st == QC_OK && sc->plots.ber_vs_x)
        st = plot_ber_vs_x(sc, records, dir, device, files, nfiles);
    if (st == QC_OK && sc->plots.required_vs_bits)
        st = plot_required_vs_bits(sc, records, dir, device, files, nfiles);
    escape_armed = 0;
    return st;
}

#endif /* QC_HAVE_PLPLOT */
