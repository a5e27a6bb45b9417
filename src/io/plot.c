/* plot.c — placeholder */
#include "sweep/sweep.h"
int qc_plots_available(void) { return 0; }
qc_status qc_plot_sweep(const qc_scenario *sc, json_t *const *records, const char *dir,
                        char ***files, size_t *nfiles)
{ (void)sc; (void)records; (void)dir; (void)files; (void)nfiles; return QC_OK; }
