/* plane.c — two-dimensional constellations as points in the plane:
 * square QAM (Proakis & Salehi, Digital Communications, 5th ed., §3.2),
 * PSK, amplitude-and-phase-shift keying as rings of points (De Gaudenzi,
 * Guillén i Fàbregas, Martinez, IEEE Trans. Wireless Commun. 5(9),
 * 2006), and the points of the hexagonal lattice nearest the origin
 * (Conway & Sloane, Sphere Packings, Lattices and Groups, ch. 1); the
 * checks every constellation passes, and Gray labels where a product of
 * Gray codes gives them (Gray, US patent 2,632,058, 1953). */
#include "alphabet/alphabet.h"
#include "quantcap/plane.h"
#include "core/parse.h"

#include <gsl/gsl_math.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#define SAME_POINT_REL 1e-12 /* points closer than this × the largest |x| are one */

void qc_plane_free(qc_plane *c)
{
    if (!c)
        return;
    free(c->x);
    free(c->y);
    free(c->prob);
    free(c->labels);
    free(c);
}

double qc_plane_energy(const qc_plane *c)
{
    double e = 0.0;
    for (size_t i = 0; i < c->size; i++)
        e += c->prob[i] * (c->x[i] * c->x[i] + c->y[i] * c->y[i]);
    return e;
}

