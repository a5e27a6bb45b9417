/* fuzz_scenario.c — libFuzzer target for the scenario reader: any input
 * must give either a scenario whose grid and overrides behave, or a status
 * with a message naming the place, never a crash, leak or undefined
 * behaviour. */
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "quantcap.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    qc_scenario *sc = (qc_scenario *)&size; /* must be reset to NULL on failure */
    qc_status st = qc_scenario_parse((const char *)data, size, "fuzz.ini", &sc);
    if (st != QC_OK) {
        if (sc != NULL || strncmp(qc_last_error(), "fuzz.ini", 8) != 0)
            abort();
        return 0;
    }
    size_t n = qc_scenario_npoints(sc);
    if (n == 0 || n > QC_SCENARIO_MAX_POINTS || strlen(qc_scenario_hash(sc)) != 16)
        abort();
    /* the first and last points have settings; checking a small grid must
     * not crash whatever it answers */
    qc_settings *s = NULL;
    if (qc_scenario_point_settings(sc, 0, &s) != QC_OK)
        abort();
    qc_settings_free(s);
    if (qc_scenario_point_settings(sc, n - 1, &s) != QC_OK)
        abort();
    qc_settings_free(s);
    if (n <= 64)
        (void)qc_scenario_check(sc);
    /* a failed override leaves the scenario as it was */
    char hash[17];
    memcpy(hash, qc_scenario_hash(sc), sizeof hash);
    if (qc_scenario_override(sc, "bits=0") == QC_OK ||
        strcmp(hash, qc_scenario_hash(sc)) != 0)
        abort();
    qc_scenario_free(sc);
    return 0;
}
