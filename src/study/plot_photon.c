/* plot_photon.c — the figure a photon-counting study quotes: the photon
 * efficiency (bits per detected signal photon) of pulse-position
 * modulation against the detected photons per pulse, above its
 * dimensional efficiency (bits per slot) against the same photons, both
 * on logarithmic axes; one colour per M (the scenario's alphabets, and an
 * `alphabet` sweep axis if there is one), the soft receiver (the
 * quantized counts of every slot) solid with markers, the hard receiver
 * (one threshold per slot, erasures) dashed, and the unquantized counts
 * thin and dotted. The trade between the two efficiencies is the one of
 * photon-starved links (Dolinar, Birnbaum, Erkmen, Moision, "On
 * approaching the ultimate limits of photon-efficient and
 * bandwidth-efficient optical communication", ICSOS 2011). The photons
 * are each point's own mean detected signal photons per symbol (one pulse
 * per symbol), so a sweep over received power is drawn on the same axes.
 * The other sweep axes are spread over panels and files
 * (plot_layout.c); line styles are the receivers'. */
#include "study/plot.h"
#include "study/report.h"
#include "study/scenario_keys.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* At most this many decades below the largest value drawn. */
#define MAX_DECADES 6.0

enum { RX_SOFT, RX_HARD, RX_UNQ, NRX };

/* log10 range of the positive finite values, at most MAX_DECADES deep. */
static void log_range(const double *v, size_t n, double *lo, double *hi)
{
    double top = -INFINITY, bottom = INFINITY;
    for (size_t i = 0; i < n; i++)
        if (isfinite(v[i]) && v[i] > 0) {
            top = fmax(top, v[i]);
            bottom = fmin(bottom, v[i]);
        }
    if (!isfinite(top)) {
        *lo = -1;
        *hi = 0;
        return;
    }
    bottom = fmax(bottom, top * pow(10.0, -MAX_DECADES));
    *lo = log10(bottom);
    *hi = log10(top);
    plot_pad_range(lo, hi, 0.04);
}

/* Values to log10; those below 10^lo (or not positive) to NaN. */
static void to_log(double *v, size_t n, double lo)
{
    for (size_t i = 0; i < n; i++)
        v[i] = isfinite(v[i]) && v[i] > 0 && log10(v[i]) >= lo ? log10(v[i]) : NAN;
}

/* "16-PPM" for "ppm:16", else the value itself. */
static void curve_name(const qc_scenario *sc, const sc_axis *ca, size_t a, size_t v, char *out,
                       size_t cap)
{
    char val[96] = "";
    if (ca) {
        const char *s = ca->values[v];
        if (strncmp(s, "ppm:", 4) == 0)
            snprintf(val, sizeof val, "%s-PPM", s + 4);
        else
            snprintf(val, sizeof val, "%s", s);
    }
    if (!ca)
        snprintf(out, cap, "%s", sc->alphabets[a].label);
    else if (sc->nalphabets > 1)
        snprintf(out, cap, "%s, %s", sc->alphabets[a].label, val);
    else
        snprintf(out, cap, "%s", val);
}

/* One receiver's curve in colour c: soft solid with markers, hard
 * dashed, unquantized thin dotted. */
static void draw_rx(int rx, size_t nx, const double *x, const double *y, int c)
{
    if (rx == RX_SOFT) {
        plot_curve((int)nx, x, y, c, 0, 1, 0);
        return;
    }
    plcol0(COL_FIRST + c % NCOLOURS);
    pllsty(rx == RX_HARD ? 3 : 2);
    plwidth(rx == RX_HARD ? 2.0 : 1.0);
    for (size_t j = 0; j + 1 < nx; j++)
        if (isfinite(x[j]) && isfinite(y[j]) && isfinite(x[j + 1]) && isfinite(y[j + 1]))
            plline(2, &x[j], &y[j]);
    pllsty(1);
}

