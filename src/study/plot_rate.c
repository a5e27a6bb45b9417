/* plot_rate.c — the rate figures of a sweep: information rate against the
 * sweep's x axis (SNR, power, photons...) with one curve per quantizer
 * resolution and the unquantized rate; and rate against bits at chosen
 * operating points, one curve per alphabet, with the penalty at a
 * [require] target, the SNR penalty or the rate loss in a lower part. The
 * other dimensions are spread over panels, line styles and files
 * (plot_layout.c). The numbers are the sweep's own records
 * (plot_records.c). */
#include "study/plot.h"

#include "study/report.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

qc_status plot_rate_vs_x(plot_ctx *ctx)
{
    const qc_scenario *sc = ctx->sc;
    json_t *const *records = ctx->records;
    const char *dir = ctx->dir;
    const sc_plots *p = &sc->plots;
    const sc_axis *xa = &sc->axes[p->x_axis];
    const sc_axis *ca = p->curve_axis >= 0 ? &sc->axes[p->curve_axis] : NULL;
    size_t ncurves = ca ? ca->n : 1, nx = xa->n;
    int used[QC_SCENARIO_MAX_AXES] = {0};
    used[p->x_axis] = 1;
    if (ca)
        used[p->curve_axis] = 1;
    layout L;
    plot_choose_layout(sc, used, sc->nalphabets, 0, &L);
    int alpha_panels = L.panel == PANEL_GROUP;
    size_t np = L.npanels, ns = L.nstyles;
    /* rate[((p * ns + s) * ncurves + c) * nx + j]; unq[(p * ns + s) * nx + j] */
    double *x = plot_alloc(ctx, nx * sizeof *x),
           *rate = plot_alloc(ctx, np * ns * ncurves * nx * sizeof *rate),
           *unq = plot_alloc(ctx, np * ns * nx * sizeof *unq);
    if (!x || !rate || !unq)
        return QC_ENOMEM; /* the blocks are the context's */
    char xlabel[160];
    plot_key_label(sc, xa->key, xlabel, sizeof xlabel);
    qc_status st = QC_OK;
    size_t count = 0;
    size_t ngroups = alpha_panels ? 1 : sc->nalphabets;
    for (size_t g = 0; g < ngroups && st == QC_OK; g++) {
        size_t vi[QC_SCENARIO_MAX_AXES] = {0};
        do {
            if (count++ >= MAX_PLOTS_PER_KIND)
                break;
            int memory = 0;
            char ftext[1024] = "", ttext[640] = "";
            plot_file_combo_text(sc, &L, vi, ftext, sizeof ftext, ttext, sizeof ttext);
            char path[4300];
            snprintf(path, sizeof path, "%s/rate-vs-%s%s%s%s.%s", dir, xa->key,
                     alpha_panels ? "" : "_", alpha_panels ? "" : sc->alphabets[g].name, ftext,
                     plot_extension(p->format));
            plot_safe_name(strrchr(path, '/') + 1);
            for (size_t pi = 0; pi < np; pi++)
                for (size_t s = 0; s < ns; s++) {
                    size_t a = alpha_panels ? pi : g;
                    if (L.panel >= 0)
                        vi[L.panel] = pi;
                    plot_set_style_combo(sc, &L, s, vi);
                    for (size_t j = 0; j < nx; j++) {
                        vi[p->x_axis] = j;
                        double *u = &unq[(pi * ns + s) * nx + j];
                        *u = NAN;
                        for (size_t c = 0; c < ncurves; c++) {
                            if (ca)
                                vi[p->curve_axis] = c;
                            json_t *rec = records[plot_point_index(sc, a, vi)];
                            /* a channel with memory: the sequence detector's
                             * rates, with and without the ADC */
                            double im = plot_record_number(rec, "information_rate_bits");
                            memory |= isfinite(im);
                            rate[((pi * ns + s) * ncurves + c) * nx + j] =
                                isfinite(im) ? im : plot_record_number(rec, QC_REPORT_RATE);
                            /* the unquantized rate does not depend on the
                             * quantizer: take it from any curve that has it */
                            if (!isfinite(*u))
                                *u = plot_record_number(
                                    rec, isfinite(im) ? "unquantized_information_rate_bits"
                                                      : QC_REPORT_UNQUANTIZED);
                        }
                    }
                }
            if (!plot_any_finite(rate, np * ns * ncurves * nx)) {
                st = plot_note(ctx, "skipped %s: every point in it failed (see %s)",
                          strrchr(path, '/') + 1, "results.csv");
                continue;
            }
            double x0, x1, y1, dummy;
            for (size_t j = 0; j < nx; j++)
                x[j] = xa->number[j];
            plot_range_of(x, nx, &x0, &x1);
            /* positive values over two decades or more: logarithmic x */
            int logx = x0 > 0 && x1 / x0 >= 100.0;
            if (logx) {
                for (size_t j = 0; j < nx; j++)
                    x[j] = log10(x[j]);
                x0 = log10(x0);
                x1 = log10(x1);
            }
            plot_pad_range(&x0, &x1, nx > 1 ? 0.0 : 0.5);
            plot_range_of(rate, np * ns * ncurves * nx, &dummy, &y1);
            double u1;
            plot_range_of(unq, np * ns * nx, &dummy, &u1);
            if (isfinite(u1) && u1 > y1)
                y1 = u1;
            if (!isfinite(y1) || y1 <= 0)
                y1 = 1.0;
            y1 *= 1.08;

            int w, h;
            plot_page_size(ctx, &L, 0, &w, &h);
            if ((st = plot_page_open(ctx, path, w, h)) != QC_OK)
                break;
            pladv(0);
            plschr(0.0, ctx->font_scale);
            char subject[1200] = "";
            if (!alpha_panels)
                plot_append(subject, sizeof subject, ": ", sc->alphabets[g].label);
            char what[300];
            snprintf(what, sizeof what, "%s against %s",
                     memory ? "information rate with memory (sequence detector)"
                            : plot_rate_name(ctx),
                     xlabel);
            if (!alpha_panels) {
                plot_append(subject, sizeof subject, ": ", what);
            } else {
                snprintf(subject, sizeof subject, "%s", what);
            }
            plot_figure_title(sc, subject, ttext, w, h);
            const char *unit = alpha_panels ? plot_rate_unit(sc, 0, sc->nalphabets)
                                            : plot_rate_unit(sc, g, g + 1);
            char ylabel[160];
            snprintf(ylabel, sizeof ylabel, "%s (%s)", memory ? "information rate"
                                                               : plot_rate_name(ctx), unit);
            int every = nx > 10 ? (int)(nx / 8) : 1;
            int unq_drawn = 0; /* the legend names the unquantized curve if drawn */
            for (size_t pi = 0; pi < np; pi++) {
                double box[4];
                plot_panel_box(&L, pi, w, h, box);
                plvpor(box[0], box[1], box[2], box[3]);
                plot_frame(x0, x1, 0.0, y1, logx ? "l" : "", "");
                plot_labels(pi / L.ncols == L.nrows - 1 || pi + L.ncols >= np ? xlabel : "",
                       pi % L.ncols == 0 ? ylabel : "", "");
                if (np > 1) {
                    char pt[200];
                    if (alpha_panels) {
                        snprintf(pt, sizeof pt, "%s%s", sc->alphabets[pi].label,
                                 plot_alphabet_qam(sc, pi) ? " (per complex symbol)" : "");
                    } else
                        plot_axis_value_words(sc, (size_t)L.panel, pi, pt, sizeof pt);
                    plot_panel_title(pt);
                }
                for (size_t s = 0; s < ns; s++) {
                    for (size_t c = 0; c < ncurves; c++)
                        plot_curve((int)nx, x, rate + ((pi * ns + s) * ncurves + c) * nx, (int)c,
                              ns > 1 ? (int)s : -1, every, (int)c);
                    /* unquantized: thick black line (in the style's dashes) */
                    const double *u = unq + (pi * ns + s) * nx;
                    plcol0(COL_BLACK);
                    pllsty(ns > 1 ? plot_line_styles[s % NCOLOURS] : 1);
                    plwidth(3.0);
                    for (size_t j = 0; j + 1 < nx; j++)
                        if (isfinite(u[j]) && isfinite(u[j + 1])) {
                            plline(2, &x[j], &u[j]);
                            unq_drawn = 1;
                        }
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
                    drawn = plot_any_finite(rate + (q * ncurves + c) * nx, nx);
                if (!drawn)
                    plot_append(name, sizeof name, " ", "(every point failed)");
                plot_legend_add(&lg, name, (int)c, 1);
                if (ns > 1)
                    lg.line_sty[lg.n - 1] = 1;
            }
            if (unq_drawn) {
                plot_legend_add(&lg, "unquantized", 0, 0);
                lg.line_col[lg.n - 1] = COL_BLACK;
                lg.line_sty[lg.n - 1] = 1;
                lg.line_w[lg.n - 1] = 3.0;
            }
            for (size_t s = 0; ns > 1 && s < ns; s++) {
                char name[160];
                plot_style_words(sc, &L, s, name, sizeof name);
                plot_legend_add(&lg, name, 0, 0);
                lg.line_col[lg.n - 1] = COL_BLACK;
                lg.line_sty[lg.n - 1] = plot_line_styles[s % NCOLOURS];
                lg.line_w[lg.n - 1] = 2.0;
            }
            plot_legend_strip(ctx, &lg, w, h);
            st = plot_page_close(ctx, path);
        } while (st == QC_OK && plot_next_combo(sc, vi, L.fixed));
    }
    return st;
}


/* ---------------------------------------------------------------- */
/* Rate against bits at operating points, one curve per alphabet      */
/* ---------------------------------------------------------------- */

/* Lower panel on a log scale: values below the floor (0 among them) are
 * left out of the lines and marked on the floor instead. */
#define LOSS_DECADES 6.0

qc_status plot_rate_vs_bits(plot_ctx *ctx)
{
    const qc_scenario *sc = ctx->sc;
    json_t *const *records = ctx->records;
    const char *dir = ctx->dir;
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
    plot_choose_layout(sc, used, nat, 1, &L);
    int point_panels = L.panel == PANEL_GROUP;
    size_t np = L.npanels, ns = L.nstyles;
    size_t ncell = np * ns * na * nb; /* [((p * ns + s) * na + a) * nb + b] */
    double *bx = plot_alloc(ctx, nb * sizeof *bx), *rate = plot_alloc(ctx, ncell * sizeof *rate),
           *low = plot_alloc(ctx, ncell * sizeof *low),
           *unq = plot_alloc(ctx, np * ns * na * sizeof *unq),
           *sym = plot_alloc(ctx, ncell * sizeof *sym);
    unsigned char *below = plot_alloc(ctx, ncell);
    if (!bx || !rate || !low || !unq || !below || !sym)
        return QC_ENOMEM; /* the blocks are the context's */
    for (size_t b = 0; b < nb; b++)
        bx[b] = ba->number ? ba->number[b] : (double)b;
    qc_status st = QC_OK;
    size_t count = 0;
    char blabel[160];
    plot_key_label(sc, ba->key, blabel, sizeof blabel);
    size_t ngroups = point_panels ? 1 : nat;
    for (size_t o = 0; o < ngroups && st == QC_OK; o++) {
        size_t vi[QC_SCENARIO_MAX_AXES] = {0};
        do {
            if (count++ >= MAX_PLOTS_PER_KIND)
                break;
            char ftext[1024] = "", ttext[640] = "";
            if (xa && !point_panels && xa->n > 1) { /* one value: named below */
                char w[160];
                plot_axis_value_words(sc, (size_t)p->x_axis, p->bits_at[o], w, sizeof w);
                plot_append(ttext, sizeof ttext, ", ", w);
                plot_file_part(ftext, sizeof ftext, xa->key, xa->values[p->bits_at[o]]);
            }
            plot_file_combo_text(sc, &L, vi, ftext, sizeof ftext, ttext, sizeof ttext);
            char path[4300];
            snprintf(path, sizeof path, "%s/rate-vs-%s%s.%s", dir, ba->key, ftext,
                     plot_extension(p->format));
            plot_safe_name(strrchr(path, '/') + 1);
            /* the lower panel shows the penalty at the target ([require],
             * or the threshold of a fec key) when met somewhere here (the dB the
             * quantizer costs where the link closes), else the SNR penalty
             * when the model defines one at these points, else the loss
             * in bits */
            int penalty_db = 0, at_target = 0;
            /* a channel with memory: the sequence detector's rate, the
             * symbol-by-symbol rate beside it, the ADC's cost below */
            int memory = 0;
            for (int pass = 0; pass < 2; pass++)
                for (size_t pi = 0; pi < np; pi++)
                    for (size_t s = 0; s < ns; s++) {
                        if (xa)
                            vi[p->x_axis] = p->bits_at[point_panels ? pi : o];
                        if (L.panel >= 0)
                            vi[L.panel] = pi;
                        plot_set_style_combo(sc, &L, s, vi);
                        for (size_t a = 0; a < na; a++) {
                            size_t cell = (pi * ns + s) * na + a;
                            if (pass == 1)
                                unq[cell] = NAN;
                            for (size_t b = 0; b < nb; b++) {
                                vi[p->curve_axis] = b;
                                json_t *rec = records[plot_point_index(sc, a, vi)];
                                if (pass == 0) {
                                    penalty_db |=
                                        isfinite(plot_record_number(rec, QC_REPORT_SNR_PENALTY));
                                    /* from [require], or a fec key's threshold */
                                    at_target |= isfinite(plot_record_number(rec, "penalty_db"));
                                    memory |= isfinite(
                                        plot_record_number(rec, "information_rate_bits"));
                                    continue;
                                }
                                if (memory) {
                                    const size_t i = cell * nb + b;
                                    rate[i] = plot_record_number(rec, "information_rate_bits");
                                    sym[i] = plot_record_number(rec, "symbolwise_rate_bits");
                                    low[i] = plot_record_number(
                                                 rec, "unquantized_information_rate_bits") -
                                             rate[i];
                                    if (!isfinite(unq[cell]))
                                        unq[cell] = plot_record_number(
                                            rec, "unquantized_information_rate_bits");
                                    continue;
                                }
                                rate[cell * nb + b] = plot_record_number(rec, QC_REPORT_RATE);
                                low[cell * nb + b] = plot_record_number(
                                    rec, at_target    ? "penalty_db"
                                         : penalty_db ? QC_REPORT_SNR_PENALTY
                                                      : QC_REPORT_LOSS);
                                if (!isfinite(unq[cell]))
                                    unq[cell] = plot_record_number(rec, QC_REPORT_UNQUANTIZED);
                            }
                        }
                    }
            vi[p->curve_axis] = 0;
            if (!plot_any_finite(rate, ncell)) {
                st = plot_note(ctx, "skipped %s: every point in it failed (see %s)",
                          strrchr(path, '/') + 1, "results.csv");
                continue;
            }
            double x0, x1, y1, dummy;
            plot_range_of(bx, nb, &x0, &x1);
            plot_pad_range(&x0, &x1, 0.03);
            plot_range_of(rate, ncell, &dummy, &y1);
            double u1;
            plot_range_of(unq, np * ns * na, &dummy, &u1);
            if (isfinite(u1) && (!isfinite(y1) || u1 > y1))
                y1 = u1;
            if (!isfinite(y1) || y1 <= 0)
                y1 = 1.0;
            y1 *= 1.08;
            /* lower panel: penalty in dB (linear) or loss in bits (log) */
            penalty_db |= at_target;
            int logscale = !penalty_db && !memory;
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
                /* the top just above the largest loss, not a whole decade
                 * above it (a loss of 0.95 bit drew the axis up to 10) */
                l1 = log10(top) + 0.05;
                l0 = fmax(floor(log10(floor_v)), floor(l1 - LOSS_DECADES));
                if (l1 <= l0 + 1.0)
                    l1 = l0 + 1.0;
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
                plot_range_of(low, ncell, &l0, &l1);
                if (!isfinite(l0)) {
                    l0 = 0;
                    l1 = 1;
                }
                l0 = fmin(l0, 0.0);
                plot_pad_range(&l0, &l1, 0.05);
            }

            int w, h;
            plot_page_size(ctx, &L, 1, &w, &h);
            if ((st = plot_page_open(ctx, path, w, h)) != QC_OK)
                break;
            pladv(0);
            plschr(0.0, 0.95 * ctx->font_scale);
            char subject[1400];
            snprintf(subject, sizeof subject, "%s against %s",
                     memory ? "information rate with memory (i.i.d. law)" : plot_rate_name(ctx),
                     blabel);
            plot_figure_title(sc, subject, ttext, w, h);
            char ylabel[160];
            snprintf(ylabel, sizeof ylabel, "rate (%s)", plot_rate_unit(sc, 0, na));
            char lylabel[160];
            if (memory)
                snprintf(lylabel, sizeof lylabel, "ADC cost (%s)",
                         plot_rate_unit(sc, 0, na));
            else if (at_target)
                snprintf(lylabel, sizeof lylabel, "penalty at the target (dB)");
            else if (penalty_db)
                snprintf(lylabel, sizeof lylabel, "SNR penalty (dB)");
            else
                snprintf(lylabel, sizeof lylabel, "rate loss (%s)", plot_rate_unit(sc, 0, na));
            const char *ticks = (x1 - x0) <= 20 ? "i" : ""; /* whole bits */
            int unq_drawn = 0; /* the legend names the unquantized line if drawn */
            for (size_t pi = 0; pi < np; pi++) {
                double box[4];
                plot_panel_box(&L, pi, w, h, box);
                double split = box[2] + 0.42 * (box[3] - box[2]);
                double gap = 32.0 / h;
                /* upper part: rate */
                plvpor(box[0], box[1], split + gap, box[3]);
                plot_frame_ticks(x0, x1, 0.0, y1, 0, ticks[0] ? 1.0 : 0.0, 0.0, "");
                plot_labels("", pi % L.ncols == 0 ? ylabel : "", "");
                if (np > 1) {
                    char pt[200];
                    if (point_panels)
                        plot_axis_value_words(sc, (size_t)p->x_axis, p->bits_at[pi], pt, sizeof pt);
                    else
                        plot_axis_value_words(sc, (size_t)L.panel, pi, pt, sizeof pt);
                    plot_panel_title(pt);
                }
                for (size_t s = 0; s < ns; s++)
                    for (size_t a = 0; a < na; a++) {
                        size_t cell = (pi * ns + s) * na + a;
                        plot_curve((int)nb, bx, rate + cell * nb, (int)a, ns > 1 ? (int)s : -1, 1, 0);
                        if (memory) /* symbol by symbol: dashed, its colour */
                            plot_curve((int)nb, bx, sym + cell * nb, (int)a, 1, 1, 0);
                        /* the unquantized rate: thin dotted line in its colour */
                        if (isfinite(unq[cell])) {
                            unq_drawn = 1;
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
                plot_frame_ticks(x0, x1, l0, l1, 1, ticks[0] ? 1.0 : 0.0,
                            logscale ? plot_log_step(l1 - l0) : 0.0, logscale ? "l" : "");
                plot_labels(pi / L.ncols == L.nrows - 1 || pi + L.ncols >= np ? blabel : "",
                       pi % L.ncols == 0 ? lylabel : "", "");
                for (size_t s = 0; s < ns; s++)
                    for (size_t a = 0; a < na; a++) {
                        size_t cell = (pi * ns + s) * na + a;
                        plot_curve((int)nb, bx, low + cell * nb, (int)a, ns > 1 ? (int)s : -1, 1, 0);
                        plcol0(COL_FIRST + (int)a % NCOLOURS);
                        plwidth(1.5);
                        for (size_t b = 0; b < nb; b++)
                            if (below[cell * nb + b])
                                plot_draw_marker(bx[b], l0 + 0.06 * (l1 - l0), MARK_BELOW, 1);
                    }
            }
            legend lg = {0};
            for (size_t a = 0; a < na; a++) {
                /* an alphabet whose every point here failed has no curve */
                int drawn = 0;
                for (size_t c = 0; c < np * ns && !drawn; c++)
                    drawn = plot_any_finite(rate + (c * na + a) * nb, nb);
                char name[160];
                snprintf(name, sizeof name, "%s%s", sc->alphabets[a].label,
                         drawn ? "" : " (every point failed)");
                plot_legend_add(&lg, name, (int)a, 1);
                if (ns > 1)
                    lg.line_sty[lg.n - 1] = 1;
            }
            if (memory) {
                plot_legend_add(&lg, "sequence detector", 0, 0);
                lg.line_col[lg.n - 1] = COL_BLACK;
                lg.line_sty[lg.n - 1] = plot_line_styles[0];
                plot_legend_add(&lg, "symbol by symbol", 0, 0);
                lg.line_col[lg.n - 1] = COL_BLACK;
                lg.line_sty[lg.n - 1] = plot_line_styles[1];
            }
            if (unq_drawn) {
                plot_legend_add(&lg, memory ? "no ADC (sequence)" : "unquantized", 0, 0);
                lg.line_col[lg.n - 1] = COL_BLACK;
                lg.line_sty[lg.n - 1] = 3;
                lg.line_w[lg.n - 1] = 1.0;
            }
            for (size_t s = 0; ns > 1 && s < ns; s++) {
                char name[160];
                plot_style_words(sc, &L, s, name, sizeof name);
                plot_legend_add(&lg, name, 0, 0);
                lg.line_col[lg.n - 1] = COL_BLACK;
                lg.line_sty[lg.n - 1] = plot_line_styles[s % NCOLOURS];
            }
            if (any_below) {
                char name[96];
                {
                    snprintf(name, sizeof name, "loss < 10#u%s%d#d or 0",
                             l0 < 0 ? "\xe2\x88\x92" : "", abs((int)l0));
                }
                plot_legend_add(&lg, name, 0, 0);
                lg.opt[lg.n - 1] = PL_LEGEND_SYMBOL;
                lg.sym_col[lg.n - 1] = COL_BLACK;
                lg.sym[lg.n - 1] = "\xe2\x96\xbc"; /* ▼ */
            }
            plot_legend_strip(ctx, &lg, w, h);
            st = plot_page_close(ctx, path);
        } while (st == QC_OK && plot_next_combo(sc, vi, L.fixed));
    }
    return st;
}

