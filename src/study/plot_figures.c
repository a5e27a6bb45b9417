/* plot_figures.c — the figures practitioners quote, drawn from a sweep's
 * records: the pre-FEC bit error rate of MAP hard decisions (log scale)
 * against the sweep's x axis, one curve per quantizer resolution, with a
 * hard-decision FEC's threshold as a dashed line; and the answer of a
 * [require] section, the required value of the key solved for against
 * quantizer bits (or against the x axis: required SNR against ENOB), one
 * curve per alphabet with the unquantized receiver's
 * value dashed (the sensitivity curve), the penalty at the target in dB
 * below it. The other dimensions are spread over panels, line styles and
 * files as in the rate figures (plot_layout.c). */
#include "study/plot.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* At most this many decades of BER below the largest one drawn; smaller
 * rates (and 0) are marked on the floor as below the axis range. */
#define BER_DECADES 12.0

/* The hard-decision FEC threshold of a point (NaN without one) and the
 * code's name. */
static double fec_threshold(json_t *rec, const char **name)
{
    const char *status = plot_record_status(rec);
    if (!status || strcmp(status, "ok") != 0)
        return NAN;
    json_t *fec = json_object_get(json_object_get(rec, "result"), "fec");
    const char *kind = json_string_value(json_object_get(fec, "threshold_kind"));
    json_t *t = json_object_get(fec, "threshold");
    if (!kind || strcmp(kind, "ber") != 0 || !json_is_number(t))
        return NAN;
    *name = json_string_value(json_object_get(fec, "name"));
    return json_number_value(t);
}

static void add_below_legend(legend *lg, const char *what, double l0)
{
    char name[96];
    snprintf(name, sizeof name, "%s < 10#u%s%d#d or 0", what, l0 < 0 ? "\xe2\x88\x92" : "",
             abs((int)l0));
    plot_legend_add(lg, name, 0, 0);
    lg->opt[lg->n - 1] = PL_LEGEND_SYMBOL;
    lg->sym_col[lg->n - 1] = COL_BLACK;
    lg->sym[lg->n - 1] = "\xe2\x96\xbc"; /* ▼ */
}

