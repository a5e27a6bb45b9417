/* plot_layout.c — how a figure kind spreads the dimensions of a sweep:
 * one over small multiples (panels on one scale), a few more over line
 * styles, the rest over separate files; the page geometry of the panels,
 * the walk over the grid, and the ranges of the axes. */
#include "study/plot.h"

#include <math.h>
#include <string.h>

#define MAX_PANELS 6 /* small multiples per figure                       */
#define MAX_STYLES 4 /* combinations told apart by line style            */

void plot_choose_layout(const qc_scenario *sc, const int *used, size_t ngroup,
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
void plot_set_style_combo(const qc_scenario *sc, const layout *L, size_t s, size_t *vi)
{
    for (size_t k = sc->naxes; k-- > 0;)
        if (L->style[k]) {
            vi[k] = s % sc->axes[k].n;
            s /= sc->axes[k].n;
        }
}

void plot_style_words(const qc_scenario *sc, const layout *L, size_t s, char *out, size_t cap)
{
    size_t vi[QC_SCENARIO_MAX_AXES] = {0};
    plot_set_style_combo(sc, L, s, vi);
    out[0] = '\0';
    for (size_t k = 0; k < sc->naxes; k++)
        if (L->style[k]) {
            char w[160];
            plot_axis_value_words(sc, k, vi[k], w, sizeof w);
            plot_append(out, cap, ", ", w);
        }
}

/* File name parts and title words of the axes iterated over files, and
 * title words of the single-valued axes. */
void plot_file_combo_text(const qc_scenario *sc, const layout *L, const size_t *vi, char *file,
                            size_t fcap, char *title, size_t tcap)
{
    for (size_t k = 0; k < sc->naxes; k++) {
        const sc_axis *a = &sc->axes[k];
        if (L->fixed[k] && a->n != 1)
            continue;
        char w[160];
        plot_axis_value_words(sc, k, vi[k], w, sizeof w);
        plot_append(title, tcap, ", ", w);
        if (a->n > 1)
            plot_file_part(file, fcap, a->key, a->values[vi[k]]);
    }
}

/* Page geometry, in pixels, of a figure of L's panels. `split`: panels
 * with a rate part above a loss part. */
#define PX_LEFT 125.0
#define PX_GAP 115.0
#define PX_BOTTOM 78.0
#define PX_ROW_GAP 95.0

void plot_page_size(const plot_ctx *ctx, const layout *L, int split, int *w, int *h)
{
    *w = (int)(ctx->width * (1.0 + 0.62 * (double)(L->ncols - 1)));
    *h = (int)(ctx->height * (split ? 1.3 : 1.0) * (1.0 + 0.8 * (double)(L->nrows - 1)));
}

/* Viewport (normalized page coordinates) of panel p: x0, x1, y0, y1. */
void plot_panel_box(const layout *L, size_t p, int w, int h, double box[4])
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

size_t plot_point_index(const qc_scenario *sc, size_t alpha, const size_t *vi)
{
    size_t index = alpha;
    for (size_t k = 0; k < sc->naxes; k++)
        index = index * sc->axes[k].n + vi[k];
    return index;
}

/* Next combination of the axes not in `fixed` (odometer); 0 when done. */
int plot_next_combo(const qc_scenario *sc, size_t *vi, const int *fixed)
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

void plot_range_of(const double *v, size_t n, double *lo, double *hi)
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

void plot_pad_range(double *lo, double *hi, double frac)
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

int plot_any_finite(const double *v, size_t n)
{
    for (size_t i = 0; i < n; i++)
        if (isfinite(v[i]))
            return 1;
    return 0;
}
