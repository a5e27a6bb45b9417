/* plot_config.h — the [plots] and [density] sections of a scenario: which
 * figures a sweep draws, against which axes, at which points, in which
 * format and size (internal; plot_config.c compiles them, the plots read
 * them). */
#ifndef QC_PLOT_CONFIG_H
#define QC_PLOT_CONFIG_H

#include <stddef.h>

#include "core/internal.h"
#include "quantcap/study.h"

typedef enum { SC_FORMAT_SVG = 0, SC_FORMAT_PNG, SC_FORMAT_PDF } sc_format;

typedef struct {
    sc_format format;
    int width, height;   /* page size in pixels                          */
    int x_axis;          /* axis along the rate curves, -1: none        */
    int curve_axis;      /* the bits (or cells) axis, -1: none          */
    int rate_vs_x;       /* draw rate against x                          */
    int rate_vs_bits;    /* draw rate against bits                       */
    int ber_vs_x;        /* draw the pre-FEC BER against x               */
    int required_vs_bits;/* draw [require]'s required value against bits */
    int bits_axis;       /* the bits (or cells) axis of required-vs-bits  */
    int required_vs_x;   /* draw [require]'s required value against x     */
    int photon_efficiency; /* PPM: bits per photon and per slot against
                              the photons per pulse                      */
    size_t *bits_at;     /* x-axis value indices for rate vs bits        */
    size_t nbits_at;
    int density;         /* draw the densities of one point              */
    size_t density_point;/* its grid index                               */
} sc_plots;

/* The plots of a scenario whose alphabets and axes are compiled: the
 * defaults (x: the first numeric axis other than bits/cells; curves: the
 * bits or cells axis), then the [plots] and [density] keys, each checked
 * against the axes and named by file:line on failure. */
qc_status sc_compile_plots(qc_scenario *sc);

/* Free what sc_compile_plots allocated and zero the configuration. */
void sc_plots_clear(sc_plots *p);

#endif