qc_status plot_ber_vs_x(plot_ctx *ctx)
{
    const qc_scenario *sc = ctx->sc;
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
    size_t np = L.npanels, ns = L.nstyles, ncell = np * ns * ncurves * nx;
    /* ber[((p * ns + s) * ncurves + c) * nx + j]; thr[p * ns + s] */
    double *x = plot_alloc(ctx, nx * sizeof *x), *ber = plot_alloc(ctx, ncell * sizeof *ber),
           *thr = plot_alloc(ctx, np * ns * sizeof *thr);
    /* a simulated BER's 95 % interval, drawn as error bars: half-width,
     * then log10 of its ends */
    double *ci = plot_alloc(ctx, ncell * sizeof *ci), *lo = plot_alloc(ctx, ncell * sizeof *lo),
           *hi = plot_alloc(ctx, ncell * sizeof *hi);
    unsigned char *below = plot_alloc(ctx, ncell);
    if (!x || !ber || !thr || !ci || !lo || !hi || !below)
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
            char ftext[1024] = "", ttext[640] = "";
            plot_file_combo_text(sc, &L, vi, ftext, sizeof ftext, ttext, sizeof ttext);
            char path[4300];
            snprintf(path, sizeof path, "%s/ber-vs-%s%s%s%s.%s", ctx->dir, xa->key,
                     alpha_panels ? "" : "_", alpha_panels ? "" : sc->alphabets[g].name, ftext,
                     plot_extension(p->format));
            plot_safe_name(strrchr(path, '/') + 1);
            const char *fec_name = NULL;
            int memory = 0;
            for (size_t pi = 0; pi < np; pi++)
                for (size_t s = 0; s < ns; s++) {
                    size_t a = alpha_panels ? pi : g;
                    if (L.panel >= 0)
                        vi[L.panel] = pi;
                    plot_set_style_combo(sc, &L, s, vi);
                    thr[pi * ns + s] = NAN;
                    for (size_t j = 0; j < nx; j++) {
                        vi[p->x_axis] = j;
                        for (size_t c = 0; c < ncurves; c++) {
                            if (ca)
                                vi[p->curve_axis] = c;
                            json_t *rec = ctx->records[plot_point_index(sc, a, vi)];
                            /* a channel with memory: its BCJR detector's BER,
                             * none on a coherent one (never the BER of the
                             * link without interference) */
                            const int mem = !isnan(plot_record_number(rec, "states"));
                            memory |= mem;
                            ber[((pi * ns + s) * ncurves + c) * nx + j] =
                                plot_record_number(rec, mem ? "bcjr_pre_fec_ber"
                                                            : "pre_fec_ber");
                            ci[((pi * ns + s) * ncurves + c) * nx + j] =
                                mem ? plot_record_number(rec, "bcjr_pre_fec_ber_ci") : NAN;
                            if (!isfinite(thr[pi * ns + s]))
                                thr[pi * ns + s] = fec_threshold(rec, &fec_name);
                        }
                    }
                }
            if (!plot_any_finite(ber, ncell)) {
                st = plot_note(ctx, "skipped %s: no point in it has a pre-FEC BER (see %s)",
                               strrchr(path, '/') + 1, "results.csv");
                continue;
            }
            /* the y range: log10 of the BER, at most BER_DECADES decades */
            double top = -INFINITY, bottom = INFINITY;
            for (size_t i = 0; i < ncell; i++)
                if (isfinite(ber[i]) && ber[i] > 0) {
                    top = fmax(top, ber[i]);
                    bottom = fmin(bottom, ber[i]);
                }
            for (size_t i = 0; i < np * ns; i++)
                if (isfinite(thr[i]) && thr[i] > 0) {
                    top = fmax(top, thr[i]);
                    bottom = fmin(bottom, thr[i]);
                }
            if (!isfinite(top)) { /* every BER is 0 */
                top = 1e-1;
                bottom = 1e-2;
            }
            bottom = fmax(bottom, pow(10.0, -BER_DECADES) * top);
            double y0 = floor(log10(bottom)), y1 = ceil(log10(top) + 0.05);
            if (y1 <= y0)
                y1 = y0 + 1;
            int any_below = 0;
            for (size_t i = 0; i < ncell; i++) {
                below[i] = isfinite(ber[i]) && ber[i] < pow(10.0, y0);
                any_below |= below[i];
                /* the interval's ends, its lower end held at the frame */
                int bar = isfinite(ber[i]) && !below[i] && isfinite(ci[i]) && ci[i] > 0.0;
                lo[i] = bar ? log10(fmax(ber[i] - ci[i], pow(10.0, y0))) : NAN;
                hi[i] = bar ? fmin(log10(ber[i] + ci[i]), y1) : NAN;
                ber[i] = isfinite(ber[i]) && !below[i] ? log10(ber[i]) : NAN;
            }
            double x0, x1;
            for (size_t j = 0; j < nx; j++)
                x[j] = xa->number[j];
            plot_range_of(x, nx, &x0, &x1);
            int logx = x0 > 0 && x1 / x0 >= 100.0; /* as rate against x */
            if (logx) {
                for (size_t j = 0; j < nx; j++)
                    x[j] = log10(x[j]);
                x0 = log10(x0);
                x1 = log10(x1);
            }
            plot_pad_range(&x0, &x1, nx > 1 ? 0.0 : 0.5);

            int w, h;
            plot_page_size(ctx, &L, 0, &w, &h);
            if ((st = plot_page_open(ctx, path, w, h)) != QC_OK)
                break;
            pladv(0);
            plschr(0.0, ctx->font_scale);
            char subject[1200] = "", what[300];
            snprintf(what, sizeof what, "pre-FEC bit error rate against %s", xlabel);
            if (!alpha_panels)
                plot_append(subject, sizeof subject, ": ", sc->alphabets[g].label);
            plot_append(subject, sizeof subject, ": ", what);
            plot_figure_title(sc, subject, ttext, w, h);
            const char *ylabel = memory ? "pre-FEC BER (BCJR; bars: 95 % interval)"
                                        : "pre-FEC BER (MAP hard decisions)";
            int every = nx > 10 ? (int)(nx / 8) : 1;
            for (size_t pi = 0; pi < np; pi++) {
                double box[4];
                plot_panel_box(&L, pi, w, h, box);
                plvpor(box[0], box[1], box[2], box[3]);
                plot_log_frame(x0, x1, y0, y1, logx, 1);
                plot_labels(pi / L.ncols == L.nrows - 1 || pi + L.ncols >= np ? xlabel : "",
                            pi % L.ncols == 0 ? ylabel : "", "");
                if (np > 1) {
                    char pt[200];
                    if (alpha_panels)
                        snprintf(pt, sizeof pt, "%s", sc->alphabets[pi].label);
                    else
                        plot_axis_value_words(sc, (size_t)L.panel, pi, pt, sizeof pt);
                    plot_panel_title(pt);
                }
                for (size_t s = 0; s < ns; s++) {
                    for (size_t c = 0; c < ncurves; c++) {
                        size_t cell = ((pi * ns + s) * ncurves + c) * nx;
                        plot_curve((int)nx, x, ber + cell, (int)c, ns > 1 ? (int)s : -1, every,
                                   (int)c);
                        plcol0(COL_FIRST + (int)c % NCOLOURS);
                        plwidth(1.5);
                        for (size_t j = 0; j < nx; j++)
                            if (below[cell + j])
                                plot_draw_marker(x[j], y0 + 0.04 * (y1 - y0), MARK_BELOW, 1);
                        plwidth(1.0);
                        for (size_t j = 0; j < nx; j++)
                            if (isfinite(lo[cell + j]))
                                plerry(1, &x[j], &lo[cell + j], &hi[cell + j]);
                    }
                    double t = thr[pi * ns + s];
                    if (isfinite(t) && t > 0) { /* the FEC threshold: black dashed */
                        double tx[2] = {x0, x1}, ty[2] = {log10(t), log10(t)};
                        plcol0(COL_BLACK);
                        pllsty(3);
                        plwidth(2.0);
                        plline(2, tx, ty);
                        pllsty(1);
                    }
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
                plot_legend_add(&lg, name, (int)c, 1);
                if (ns > 1)
                    lg.line_sty[lg.n - 1] = 1;
            }
            if (plot_any_finite(thr, np * ns)) {
                char name[96];
                snprintf(name, sizeof name, "FEC %s threshold", fec_name ? fec_name : "");
                plot_legend_add(&lg, name, 0, 0);
                lg.line_col[lg.n - 1] = COL_BLACK;
                lg.line_sty[lg.n - 1] = 3;
                lg.line_w[lg.n - 1] = 2.0;
            }
            for (size_t s = 0; ns > 1 && s < ns; s++) {
                char name[160];
                plot_style_words(sc, &L, s, name, sizeof name);
                plot_legend_add(&lg, name, 0, 0);
                lg.line_col[lg.n - 1] = COL_BLACK;
                lg.line_sty[lg.n - 1] = plot_line_styles[s % NCOLOURS];
                lg.line_w[lg.n - 1] = 2.0;
            }
            if (any_below)
                add_below_legend(&lg, "BER", y0);
            plot_legend_strip(ctx, &lg, w, h);
            st = plot_page_close(ctx, path);
        } while (st == QC_OK && plot_next_combo(sc, vi, L.fixed));
    }
    return st;
}

