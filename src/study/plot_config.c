/* plot_config.c — the [plots] and [density] sections of a scenario: the
 * figures a sweep draws (rate against x, rate against bits at chosen
 * values of x, the pre-FEC BER against x, the required value of a
 * [require] section against bits, the densities of one point), the axes they are drawn
 * against, the format and the page size. Each value is checked against
 * the compiled axes and a bad one is named by file:line. */
#include "study/plot_config.h"

#include "core/internal.h"
#include "core/parse.h"
#include "study/scenario_keys.h"
#include "study/scenario_types.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

void sc_plots_clear(sc_plots *p)
{
    free(p->bits_at);
    memset(p, 0, sizeof *p);
}

static int parse_bool(const char *v, int *out)
{
    if (strcmp(v, "true") == 0 || strcmp(v, "yes") == 0) {
        *out = 1;
        return 0;
    }
    if (strcmp(v, "false") == 0 || strcmp(v, "no") == 0) {
        *out = 0;
        return 0;
    }
    return -1;
}

/* Index of `value` among the axis values (numbers compare by value). */
static int axis_value_index(const sc_axis *a, const char *value)
{
    double v;
    int num = a->number && qc_parse_double(value, &v) == QC_OK;
    qc_clear_error();
    for (size_t j = 0; j < a->n; j++)
        if (strcmp(a->values[j], value) == 0 || (num && a->number[j] == v))
            return (int)j;
    return -1;
}

/* The value of a numeric axis nearest to `value` (else the first). */
static int nearest_value(const sc_axis *a, const char *value)
{
    double v;
    if (!a->number || qc_parse_double(value, &v) != QC_OK)
        return 0;
    size_t best = 0;
    for (size_t j = 1; j < a->n; j++)
        if (fabs(a->number[j] - v) < fabs(a->number[best] - v))
            best = j;
    return (int)best;
}

static qc_status axis_value_error(const qc_scenario *sc, const sc_entry *e, const sc_axis *a,
                                  const char *value)
{
    char loc[300], list[256] = "";
    for (size_t j = 0; j < a->n && strlen(list) < 200; j++) {
        strcat(list, j ? ", " : "");
        strncat(list, a->values[j], 40);
    }
    if (strlen(list) >= 200)
        strcat(list, ", ...");
    return qc_fail(QC_EINVAL, "%s: '%s': %s is not a value of the sweep axis '%s' (%s)",
                   sc_where(sc, e->line, loc, sizeof loc), e->key, value, a->key, list);
}

