/* quantcap/export.h — QC_API marks what libquantcap exports. The library
 * is built with -fvisibility=hidden, so a function or object without it
 * stays internal to the library. SPDX-License-Identifier: GPL-3.0-or-later */
#ifndef QUANTCAP_EXPORT_H
#define QUANTCAP_EXPORT_H

#if defined(__GNUC__) || defined(__clang__)
#define QC_API __attribute__((visibility("default")))
#else
#define QC_API
#endif

#endif /* QUANTCAP_EXPORT_H */
