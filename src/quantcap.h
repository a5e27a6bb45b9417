/* quantcap.h — the public interface of libquantcap.
 *
 * quantcap turns a noise model of an optical or fiber receiver into the
 * transition matrix of a quantized channel, rates that matrix with a
 * Blahut–Arimoto capacity engine that certifies its answer with an upper
 * bound, and designs thresholds, input laws and levels.
 *
 * Conventions:
 *  - every function that can fail returns qc_status (QC_OK = 0); the detail
 *    message of the last failure in the calling thread is qc_last_error();
 *  - the library never prints, exits or aborts;
 *  - logarithms are natural inside; functions and fields named *_bits are
 *    in bits;
 *  - objects come in alloc/free pairs and every _free(NULL) does nothing.
 *
 * SPDX-License-Identifier: GPL-3.0-or-later
 */
#ifndef QUANTCAP_H
#define QUANTCAP_H

/* One header per stage of the flow, lower stages first; each includes
 * what it needs of the stages below it. */
#include "quantcap/status.h"
#include "quantcap/atomic_file.h"
#include "quantcap/dmc.h"
#include "quantcap/info.h"
#include "quantcap/figures.h"
#include "quantcap/model.h"
#include "quantcap/frontend.h"
#include "quantcap/quantizer.h"
#include "quantcap/capacity.h"
#include "quantcap/memory.h"
#include "quantcap/alphabet.h"
#include "quantcap/plane.h"
#include "quantcap/design.h"
#include "quantcap/iq.h"
#include "quantcap/study.h"

#endif /* QUANTCAP_H */