qc_status qc_plane_from_points(const double *x, const double *y, size_t n,
                               const double *prob, const size_t *labels, unsigned nbits,
                               qc_plane **out)
{
    *out = NULL;
    if (n < 1 || n > QC_PLANE_MAX)
        return qc_fail(QC_EINVAL, "constellation: %zu points (expected 1 to %d)", n,
                       QC_PLANE_MAX);
    double scale = 0.0;
    for (size_t i = 0; i < n; i++) {
        if (!isfinite(x[i]) || !isfinite(y[i]))
            return qc_fail(QC_EINVAL, "constellation: point %zu is not finite", i + 1);
        scale = fmax(scale, hypot(x[i], y[i]));
    }
    for (size_t i = 0; i < n; i++)
        for (size_t j = i + 1; j < n; j++)
            if (hypot(x[i] - x[j], y[i] - y[j]) <= SAME_POINT_REL * scale)
                return qc_fail(QC_EINVAL,
                               "constellation: points %zu and %zu are the same point "
                               "(%g, %g); every point must be distinct",
                               i + 1, j + 1, x[i], y[i]);
    if (prob) {
        double s = 0.0;
        for (size_t i = 0; i < n; i++) {
            if (!(prob[i] >= 0.0) || !isfinite(prob[i]))
                return qc_fail(QC_EINVAL,
                               "constellation: probability of point %zu is %g "
                               "(expected a number >= 0)", i + 1, prob[i]);
            s += prob[i];
        }
        if (fabs(s - 1.0) > QC_PLANE_PROB_TOL)
            return qc_fail(QC_EINVAL,
                           "constellation: the probabilities sum to %.12g (expected 1 "
                           "within %g)", s, QC_PLANE_PROB_TOL);
    }
    if (labels) {
        if (nbits < 1 || nbits > 20)
            return qc_fail(QC_EINVAL, "constellation: labels of %u bits (expected 1 to 20)",
                           nbits);
        if (n > ((size_t)1 << nbits))
            return qc_fail(QC_EINVAL,
                           "constellation: %zu points cannot have distinct labels of %u "
                           "bits (at most %zu)", n, nbits, (size_t)1 << nbits);
        for (size_t i = 0; i < n; i++) {
            if (labels[i] >= ((size_t)1 << nbits))
                return qc_fail(QC_EINVAL, "constellation: label of point %zu has more than "
                               "%u bits", i + 1, nbits);
            for (size_t j = 0; j < i; j++)
                if (labels[j] == labels[i])
                    return qc_fail(QC_EINVAL,
                                   "constellation: points %zu and %zu have the same label; "
                                   "labels must be distinct", j + 1, i + 1);
        }
    }
    qc_plane *c = calloc(1, sizeof *c);
    if (!c)
        return qc_fail(QC_ENOMEM, "out of memory");
    c->size = n;
    c->x = qc_malloc_array(n, sizeof *c->x);
    c->y = qc_malloc_array(n, sizeof *c->y);
    c->prob = qc_malloc_array(n, sizeof *c->prob);
    if (labels)
        c->labels = qc_malloc_array(n, sizeof *c->labels);
    if (!c->x || !c->y || !c->prob || (labels && !c->labels)) {
        qc_plane_free(c);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    double s = 0.0;
    for (size_t i = 0; i < n; i++)
        s += prob ? prob[i] : 1.0;
    for (size_t i = 0; i < n; i++) {
        c->x[i] = x[i];
        c->y[i] = y[i];
        c->prob[i] = (prob ? prob[i] : 1.0) / s;
        if (labels)
            c->labels[i] = labels[i];
    }
    c->prob_given = prob != NULL;
    if (labels) {
        c->nbits = nbits;
        c->labelling = "given";
    }
    *out = c;
    return QC_OK;
}

static unsigned log2_exact(size_t n)
{
    unsigned b = 0;
    while (((size_t)1 << b) < n)
        b++;
    return b;
}

/* Points from the arrays, then labels (may be NULL) marked Gray. */
static qc_status finish(double *x, double *y, size_t n, size_t *labels, unsigned nbits,
                        qc_plane **out)
{
    qc_status st = qc_plane_from_points(x, y, n, NULL, labels, nbits, out);
    if (st == QC_OK && labels)
        (*out)->labelling = "gray";
    free(x);
    free(y);
    free(labels);
    return st;
}

static qc_status make_qam(const char *spec, size_t m, qc_plane **out)
{
    size_t h = (size_t)llround(sqrt((double)m));
    if (h * h != m || !qc_is_power_of_two(m) || m < 4)
        return qc_fail(QC_EINVAL, "alphabet '%s': qam:M needs M = 4, 16, 64, … (a "
                       "square and a power of 2)", spec);
    double *x = qc_malloc_array(m, sizeof *x), *y = qc_malloc_array(m, sizeof *y);
    size_t *lab = qc_malloc_array(m, sizeof *lab);
    if (!x || !y || !lab) {
        free(x), free(y), free(lab);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    unsigned hb = log2_exact(h);
    for (size_t i = 0; i < h; i++)
        for (size_t q = 0; q < h; q++) {
            size_t k = i * h + q; /* in-phase index major */
            x[k] = 2.0 * (double)i - (double)h + 1.0;
            y[k] = 2.0 * (double)q - (double)h + 1.0;
            lab[k] = (qc_gray_code(i) << hb) | qc_gray_code(q);
        }
    return finish(x, y, m, lab, 2 * hb, out);
}

static qc_status make_rings(const double *radius, const size_t *count, const double *offset,
                            size_t rings, qc_plane **out)
{
    size_t m = 0;
    int gray = qc_is_power_of_two(count[0]) && (rings == 1 || qc_is_power_of_two(rings));
    for (size_t r = 0; r < rings; r++) {
        m += count[r];
        gray = gray && count[r] == count[0];
    }
    if (m > QC_PLANE_MAX)
        return qc_fail(QC_EINVAL, "alphabet: %zu points (at most %d)", m, QC_PLANE_MAX);
    double *x = qc_malloc_array(m, sizeof *x), *y = qc_malloc_array(m, sizeof *y);
    size_t *lab = gray ? qc_malloc_array(m, sizeof *lab) : NULL;
    if (!x || !y || (gray && !lab)) {
        free(x), free(y), free(lab);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    unsigned pb = log2_exact(count[0]), rb = log2_exact(rings);
    size_t k = 0;
    for (size_t r = 0; r < rings; r++)
        for (size_t j = 0; j < count[r]; j++, k++) {
            double ph = offset[r] * M_PI / 180.0 + 2.0 * M_PI * (double)j / (double)count[r];
            x[k] = radius[r] * cos(ph);
            y[k] = radius[r] * sin(ph);
            if (gray)
                lab[k] = (qc_gray_code(r) << pb) | qc_gray_code(j);
        }
    return finish(x, y, m, lab, gray ? pb + rb : 0, out);
}

static qc_status make_apsk(const char *spec, const char *body, qc_plane **out)
{
    enum { MAX_RINGS = 64 };
    double radius[MAX_RINGS], offset[MAX_RINGS];
    size_t count[MAX_RINGS], rings = 0;
    const char *p = body;
    while (*p) {
        if (rings == MAX_RINGS)
            return qc_fail(QC_EINVAL, "alphabet '%s': more than %d rings", spec, MAX_RINGS);
        size_t len = strcspn(p, ",");
        char item[128];
        if (len == 0 || len >= sizeof item)
            return qc_fail(QC_EINVAL, "alphabet '%s': ring %zu is empty or too long "
                           "(expected RADIUS/POINTS[/OFFSET-DEG])", spec, rings + 1);
        memcpy(item, p, len);
        item[len] = '\0';
        char *f[3] = {item, NULL, NULL};
        size_t nf = 1;
        for (char *s = item; *s; s++)
            if (*s == '/') {
                if (nf == 3)
                    return qc_fail(QC_EINVAL, "alphabet '%s': ring %zu '%s' has more than "
                                   "three fields (RADIUS/POINTS[/OFFSET-DEG])", spec,
                                   rings + 1, p);
                *s = '\0';
                f[nf++] = s + 1;
            }
        if (nf < 2)
            return qc_fail(QC_EINVAL, "alphabet '%s': ring %zu needs RADIUS/POINTS (e.g. "
                           "apsk:1/4,2.7/12)", spec, rings + 1);
        double r, off = 0.0;
        size_t n;
        if (qc_parse_double(f[0], &r) != QC_OK || !(r > 0.0))
            return qc_fail(QC_EINVAL, "alphabet '%s': radius of ring %zu must be a number "
                           "> 0 (got '%s')", spec, rings + 1, f[0]);
        if (qc_parse_size(f[1], 1, QC_PLANE_MAX, &n) != QC_OK)
            return qc_fail(QC_EINVAL, "alphabet '%s': points of ring %zu must be a whole "
                           "number from 1 to %d (got '%s')", spec, rings + 1, QC_PLANE_MAX,
                           f[1]);
        if (f[2] && qc_parse_double(f[2], &off) != QC_OK)
            return qc_fail(QC_EINVAL, "alphabet '%s': phase offset of ring %zu must be a "
                           "number of degrees (got '%s')", spec, rings + 1, f[2]);
        if (rings > 0 && !(r > radius[rings - 1]))
            return qc_fail(QC_EINVAL, "alphabet '%s': ring radii must increase (ring %zu: "
                           "%g after %g)", spec, rings + 1, r, radius[rings - 1]);
        radius[rings] = r;
        count[rings] = n;
        offset[rings] = off;
        rings++;
        p += len;
        if (*p == ',') {
            p++;
            if (!*p)
                return qc_fail(QC_EINVAL, "alphabet '%s': trailing comma", spec);
        }
    }
    if (rings == 0)
        return qc_fail(QC_EINVAL, "alphabet '%s': no rings (expected apsk:R1/N1,R2/N2,...)",
                       spec);
    size_t m = 0;
    for (size_t r = 0; r < rings; r++)
        m += count[r];
    if (m < 2)
        return qc_fail(QC_EINVAL, "alphabet '%s': at least 2 points are needed", spec);
    return make_rings(radius, count, offset, rings, out);
}

typedef struct {
    double x, y, r2, ang;
} lattice_point;

static int by_norm_then_angle(const void *a, const void *b)
{
    const lattice_point *p = a, *q = b;
    if (fabs(p->r2 - q->r2) > 1e-9)
        return p->r2 < q->r2 ? -1 : 1;
    return (p->ang > q->ang) - (p->ang < q->ang);
}

static qc_status make_hex(size_t m, qc_plane **out)
{
    /* enough shells: the lattice has about (2π/√3)·R² points within R */
    int reach = (int)ceil(sqrt((double)m)) + 2;
    size_t cap = (size_t)(2 * reach + 1) * (size_t)(2 * reach + 1);
    lattice_point *pts = qc_malloc_array(cap, sizeof *pts);
    double *x = qc_malloc_array(m, sizeof *x), *y = qc_malloc_array(m, sizeof *y);
    if (!pts || !x || !y) {
        free(pts), free(x), free(y);
        return qc_fail(QC_ENOMEM, "out of memory");
    }
    size_t n = 0;
    for (int a = -reach; a <= reach; a++)
        for (int b = -reach; b <= reach; b++) {
            lattice_point *p = &pts[n++];
            p->x = a + 0.5 * b;
            p->y = b * sqrt(3.0) / 2.0;
            p->r2 = p->x * p->x + p->y * p->y;
            p->ang = atan2(p->y, p->x);
            if (p->ang < -1e-12)
                p->ang += 2.0 * M_PI;
        }
    qsort(pts, n, sizeof *pts, by_norm_then_angle);
    double mx = 0.0, my = 0.0;
    for (size_t i = 0; i < m; i++) {
        mx += pts[i].x / (double)m;
        my += pts[i].y / (double)m;
    }
    for (size_t i = 0; i < m; i++) {
        x[i] = pts[i].x - mx;
        y[i] = pts[i].y - my;
    }
    free(pts);
    return finish(x, y, m, NULL, 0, out);
}

static qc_status make_psk(size_t m, qc_plane **out)
{
    double r = 1.0, off = 0.0;
    return make_rings(&r, &m, &off, 1, out);
}

qc_status qc_plane_parse(const char *spec, qc_plane **out)
{
    *out = NULL;
    if (!spec)
        return qc_fail(QC_EINVAL, "alphabet: no specification given");
    const char *colon = strchr(spec, ':');
    if (!colon)
        return qc_fail(QC_EINVAL, "alphabet '%s': expected qam:M, psk:M, apsk:R1/N1,... or "
                       "hex:M", spec);
    size_t klen = (size_t)(colon - spec);
    const char *body = colon + 1;
    if (klen == 4 && strncmp(spec, "apsk", 4) == 0)
        return make_apsk(spec, body, out);
    size_t m;
    int qam = klen == 3 && strncmp(spec, "qam", 3) == 0;
    int psk = klen == 3 && strncmp(spec, "psk", 3) == 0;
    int hex = klen == 3 && strncmp(spec, "hex", 3) == 0;
    if (!qam && !psk && !hex)
        return qc_fail(QC_EINVAL, "alphabet '%s': unknown two-dimensional alphabet (expected "
                       "qam:M, psk:M, apsk:R1/N1,... or hex:M)", spec);
    if (qc_parse_size(body, 2, QC_PLANE_MAX, &m) != QC_OK)
        return qc_fail(QC_EINVAL, "alphabet '%s': M must be a whole number from 2 to %d",
                       spec, QC_PLANE_MAX);
    if (qam)
        return make_qam(spec, m, out);
    if (psk)
        return make_psk(m, out);
    return make_hex(m, out);
}