qc_status plot_photon_efficiency(plot_ctx *ctx)
{
    const qc_scenario *sc = ctx->sc;
    const sc_plots *p = &sc->plots;
    const sc_axis *xa = &sc->axes[p->x_axis];
    const int cax = sc_axis_index(sc, "alphabet");
    const sc_axis *ca = cax >= 0 ? &sc->axes[cax] : NULL;
    const size_t na = sc->nalphabets, nca = ca ? ca->n : 1, ncurves = na * nca, nx = xa->n;
    int used[QC_SCENARIO_MAX_AXES] = {0};
    used[p->x_axis] = 1;
    if (cax >= 0)
        used[cax] = 1;
    layout L;
    plot_choose_layout(sc, used, 1, 0, &L);
    /* line styles tell the receivers apart: no axis over styles */
    L.nstyles = 1;
    for (size_t k = 0; k < sc->naxes; k++) {
        L.style[k] = 0;
        L.fixed[k] = used[k] || (int)k == L.panel || sc->axes[k].n == 1;
    }
    const size_t np = L.npanels, ncell = np * ncurves * nx;
    /* [((pi * ncurves + c) * nx + j)] per receiver */
    double *xs = plot_alloc(ctx, ncell * sizeof *xs);
    double *bpp[NRX], *slot[NRX];
    for (int r = 0; r < NRX; r++) {
        bpp[r] = plot_alloc(ctx, ncell * sizeof *bpp[r]);
        slot[r] = plot_alloc(ctx, ncell * sizeof *slot[r]);
        if (!bpp[r] || !slot[r])
            return QC_ENOMEM; /* the blocks are the context's */
    }
    if (!xs)
        return QC_ENOMEM;
    qc_status st = QC_OK;
    size_t count = 0;
    size_t vi[QC_SCENARIO_MAX_AXES] = {0};
    do {
        if (count++ >= MAX_PLOTS_PER_KIND)
            break;
        char ftext[1024] = "", ttext[640] = "";
        plot_file_combo_text(sc, &L, vi, ftext, sizeof ftext, ttext, sizeof ttext);
        char path[4300];
        snprintf(path, sizeof path, "%s/photon-efficiency%s.%s", ctx->dir, ftext,
                 plot_extension(p->format));
        plot_safe_name(strrchr(path, '/') + 1);
        for (size_t pi = 0; pi < np; pi++) {
            if (L.panel >= 0)
                vi[L.panel] = pi;
            for (size_t c = 0; c < ncurves; c++) {
                const size_t a = c / nca;
                if (ca)
                    vi[cax] = c % nca;
                for (size_t j = 0; j < nx; j++) {
                    vi[p->x_axis] = j;
                    json_t *rec = ctx->records[plot_point_index(sc, a, vi)];
                    const size_t i = (pi * ncurves + c) * nx + j;
                    const double ph = plot_record_number(rec, QC_REPORT_PHOTONS);
                    const double m = plot_record_number(rec, QC_REPORT_PPM_SLOTS);
                    const double unq = plot_record_number(rec, QC_REPORT_UNQUANTIZED);
                    const int ppm = isfinite(m) && m >= 2;
                    xs[i] = ppm && ph > 0 ? ph : NAN;
                    bpp[RX_SOFT][i] = ppm ? plot_record_number(rec, QC_REPORT_BITS_PER_PHOTON) : NAN;
                    bpp[RX_HARD][i] = ppm ? plot_record_number(rec, QC_REPORT_HARD_BITS_PER_PHOTON) : NAN;
                    bpp[RX_UNQ][i] = ppm && ph > 0 ? unq / ph : NAN;
                    slot[RX_SOFT][i] = ppm ? plot_record_number(rec, QC_REPORT_RATE_PER_SLOT) : NAN;
                    slot[RX_HARD][i] =
                        ppm ? plot_record_number(rec, QC_REPORT_HARD_RATE_PER_SLOT) : NAN;
                    slot[RX_UNQ][i] = ppm ? unq / m : NAN;
                }
            }
        }
        if (ca)
            vi[cax] = 0;
        vi[p->x_axis] = 0;
        if (!plot_any_finite(xs, ncell)) {
            st = plot_note(ctx, "skipped %s: no point in it is pulse-position modulation with "
                                "signal photons (see %s)",
                           strrchr(path, '/') + 1, "results.csv");
            continue;
        }
        double x0, x1, b0, b1, s0, s1;
        for (size_t i = 0; i < ncell; i++)
            xs[i] = isfinite(xs[i]) && xs[i] > 0 ? log10(xs[i]) : NAN;
        plot_range_of(xs, ncell, &x0, &x1);
        plot_pad_range(&x0, &x1, x1 > x0 ? 0.02 : 0.5);
        {
            double lo = INFINITY, hi = -INFINITY, l, h;
            for (int r = 0; r < NRX; r++) {
                log_range(bpp[r], ncell, &l, &h);
                if (plot_any_finite(bpp[r], ncell)) {
                    lo = fmin(lo, l);
                    hi = fmax(hi, h);
                }
            }
            b0 = isfinite(lo) ? fmax(lo, hi - MAX_DECADES) : -1;
            b1 = isfinite(hi) ? hi : 0;
            lo = INFINITY;
            hi = -INFINITY;
            for (int r = 0; r < NRX; r++) {
                log_range(slot[r], ncell, &l, &h);
                if (plot_any_finite(slot[r], ncell)) {
                    lo = fmin(lo, l);
                    hi = fmax(hi, h);
                }
            }
            s0 = isfinite(lo) ? fmax(lo, hi - MAX_DECADES) : -1;
            s1 = isfinite(hi) ? hi : 0;
        }
        for (int r = 0; r < NRX; r++) {
            to_log(bpp[r], ncell, b0);
            to_log(slot[r], ncell, s0);
        }

        int w, h;
        plot_page_size(ctx, &L, 1, &w, &h);
        if ((st = plot_page_open(ctx, path, w, h)) != QC_OK)
            break;
        pladv(0);
        plschr(0.0, 0.95 * ctx->font_scale);
        plot_figure_title(sc,
                          "photon efficiency and rate per slot against detected photons per "
                          "pulse",
                          ttext, w, h);
        const char *xlabel = "detected signal photons per pulse";
        for (size_t pi = 0; pi < np; pi++) {
            double box[4];
            plot_panel_box(&L, pi, w, h, box);
            double split = box[2] + 0.5 * (box[3] - box[2]);
            double gap = 24.0 / h;
            const int left = pi % L.ncols == 0;
            const int bottom = pi / L.ncols == L.nrows - 1 || pi + L.ncols >= np;
            /* upper part: bits per detected photon */
            plvpor(box[0], box[1], split + gap, box[3]);
            plot_log_frame(x0, x1, b0, b1, 1, 0);
            plot_labels("", left ? "bit per detected photon" : "", "");
            if (np > 1) {
                char pt[200];
                plot_axis_value_words(sc, (size_t)L.panel, pi, pt, sizeof pt);
                plot_panel_title(pt);
            }
            for (size_t c = 0; c < ncurves; c++)
                for (int r = NRX; r-- > 0;) {
                    const size_t i = (pi * ncurves + c) * nx;
                    draw_rx(r, nx, xs + i, bpp[r] + i, (int)c);
                }
            /* lower part: bits per slot */
            plvpor(box[0], box[1], box[2], split - gap);
            plot_log_frame(x0, x1, s0, s1, 1, 1);
            plot_labels(bottom ? xlabel : "", left ? "rate per slot (bit/slot)" : "", "");
            for (size_t c = 0; c < ncurves; c++)
                for (int r = NRX; r-- > 0;) {
                    const size_t i = (pi * ncurves + c) * nx;
                    draw_rx(r, nx, xs + i, slot[r] + i, (int)c);
                }
        }
        legend lg = {0};
        for (size_t c = 0; c < ncurves; c++) {
            char name[160];
            curve_name(sc, ca, c / nca, c % nca, name, sizeof name);
            plot_legend_add(&lg, name, (int)c, 1);
            lg.line_sty[lg.n - 1] = 1;
        }
        static const char *const rx_names[NRX] = {"soft: quantized counts",
                                                  "hard: one threshold per slot",
                                                  "soft: unquantized counts"};
        static const int rx_sty[NRX] = {1, 3, 2};
        static const double rx_w[NRX] = {2.0, 2.0, 1.0};
        for (int r = 0; r < NRX; r++) {
            plot_legend_add(&lg, rx_names[r], 0, 0);
            lg.line_col[lg.n - 1] = COL_BLACK;
            lg.line_sty[lg.n - 1] = rx_sty[r];
            lg.line_w[lg.n - 1] = rx_w[r];
        }
        plot_legend_strip(ctx, &lg, w, h);
        st = plot_page_close(ctx, path);
    } while (st == QC_OK && plot_next_combo(sc, vi, L.fixed));
    return st;
}