/* "target pre-FEC BER 0.00024", "FEC kp4 (pre-FEC BER 0.00224)". */
static void target_words(const qc_target *t, char *out, size_t cap)
{
    const char *figure = t->kind == QC_TARGET_BER    ? "pre-FEC BER"
                         : t->kind == QC_TARGET_NGMI ? "NGMI"
                         : t->kind == QC_TARGET_GMI  ? "GMI (bit/symbol)"
                         : t->kind == QC_TARGET_RATE_PER_SLOT ? "rate per slot (bit/slot)"
                         : t->kind == QC_TARGET_BITS_PER_PHOTON
                             ? "photon efficiency (bit/photon)"
                             : "rate (bit/symbol)";
    if (t->from_fec)
        snprintf(out, cap, "FEC %s (%s %g)", t->fec.name, figure, t->value);
    else
        snprintf(out, cap, "target %s %g", figure, t->value);
}

/* The required value against sweep axis `axis` (bits, or x). */
static qc_status required_against(plot_ctx *ctx, int axis)
{
    const qc_scenario *sc = ctx->sc;
    const sc_plots *p = &sc->plots;
    const sc_axis *ba = &sc->axes[axis];
    const int whole = axis == p->bits_axis; /* ticks at whole bits */
    const char *key = sc->require.solve_for;
    int kax = -1;
    for (size_t k = 0; k < sc->naxes; k++)
        if (strcmp(sc->axes[k].key, key) == 0)
            kax = (int)k;
    size_t nb = ba->n, na = sc->nalphabets;
    int used[QC_SCENARIO_MAX_AXES] = {0};
    used[axis] = 1;
    if (kax >= 0) /* the required value does not depend on the point's own value */
        used[kax] = 1;
    layout L;
    plot_choose_layout(sc, used, 1, 0, &L);
    size_t np = L.npanels, ns = L.nstyles;
    size_t ncell = np * ns * na * nb; /* [((p * ns + s) * na + a) * nb + b] */
    double *bx = plot_alloc(ctx, nb * sizeof *bx), *req = plot_alloc(ctx, ncell * sizeof *req),
           *unq = plot_alloc(ctx, ncell * sizeof *unq), *pen = plot_alloc(ctx, ncell * sizeof *pen);
    if (!bx || !req || !unq || !pen)
        return QC_ENOMEM; /* the blocks are the context's */
    for (size_t b = 0; b < nb; b++)
        bx[b] = ba->number ? ba->number[b] : (double)b;
    char blabel[160], klabel[160], ylabel[200], target[200];
    plot_key_label(sc, ba->key, blabel, sizeof blabel);
    plot_key_label(sc, key, klabel, sizeof klabel);
    snprintf(ylabel, sizeof ylabel, "required %s", klabel);
    target_words(&sc->require.target, target, sizeof target);
    const char *lylabel = "penalty at the target (dB)";
    qc_status st = QC_OK;
    size_t count = 0;
    size_t vi[QC_SCENARIO_MAX_AXES] = {0};
    do {
        if (count++ >= MAX_PLOTS_PER_KIND)
            break;
        char ftext[1024] = "", ttext[640] = "";
        plot_append(ttext, sizeof ttext, ", ", target);
        plot_file_combo_text(sc, &L, vi, ftext, sizeof ftext, ttext, sizeof ttext);
        char path[4300];
        snprintf(path, sizeof path, "%s/required-vs-%s%s.%s", ctx->dir, ba->key, ftext,
                 plot_extension(p->format));
        plot_safe_name(strrchr(path, '/') + 1);
        for (size_t pi = 0; pi < np; pi++)
            for (size_t s = 0; s < ns; s++) {
                if (L.panel >= 0)
                    vi[L.panel] = pi;
                plot_set_style_combo(sc, &L, s, vi);
                for (size_t a = 0; a < na; a++)
                    for (size_t b = 0; b < nb; b++) {
                        vi[axis] = b;
                        json_t *rec = ctx->records[plot_point_index(sc, a, vi)];
                        size_t i = ((pi * ns + s) * na + a) * nb + b;
                        req[i] = plot_record_number(rec, "required");
                        unq[i] = plot_record_number(rec, "unquantized_required");
                        pen[i] = plot_record_number(rec, "penalty_db");
                    }
            }
        vi[axis] = 0;
        if (!plot_any_finite(req, ncell)) {
            st = plot_note(ctx, "skipped %s: no point in it meets the target (see %s)",
                           strrchr(path, '/') + 1, "results.csv");
            continue;
        }
        double x0, x1, y0, y1, u0, u1, l0, l1;
        plot_range_of(bx, nb, &x0, &x1);
        plot_pad_range(&x0, &x1, 0.03);
        plot_range_of(req, ncell, &y0, &y1);
        plot_range_of(unq, ncell, &u0, &u1);
        if (isfinite(u0)) {
            y0 = fmin(y0, u0);
            y1 = fmax(y1, u1);
        }
        plot_pad_range(&y0, &y1, 0.08);
        plot_range_of(pen, ncell, &l0, &l1);
        if (!isfinite(l0)) {
            l0 = 0;
            l1 = 1;
        }
        l0 = fmin(l0, 0.0);
        plot_pad_range(&l0, &l1, 0.05);

        int w, h;
        plot_page_size(ctx, &L, 1, &w, &h);
        if ((st = plot_page_open(ctx, path, w, h)) != QC_OK)
            break;
        pladv(0);
        plschr(0.0, 0.95 * ctx->font_scale);
        char subject[600];
        snprintf(subject, sizeof subject, "%s against %s", ylabel, blabel);
        plot_figure_title(sc, subject, ttext, w, h);
        const char *ticks = whole && (x1 - x0) <= 20 ? "i" : ""; /* whole bits */
        int unq_drawn = 0; /* the legend names the unquantized line if drawn */
        for (size_t pi = 0; pi < np; pi++) {
            double box[4];
            plot_panel_box(&L, pi, w, h, box);
            double split = box[2] + 0.42 * (box[3] - box[2]);
            double gap = 32.0 / h;
            /* upper part: the required value */
            plvpor(box[0], box[1], split + gap, box[3]);
            plot_frame_ticks(x0, x1, y0, y1, 0, ticks[0] ? 1.0 : 0.0, 0.0, "");
            plot_labels("", pi % L.ncols == 0 ? ylabel : "", "");
            if (np > 1) {
                char pt[200];
                plot_axis_value_words(sc, (size_t)L.panel, pi, pt, sizeof pt);
                plot_panel_title(pt);
            }
            for (size_t s = 0; s < ns; s++)
                for (size_t a = 0; a < na; a++) {
                    size_t i = ((pi * ns + s) * na + a) * nb;
                    plot_curve((int)nb, bx, req + i, (int)a, ns > 1 ? (int)s : -1, 1, 0);
                    /* the unquantized receiver: thin dashed line in its colour */
                    plcol0(COL_FIRST + (int)a % NCOLOURS);
                    pllsty(3);
                    plwidth(1.0);
                    for (size_t b = 0; b + 1 < nb; b++)
                        if (isfinite(unq[i + b]) && isfinite(unq[i + b + 1])) {
                            plline(2, &bx[b], &unq[i + b]);
                            unq_drawn = 1;
                        }
                    pllsty(1);
                }
            /* lower part: the penalty at the target */
            plvpor(box[0], box[1], box[2], split);
            plot_frame_ticks(x0, x1, l0, l1, 1, ticks[0] ? 1.0 : 0.0, 0.0, "");
            plot_labels(pi / L.ncols == L.nrows - 1 || pi + L.ncols >= np ? blabel : "",
                        pi % L.ncols == 0 ? lylabel : "", "");
            for (size_t s = 0; s < ns; s++)
                for (size_t a = 0; a < na; a++)
                    plot_curve((int)nb, bx, pen + ((pi * ns + s) * na + a) * nb, (int)a,
                               ns > 1 ? (int)s : -1, 1, 0);
        }
        legend lg = {0};
        for (size_t a = 0; a < na; a++) {
            int drawn = 0;
            for (size_t c = 0; c < np * ns && !drawn; c++)
                drawn = plot_any_finite(req + (c * na + a) * nb, nb);
            char name[160];
            snprintf(name, sizeof name, "%s%s", sc->alphabets[a].label,
                     drawn ? "" : " (target not met)");
            plot_legend_add(&lg, name, (int)a, 1);
            if (ns > 1)
                lg.line_sty[lg.n - 1] = 1;
        }
        if (unq_drawn) {
            plot_legend_add(&lg, "unquantized", 0, 0);
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
        plot_legend_strip(ctx, &lg, w, h);
        st = plot_page_close(ctx, path);
    } while (st == QC_OK && plot_next_combo(sc, vi, L.fixed));
    return st;
}

qc_status plot_required_vs_bits(plot_ctx *ctx)
{
    return required_against(ctx, ctx->sc->plots.bits_axis);
}

qc_status plot_required_vs_x(plot_ctx *ctx)
{
    return required_against(ctx, ctx->sc->plots.x_axis);
}
