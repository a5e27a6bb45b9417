/* ppm_dump.c — the pulse-position rates of src/capacity/ppm.c for the
 * cases tests/capacity/check_ppm.py writes on stdin, one per line:
 *   soft M K TOL p_off[1..K] p_on[1..K]   → "LOWER UPPER EVALUATIONS"
 *   hard M FIRE_ON FIRE_OFF               → "RATE CORRECT WRONG ERASURE"
 * The script builds the per-slot rows with scipy and rates the full
 * symbol channel by direct enumeration. */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "quantcap.h"

#define MAX_CELLS 4096

int main(void)
{
    char kind[8];
    static double off[MAX_CELLS], on[MAX_CELLS];
    while (scanf("%7s", kind) == 1) {
        size_t m, k;
        if (strcmp(kind, "soft") == 0) {
            double tol;
            if (scanf("%zu %zu %lf", &m, &k, &tol) != 3 || k > MAX_CELLS)
                return 2;
            for (size_t i = 0; i < k; i++)
                if (scanf("%lf", &off[i]) != 1)
                    return 2;
            for (size_t i = 0; i < k; i++)
                if (scanf("%lf", &on[i]) != 1)
                    return 2;
            qc_ppm_bounds b;
            if (qc_ppm_soft_rate(off, on, k, m, tol, &b) != QC_OK) {
                fprintf(stderr, "ppm_dump: %s\n", qc_last_error());
                return 1;
            }
            printf("%.17g %.17g %zu\n", b.rate_bits, b.upper_bound_bits, b.evaluations);
        } else if (strcmp(kind, "hard") == 0) {
            double a, b;
            if (scanf("%zu %lf %lf", &m, &a, &b) != 3)
                return 2;
            qc_ppm_hard h;
            if (qc_ppm_hard_rate(a, b, m, &h) != QC_OK) {
                fprintf(stderr, "ppm_dump: %s\n", qc_last_error());
                return 1;
            }
            printf("%.17g %.17g %.17g %.17g\n", h.rate_bits, h.correct, h.wrong, h.erasure);
        } else {
            return 2;
        }
        fflush(stdout);
    }
    return 0;
}
