/* plot_draw.c — the drawing helpers of the plots: colours, line styles
 * and markers told apart in print (Okabe & Ito's colour-blind-safe
 * palette), framed axes with a light grid, curves broken at missing
 * points, legends and titles. Everything here draws on the current PLplot
 * page; the page itself is plot_page.c's. */
#include "study/plot.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#ifndef M_PI
#define M_PI 3.14159265358979323846
#endif

/* Okabe & Ito's colour-blind-safe palette (yellow and black left out:
 * too pale on white, and black is the unquantized curve), plus wine and
 * grey. */
const int plot_palette[NCOLOURS][3] = {
    {0, 114, 178}, {213, 94, 0},   {0, 158, 115}, {204, 121, 167},
    {230, 159, 0}, {86, 180, 233}, {136, 34, 85}, {110, 110, 110},
};
/* Legend glyphs of the markers drawn by plot_draw_marker, in the same order. */
static const char *const markers[NCOLOURS] = {"\xe2\x97\x8b", "\xe2\x96\xa1", "\xe2\x96\xb3",
                                               "\xe2\x97\x87", "\xc3\x97",      "+",
                                               "\xe2\x96\xbd", "*"}; /* ○ □ △ ◇ × + ▽ * */
const int plot_line_styles[NCOLOURS] = {1, 2, 3, 4, 5, 6, 7, 8};

/* Colour i; line style `dash` when >= 0, else the style paired with i. */
void plot_set_style(int i, int dash)
{
    plcol0(COL_FIRST + i % NCOLOURS);
    pllsty(dash >= 0 ? plot_line_styles[dash % NCOLOURS] : plot_line_styles[(i + i / NCOLOURS) % NCOLOURS]);
    plwidth(2.0);
}

int plot_marker_index(int i) { return (i + 2 * (i / NCOLOURS)) % NCOLOURS; }
static const char *marker(int i) { return markers[plot_marker_index(i)]; }

#define MARKER_MM 1.9 /* marker half-size on the page */

/* A marker drawn as lines centred exactly on (x, y), in world
 * coordinates of the current viewport (font glyphs sit off their
 * reference point by the font's baseline metrics). `filled`: solid. */
void plot_draw_marker(double x, double y, int shape, int filled)
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
void plot_frame(double x0, double x1, double y0, double y1, const char *xopt_extra,
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
void plot_frame_ticks(double x0, double x1, double y0, double y1, int numbers, double xtick,
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
void plot_curve(int n, const double *x, const double *y, int style, int dash, int every,
                  int phase)
{
    plot_set_style(style, dash);
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
            plot_draw_marker(x[i], y[i], plot_marker_index(style), 0);
}

/* Axis labels and title placed clear of the tick numbers. */
void plot_labels(const char *xlabel, const char *ylabel, const char *title)
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

void plot_legend_add(legend *lg, const char *text, int style, int with_marker)
{
    if (lg->n >= 40)
        return;
    int i = lg->n++;
    snprintf(lg->buf[i], sizeof lg->buf[i], "%s", text);
    lg->text[i] = lg->buf[i];
    lg->opt[i] = PL_LEGEND_LINE | (with_marker ? PL_LEGEND_SYMBOL : 0);
    lg->text_col[i] = COL_BLACK;
    lg->line_col[i] = COL_FIRST + style % NCOLOURS;
    lg->line_sty[i] = plot_line_styles[(style + style / NCOLOURS) % NCOLOURS];
    lg->line_w[i] = 2.0;
    lg->sym_col[i] = lg->line_col[i];
    lg->sym_scale[i] = 1.0;
    lg->sym_num[i] = 1;
    lg->sym[i] = marker(style);
}

void plot_legend_draw(const plot_ctx *ctx, legend *lg, PLINT position, double plot_width)
{
    if (lg->n == 0)
        return;
    PLFLT w, h;
    pllsty(1);
    plwidth(1.0);
    int ncol = lg->n > 12 ? 2 : 1;
    for (int i = 0; i < lg->n; i++)
        lg->sym_scale[i] = ctx->font_scale;
    pllegend(&w, &h, PL_LEGEND_BACKGROUND | PL_LEGEND_BOUNDING_BOX, position, 0.015, 0.0, plot_width,
             COL_WHITE, COL_BLACK, 1, (lg->n + ncol - 1) / ncol, ncol, lg->n, lg->opt, 0.8, 0.75 * ctx->font_scale,
             2.0, 0.0, lg->text_col, lg->text, NULL, NULL, NULL, NULL, lg->line_col, lg->line_sty,
             lg->line_w, lg->sym_col, lg->sym_scale, lg->sym_num, lg->sym);
}

/* Two-line figure title at the top of the page: the scenario's title and
 * what the figure shows. */
/* Three-line figure title at the top of the page: the scenario's title,
 * what the figure shows, and the values it is drawn at. */
void plot_figure_title(const qc_scenario *sc, const char *subject, const char *details, int w,
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

void plot_panel_title(const char *text)
{
    plcol0(COL_BLACK);
    plmtex("t", 0.8, 0.5, 0.5, text);
}

/* The legend in the strip right of the panels. */
void plot_legend_strip(const plot_ctx *ctx, legend *lg, int w, int h)
{
    plvpor(1.0 - (PX_LEGEND - 8.0) / w, 1.0, 0.1, 1.0 - (PX_TOP + PX_PANEL_TITLE) / h);
    plwind(0.0, 1.0, 0.0, 1.0);
    plot_legend_draw(ctx, lg, PL_POSITION_TOP | PL_POSITION_LEFT | PL_POSITION_INSIDE, 0.13);
}

/* Decades between major ticks of a log axis spanning `decades`. */
double plot_log_step(double decades) { return decades > 4.0 ? ceil(decades / 4.0) : 1.0; }

void plot_log_frame(double x0, double x1, double y0, double y1, int logx, int xnum)
{
    double ystep = plot_log_step(y1 - y0);
    plwind(x0, x1, y0, y1);
    plcol0(COL_GRID);
    pllsty(1);
    plwidth(0.7);
    plbox(logx ? "gl" : "g", 0.0, 0, "gl", 0.0, 0);
    plcol0(COL_BLACK);
    plwidth(1.0);
    const char *xopt = xnum ? (logx ? "bcnstl" : "bcnst") : (logx ? "bcstl" : "bcst");
    plbox(xopt, 0.0, 0, ystep > 1.0 ? "bcstl" : "bcnstvl", 0.0, 0);
    if (ystep > 1.0)
        for (double d = ceil(y0); d <= y1 + 1e-9; d += ystep) {
            char num[32];
            snprintf(num, sizeof num, "10#u%s%d#d", d < 0 ? "\xe2\x88\x92" : "", abs((int)d));
            plmtex("lv", 0.7, (d - y0) / (y1 - y0), 1.0, num);
        }
}
