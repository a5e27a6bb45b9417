/* plot_sweep.c — the figures of a sweep, drawn with PLplot from the
 * sweep's records: rate against the sweep's x axis and rate against bits
 * (plot_rate.c), the pre-FEC BER against x and the required value of a
 * [require] section against bits (plot_figures.c), the photon efficiency and
 * rate per slot of pulse-position modulation (plot_photon.c), and the densities of one design with its thresholds
 * (plot_density.c). The other dimensions of a figure kind are drawn as
 * small multiples (one panel per value, on one scale), then line styles,
 * then separate files, so that a study writes a handful of figures.
 * Titles and axes say what is drawn in words and units. White background,
 * black text, and curves told apart by colour, line style and markers
 * centred on their points, so that they stay distinct in print. Each file
 * is drawn under a temporary name and renamed when complete. The state of
 * a drawing is one plot_ctx (plot.h); figures are drawn one at a time. */
#include "study/plot_sweep.h"

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

#include "study/plot.h"

#include <stdlib.h>

int qc_plots_available(void) { return 1; }

qc_status qc_plot_sweep(const qc_scenario *sc, json_t *const *records, const char *dir,
                        char ***files, size_t *nfiles, char ***notes, size_t *nnotes)
{
    /* on the heap: the context is changed after setjmp, and a local of
     * this function would be indeterminate after the jump */
    plot_ctx *ctx = calloc(1, sizeof *ctx);
    if (!ctx)
        return qc_fail(QC_ENOMEM, "out of memory");
    ctx->sc = sc;
    ctx->records = records;
    ctx->dir = dir;
    ctx->files = files;
    ctx->nfiles = nfiles;
    ctx->notes = notes;
    ctx->nnotes = nnotes;
    qc_status st = plot_ctx_begin(ctx);
    if (st != QC_OK) {
        free(ctx);
        return st;
    }
    if (setjmp(ctx->escape)) {
        /* a fatal PLplot error: every allocation of the figure is the
         * context's, freed by plot_ctx_end with the unfinished page */
        plot_ctx_end(ctx);
        st = qc_fail(QC_EIO, "plots in %s: PLplot failed: %s", dir, ctx->message);
        free(ctx);
        return st;
    }
    if (sc->plots.rate_vs_x) {
        st = plot_rate_vs_x(ctx);
        plot_release(ctx);
    }
    if (st == QC_OK && sc->plots.rate_vs_bits) {
        st = plot_rate_vs_bits(ctx);
        plot_release(ctx);
    }
    if (st == QC_OK && sc->plots.ber_vs_x) {
        st = plot_ber_vs_x(ctx);
        plot_release(ctx);
    }
    if (st == QC_OK && sc->plots.required_vs_bits) {
        st = plot_required_vs_bits(ctx);
        plot_release(ctx);
    }
    if (st == QC_OK && sc->plots.required_vs_x) {
        st = plot_required_vs_x(ctx);
        plot_release(ctx);
    }
    if (st == QC_OK && sc->plots.photon_efficiency) {
        st = plot_photon_efficiency(ctx);
        plot_release(ctx);
    }
    if (st == QC_OK && sc->plots.density) {
        st = plot_density(ctx);
        plot_release(ctx);
    }
    plot_ctx_end(ctx);
    free(ctx);
    return st;
}

#endif /* QC_HAVE_PLPLOT */
