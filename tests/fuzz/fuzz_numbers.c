/* fuzz_numbers.c — libFuzzer target for the command-line number parsers
 * (single numbers, whole numbers, comma-separated lists): a value is either
 * accepted as a finite decimal number or rejected with a message. */
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "quantcap.h"
#include "core/parse.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    char *text = malloc(size + 1);
    if (!text)
        return 0;
    memcpy(text, data, size);
    text[size] = '\0';

    double v;
    if (qc_parse_double(text, &v) == QC_OK &&
        (!isfinite(v) || strpbrk(text, "xXpPiInN"))) /* decimal only: no hex, inf, nan */
        abort();
    size_t z;
    if (qc_parse_size(text, 1, 16, &z) == QC_OK && (z < 1 || z > 16))
        abort();
    double *list = NULL;
    size_t n = 0;
    if (qc_parse_list(text, &list, &n) == QC_OK) {
        if (n == 0 || !list)
            abort();
        for (size_t i = 0; i < n; i++)
            if (!isfinite(list[i]))
                abort();
        free(list);
    } else if (list != NULL || qc_last_error()[0] == '\0') {
        abort();
    }
    free(text);
    return 0;
}
