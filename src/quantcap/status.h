/* quantcap/status.h — status codes, the per-thread detail message and the
 * library version. Part of the public interface of libquantcap (include
 * <quantcap.h> for all of it). SPDX-License-Identifier: GPL-3.0-or-later
 * */
#ifndef QUANTCAP_STATUS_H
#define QUANTCAP_STATUS_H

#include <stddef.h>

#include "quantcap/export.h"

#ifdef __cplusplus
extern "C" {
#endif

typedef enum {
    QC_OK = 0,
    QC_EINVAL,      /* an argument or parameter is out of its domain      */
    QC_EFORMAT,     /* a file or text is malformed                        */
    QC_EIO,         /* a file cannot be opened, read or written           */
    QC_EINFEASIBLE, /* the constraints cannot be met by any input         */
    QC_ENOMEM,      /* out of memory                                      */
    QC_ENOCONV,     /* iteration limit reached before the tolerance       */
    QC_ENUMERIC,    /* a numerical routine failed (non-finite, GSL error) */
    QC_STATUS_COUNT
} qc_status;

/* Short fixed description of a status code ("invalid argument", ...).
 * Never fails: a value out of range gives "unknown status". */
QC_API const char *qc_strerror(qc_status status);

/* Detail message of the last failure in this thread, naming the culprit
 * (parameter, file and line, matrix row). Empty string if none. Never
 * fails; the text is valid until the thread's next library call that
 * fails (a call that succeeds may leave it as it was). */
QC_API const char *qc_last_error(void);

/* True for statuses caused by the caller's input (usage/input error):
 * QC_EINVAL, QC_EFORMAT, QC_EIO, QC_EINFEASIBLE. 0 for every other value,
 * including QC_OK and values out of range. Never fails. */
QC_API int qc_status_is_input_error(qc_status status);

/* The library's version, "MAJOR.MINOR.PATCH" (the meson project version
 * it was built from). Never fails. */
QC_API const char *qc_version(void);

#ifdef __cplusplus
}
#endif

#endif /* QUANTCAP_STATUS_H */
