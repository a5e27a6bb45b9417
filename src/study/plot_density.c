/* plot_density.c — the conditional densities (or count pmfs) of each
 * level of one design of a sweep, with its thresholds drawn over them.
 * The levels and thresholds are read from the point's record; the
 * densities are the point's model evaluated on a grid over the levels'
 * supports (the record holds no densities), the model built once from the
 * point's settings. */
#include "study/plot.h"

#include "study/report.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define DENSITY_SAMPLES 801

qc_status plot_density(plot_ctx *ctx)
{
    const qc_scenario *sc = ctx->sc;
    size_t index = sc->plots.density_point;
    json_t *rec = ctx->records[index];
    const char *status = plot_record_status(rec);
    if (!status || strcmp(status, "ok") != 0) {
        char point[600];
        sc_describe_point(sc, index, point, sizeof point);
        return plot_note(ctx, "skipped the density plot: its design, %s, failed (%s)", point,
                    status ? status : "no result");
    }
    /* The levels and thresholds are the record's. The densities are not in
     * the record: they are evaluated from the point's model, built once
     * here from the point's settings exactly as the sweep built it. The
     * settings and the model are the context's until plot_release. */
    qc_design_request req;
    double *th, *lev;
    size_t nth, nlev;
    qc_status st = qc_scenario_point_settings(sc, index, &ctx->settings);
    if (st == QC_OK)
        st = qc_settings_build(ctx->settings, &ctx->model, &req);
    if (st == QC_OK)
        st = plot_record_array(ctx, rec, QC_REPORT_THRESHOLDS, &th, &nth);
    if (st == QC_OK)
        st = plot_record_array(ctx, rec, QC_REPORT_LEVELS, &lev, &nlev);
    if (st != QC_OK || nlev == 0)
        return st;
    /* a converter's thresholds are its transition levels, compared with
     * gain·y + offset: drawn on the receiver output y */
    double gain = plot_record_number(rec, "gain"), offset = plot_record_number(rec, "offset");
    if (isfinite(gain) && gain > 0.0 && isfinite(offset))
        for (size_t j = 0; j < nth; j++)
            th[j] = (th[j] - offset) / gain;
    const qc_model *m = ctx->model;
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
    double *xs = plot_alloc(ctx, ns * sizeof *xs), *ys = plot_alloc(ctx, nlev * ns * sizeof *ys),
           *sx = plot_alloc(ctx, 2 * ns * sizeof *sx), *sy = plot_alloc(ctx, 2 * ns * sizeof *sy);
    if (!xs || !ys || !sx || !sy)
        return QC_ENOMEM; /* the blocks are the context's */
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
    plot_pad_range(&x0, &x1, counts ? 0.0 : 0.02);
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

    char path[4300];
    size_t alpha, vi[QC_SCENARIO_MAX_AXES];
    sc_point_coords(sc, index, &alpha, vi);
    char ftext[1024] = "", ttext[640] = "";
    for (size_t k = 0; k < sc->naxes; k++) {
        char w[160];
        plot_axis_value_words(sc, k, vi[k], w, sizeof w);
        plot_append(ttext, sizeof ttext, ", ", w);
        if (sc->axes[k].n > 1)
            plot_file_part(ftext, sizeof ftext, sc->axes[k].key, sc->axes[k].values[vi[k]]);
    }
    snprintf(path, sizeof path, "%s/density_%s%s.%s", ctx->dir, sc->alphabets[alpha].name,
             ftext, plot_extension(sc->plots.format));
    plot_safe_name(strrchr(path, '/') + 1);
    if ((st = plot_page_open(ctx, path, ctx->width, ctx->height)) != QC_OK)
        return st;
    pladv(0);
    plschr(0.0, ctx->font_scale);
    int qam = plot_record_qam(rec);
    const char *unit = plot_output_unit(type, ctx->settings);
    char subject[1200];
    snprintf(subject, sizeof subject, "%s%s: %s of the receiver output given each level",
             sc->alphabets[alpha].label, qam ? ", one quadrature (the other is alike)" : "",
             counts ? "count distributions" : "densities");
    plot_figure_title(sc, subject, ttext, ctx->width, ctx->height);
    plvpor(VP_LEFT, VP_RIGHT, 0.13, 1.0 - PX_TOP / ctx->height);
    plot_frame(x0, x1, 0.0, 1.08 * peak, "", "");
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
    plot_labels(xlabel, ylabel, "");

    /* thresholds: grey dashed verticals (for counts, between t-1 and t) */
    plcol0(COL_BLACK);
    pllsty(2);
    plwidth(1.0);
    for (size_t j = 0; j < nth; j++) {
        double t = counts && !isfinite(gain) ? th[j] - 0.5 : th[j];
        double tx[2] = {t, t}, ty[2] = {0.0, 1.08 * peak};
        if (t >= x0 && t <= x1)
            plline(2, tx, ty);
    }
    legend lg = {0};
    for (size_t i = 0; i < nlev; i++) {
        const double *y = ys + i * ns;
        plot_set_style((int)i, -1);
        if (counts) { /* pmf as steps */
            size_t nstep = 2 * (k1 - k0);
            for (size_t k = k0; k < k1; k++) {
                sx[2 * (k - k0)] = xs[k] - 0.5;
                sx[2 * (k - k0) + 1] = xs[k] + 0.5;
                sy[2 * (k - k0)] = sy[2 * (k - k0) + 1] = y[k];
            }
            plline((PLINT)nstep, sx, sy);
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
        plot_draw_marker(xs[kp], y[kp], plot_marker_index((int)i), 0);
        char name[96];
        snprintf(name, sizeof name, "level x = %.4g", lev[i]);
        plot_legend_add(&lg, name, (int)i, 1);
    }
    if (nth > 0) {
        plot_legend_add(&lg, nth == 1 ? "threshold" : "thresholds", 0, 0);
        lg.line_col[lg.n - 1] = COL_BLACK;
        lg.line_sty[lg.n - 1] = 2;
        lg.line_w[lg.n - 1] = 1.0;
    }
    plot_legend_draw(ctx, &lg, PL_POSITION_RIGHT | PL_POSITION_OUTSIDE, 0.06);
    return plot_page_close(ctx, path);
}

