/* alphabet.h — internal interfaces of the alphabet and input-design
 * module (src/alphabet): constraint helpers, the level projection used by
 * level optimization, and the design stages that qc_design runs around
 * the threshold design. Not installed. */
#ifndef QC_ALPHABET_H
#define QC_ALPHABET_H

#include "core/internal.h"
#include "quantcap/alphabet.h"

/* ---- alphabet.c ------------------------------------------------------ */

/* x in [−peak, peak] ([0, peak] for intensity), up to rounding. */
int qc_within_peak(double x, double peak, int intensity);

/* ---- constraints.c --------------------------------------------------- */

#endif