qc_status sc_compile_plots(qc_scenario *sc)
{
    static const char *const keys[] = {"format",   "x",       "rate-vs-x",        "rate-vs-bits",
                                       "ber-vs-x", "density", "required-vs-bits", "required-vs-x", "photon-efficiency", "size",
                                       NULL};
    sc_plots *p = &sc->plots;
    p->width = 960;
    p->height = 640;
    p->x_axis = p->curve_axis = -1;
    p->curve_axis = sc_axis_index(sc, "bits");
    if (p->curve_axis < 0)
        p->curve_axis = sc_axis_index(sc, "cells");
    for (size_t i = 0; i < sc->naxes && p->x_axis < 0; i++)
        if (sc->axes[i].number && (int)i != p->curve_axis)
            p->x_axis = (int)i;
    sc_section *s = sc_section_find(sc, "plots");
    const sc_entry *rvx = NULL, *rvb = NULL, *dens = NULL, *bvx = NULL, *req = NULL, *reqx = NULL,
                   *phe = NULL;
    char loc[300];
    for (size_t i = 0; s && i < s->n; i++) {
        const sc_entry *e = &s->entries[i];
        sc_where(sc, e->line, loc, sizeof loc);
        if (strcmp(e->key, "format") == 0) {
            if (strcmp(e->value, "svg") == 0)
                p->format = SC_FORMAT_SVG;
            else if (strcmp(e->value, "png") == 0)
                p->format = SC_FORMAT_PNG;
            else if (strcmp(e->value, "pdf") == 0)
                p->format = SC_FORMAT_PDF;
            else
                return qc_fail(QC_EINVAL, "%s: 'format': unknown value '%s' (expected one of: "
                                          "svg, png, pdf)",
                               loc, e->value);
        } else if (strcmp(e->key, "x") == 0) {
            int k = sc_axis_index(sc, e->value);
            if (k < 0)
                return qc_fail(QC_EINVAL, "%s: 'x': '%s' is not a sweep axis", loc, e->value);
            if (!sc->axes[k].number)
                return qc_fail(QC_EINVAL, "%s: 'x': the axis '%s' does not hold numbers", loc,
                               e->value);
            p->x_axis = k;
        } else if (strcmp(e->key, "size") == 0) {
            char *end;
            long w = strtol(e->value, &end, 10), h = 0;
            int ok = end != e->value && *end == 'x';
            if (ok) {
                const char *hs = end + 1;
                h = strtol(hs, &end, 10);
                ok = end != hs && *end == '\0';
            }
            if (!ok || w < 200 || w > 8000 || h < 150 || h > 8000)
                return qc_fail(QC_EINVAL, "%s: 'size': '%s' is not WIDTHxHEIGHT in pixels "
                                          "(200x150 to 8000x8000)",
                               loc, e->value);
            p->width = (int)w;
            p->height = (int)h;
        } else if (strcmp(e->key, "rate-vs-x") == 0) {
            rvx = e;
        } else if (strcmp(e->key, "rate-vs-bits") == 0) {
            rvb = e;
        } else if (strcmp(e->key, "density") == 0) {
            dens = e;
        } else if (strcmp(e->key, "ber-vs-x") == 0) {
            bvx = e;
        } else if (strcmp(e->key, "required-vs-bits") == 0) {
            req = e;
        } else if (strcmp(e->key, "required-vs-x") == 0) {
            reqx = e;
        } else if (strcmp(e->key, "photon-efficiency") == 0) {
            phe = e;
        } else
            return sc_unknown_key(sc, e, "[plots]", sc_closest(e->key, keys));
    }
    if (p->x_axis >= 0 && p->x_axis == p->curve_axis)
        p->curve_axis = -1; /* rate against bits itself: one curve */
    p->rate_vs_x = p->x_axis >= 0;
    if (rvx) {
        sc_where(sc, rvx->line, loc, sizeof loc);
        if (parse_bool(rvx->value, &p->rate_vs_x) != 0)
            return qc_fail(QC_EINVAL, "%s: 'rate-vs-x': '%s' is not true or false", loc,
                           rvx->value);
        if (p->rate_vs_x && p->x_axis < 0)
            return qc_fail(QC_EINVAL, "%s: 'rate-vs-x': the sweep has no numeric axis to draw "
                                      "the rate against",
                           loc);
    }
    if (rvb) {
        sc_where(sc, rvb->line, loc, sizeof loc);
        int flag;
        if (parse_bool(rvb->value, &flag) == 0) {
            p->rate_vs_bits = flag;
            if (flag && p->x_axis >= 0)
                return qc_fail(QC_EINVAL, "%s: 'rate-vs-bits': give the values of '%s' at "
                                          "which to draw it",
                               loc, sc->axes[p->x_axis].key);
        } else {
            if (p->x_axis < 0)
                return qc_fail(QC_EINVAL, "%s: 'rate-vs-bits': the sweep has no x axis; use "
                                          "true or false",
                               loc);
            double *v;
            size_t nv;
            if (qc_parse_list(rvb->value, &v, &nv) != QC_OK) {
                char msg[512];
                snprintf(msg, sizeof msg, "%s", qc_last_error());
                return qc_fail(QC_EINVAL, "%s: 'rate-vs-bits': %s", loc, msg);
            }
            p->bits_at = malloc(nv * sizeof *p->bits_at);
            if (!p->bits_at) {
                free(v);
                return qc_fail(QC_ENOMEM, "out of memory");
            }
            const sc_axis *xa = &sc->axes[p->x_axis];
            for (size_t j = 0; j < nv; j++) {
                size_t k = 0;
                while (k < xa->n && xa->number[k] != v[j])
                    k++;
                if (k < xa->n) {
                    p->bits_at[p->nbits_at++] = k;
                } else if (xa->line > 0) { /* an axis overridden by --set may lose them */
                    char val[64];
                    snprintf(val, sizeof val, "%.15g", v[j]);
                    free(v);
                    return axis_value_error(sc, rvb, xa, val);
                }
            }
            p->rate_vs_bits = p->nbits_at > 0;
            free(v);
        }
        if (p->rate_vs_bits && p->curve_axis < 0)
            return qc_fail(QC_EINVAL, "%s: 'rate-vs-bits': the sweep has no 'bits' (or "
                                      "'cells') axis",
                           loc);
    }
    if (bvx) {
        sc_where(sc, bvx->line, loc, sizeof loc);
        if (parse_bool(bvx->value, &p->ber_vs_x) != 0)
            return qc_fail(QC_EINVAL, "%s: 'ber-vs-x': '%s' is not true or false", loc,
                           bvx->value);
        if (p->ber_vs_x && p->x_axis < 0)
            return qc_fail(QC_EINVAL, "%s: 'ber-vs-x': the sweep has no numeric axis to draw "
                                      "the BER against",
                           loc);
    }
    p->bits_axis = sc_axis_index(sc, "bits");
    if (p->bits_axis < 0)
        p->bits_axis = sc_axis_index(sc, "cells");
    if (req) {
        sc_where(sc, req->line, loc, sizeof loc);
        if (parse_bool(req->value, &p->required_vs_bits) != 0)
            return qc_fail(QC_EINVAL, "%s: 'required-vs-bits': '%s' is not true or false", loc,
                           req->value);
        if (p->required_vs_bits && !sc_section_find(sc, "require"))
            return qc_fail(QC_EINVAL, "%s: 'required-vs-bits': add a [require] section giving "
                                      "the target and the key to solve for",
                           loc);
        if (p->required_vs_bits && p->bits_axis < 0)
            return qc_fail(QC_EINVAL, "%s: 'required-vs-bits': the sweep has no 'bits' (or "
                                      "'cells') axis",
                           loc);
    }
    if (reqx) {
        sc_where(sc, reqx->line, loc, sizeof loc);
        if (parse_bool(reqx->value, &p->required_vs_x) != 0)
            return qc_fail(QC_EINVAL, "%s: 'required-vs-x': '%s' is not true or false", loc,
                           reqx->value);
        if (p->required_vs_x && !sc_section_find(sc, "require"))
            return qc_fail(QC_EINVAL, "%s: 'required-vs-x': add a [require] section giving "
                                      "the target and the key to solve for",
                           loc);
        if (p->required_vs_x && p->x_axis < 0)
            return qc_fail(QC_EINVAL, "%s: 'required-vs-x': the sweep has no numeric axis to "
                                      "draw the required value against",
                           loc);
    }
    if (phe) {
        sc_where(sc, phe->line, loc, sizeof loc);
        if (parse_bool(phe->value, &p->photon_efficiency) != 0)
            return qc_fail(QC_EINVAL, "%s: 'photon-efficiency': '%s' is not true or false", loc,
                           phe->value);
        if (p->photon_efficiency && p->x_axis < 0)
            return qc_fail(QC_EINVAL, "%s: 'photon-efficiency': the sweep has no numeric axis "
                                      "(the signal photons or the received power) to draw "
                                      "against",
                           loc);
    }
    sc_section *d = sc_section_find(sc, "density");
    p->density = d != NULL;
    if (dens) {
        sc_where(sc, dens->line, loc, sizeof loc);
        if (parse_bool(dens->value, &p->density) != 0)
            return qc_fail(QC_EINVAL, "%s: 'density': '%s' is not true or false", loc,
                           dens->value);
        if (p->density && !d)
            return qc_fail(QC_EINVAL, "%s: 'density': add a [density] section naming the "
                                      "point to draw",
                           loc);
    }
    if (!d)
        return QC_OK;
    /* the density point: alphabet and axis values; others take their first */
    size_t alpha = 0, *vi = calloc(sc->naxes ? sc->naxes : 1, sizeof *vi);
    if (!vi)
        return qc_fail(QC_ENOMEM, "out of memory");
    int has_sections = sc_section_find(sc, "alphabet") != NULL;
    qc_status st = QC_OK;
    for (size_t i = 0; i < d->n && st == QC_OK; i++) {
        const sc_entry *e = &d->entries[i];
        sc_where(sc, e->line, loc, sizeof loc);
        int k = sc_axis_index(sc, e->key);
        if (strcmp(e->key, "alphabet") == 0 && (has_sections || k < 0)) {
            size_t a = 0;
            while (a < sc->nalphabets && strcmp(sc->alphabets[a].name, e->value) != 0)
                a++;
            if (a == sc->nalphabets)
                st = qc_fail(QC_EINVAL, "%s: 'alphabet': the scenario has no [alphabet %s]",
                             loc, e->value);
            alpha = a;
        } else if (k < 0) {
            st = qc_fail(QC_EINVAL, "%s: '%s' in [density] is not a sweep axis (give "
                                    "'alphabet' and values of the sweep axes)",
                         loc, e->key);
        } else {
            int j = axis_value_index(&sc->axes[k], e->value);
            if (j < 0 && sc->axes[k].line == 0)
                j = nearest_value(&sc->axes[k], e->value); /* axis overridden by --set */
            if (j < 0)
                st = axis_value_error(sc, e, &sc->axes[k], e->value);
            else
                vi[k] = (size_t)j;
        }
    }
    if (st == QC_OK) {
        size_t index = alpha;
        for (size_t k = 0; k < sc->naxes; k++)
            index = index * sc->axes[k].n + vi[k];
        p->density_point = index;
    }
    free(vi);
    return st;
}
