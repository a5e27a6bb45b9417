/* status.c — status codes, their messages and the per-thread detail
 * message that names the culprit of the last failure. */
#include "core/internal.h"

#include <stdarg.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <threads.h>

#include <gsl/gsl_errno.h>

static _Thread_local char detail[1024];

static const char *const messages[QC_STATUS_COUNT] = {
    [QC_OK] = "success",
    [QC_EINVAL] = "invalid argument",
    [QC_EFORMAT] = "malformed input",
    [QC_EIO] = "input/output error",
    [QC_EINFEASIBLE] = "infeasible constraints",
    [QC_ENOMEM] = "out of memory",
    [QC_ENOCONV] = "no convergence within the iteration limit",
    [QC_ENUMERIC] = "numerical failure",
};

const char *qc_version(void) { return QC_VERSION_STRING; }

const char *qc_strerror(qc_status status)
{
    if ((unsigned)status >= QC_STATUS_COUNT)
        return "unknown status";
    return messages[status];
}

const char *qc_last_error(void) { return detail; }

void qc_clear_error(void) { detail[0] = '\0'; }

int qc_status_is_input_error(qc_status status)
{
    return status == QC_EINVAL || status == QC_EFORMAT || status == QC_EIO ||
           status == QC_EINFEASIBLE;
}

/* The message is formatted into a scratch buffer first: callers often
 * prefix the previous message (qc_fail(st, "%s: %s", key, qc_last_error())),
 * and vsnprintf into the buffer it reads from is undefined (C17 7.21.6.12:
 * the copy may overlap) and in practice garbles the message. */
qc_status qc_fail(qc_status status, const char *fmt, ...)
{
    char text[sizeof detail];
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(text, sizeof text, fmt, ap);
    va_end(ap);
    /* whatever a caller put in, the message holds no raw control or
     * invalid bytes */
    qc_quote(text, strlen(text), sizeof detail, detail, sizeof detail);
    return status;
}

qc_status qc_fail_prefixed(qc_status status, const char *what)
{
    char text[sizeof detail];
    snprintf(text, sizeof text, "%s", detail);
    return qc_fail(status, "%s: %s", what, text);
}

static once_flag gsl_once = ONCE_FLAG_INIT;
static void gsl_handler_off(void) { gsl_set_error_handler_off(); }
void qc_gsl_init(void) { call_once(&gsl_once, gsl_handler_off); }

