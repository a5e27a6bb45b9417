/* sweep_mpi.h — `quantcap sweep` over several processes started by an MPI
 * launcher (mpirun, srun): rank 0 writes, the other ranks compute points
 * it hands out one at a time (private to the command line). Without MPI
 * in the build, only the check that refuses such a start is here. */
#ifndef QC_CLI_SWEEP_MPI_H
#define QC_CLI_SWEEP_MPI_H

#include <stddef.h>

#include "quantcap.h"

/* Number of processes the launcher started, from its environment (1 when
 * the program was not started by an MPI launcher), and whether this one
 * is the first (rank 0, or rank unknown). Reads only the environment. */
size_t cli_mpi_launched(int *first);

#ifdef QC_HAVE_MPI
typedef struct {
    int rank, size;
    unsigned jobs;           /* this rank's compute threads                  */
    int *remote_threads;     /* rank 0: compute threads of each rank         */
    size_t remote_active;    /* rank 0: remote threads not yet told to stop  */
    size_t remote_holding;   /* rank 0: points handed out, record not back   */
    const qc_scenario *sc;   /* the sweep (set by cli_mpi_agree)             */
    qc_sweep_worker *worker; /* computes this rank's points                  */
} cli_mpi;

/* MPI_Init with the threads the sweep needs; rank and size. 0, or an
 * exit code after a message. */
int cli_mpi_start(cli_mpi *m, unsigned jobs);

/* Every rank says whether it read the scenario (ok, with sc) or not (its
 * message in qc_last_error): all go on only if all read the same scenario
 * (the same hash). Prints the failures (a failed rank's own message, or
 * rank 0's account of a different scenario) and returns an exit code;
 * 0 when all agree. Collective. */
int cli_mpi_agree(cli_mpi *m, const qc_scenario *sc, qc_status read_status);

/* Ranks other than 0: compute the points rank 0 hands out until told to
 * stop. Returns 0, or an exit code after a message. */
int cli_mpi_work(cli_mpi *m, const qc_scenario *sc);

/* Rank 0: the executor for qc_sweep_options (user = the cli_mpi). */
qc_status cli_mpi_execute(void *user, const size_t *todo, size_t ntodo,
                          const size_t *setting, qc_sweep_deliver_fn deliver, void *ctx,
                          char *msg, size_t cap);

/* Rank 0 after the sweep: tell the ranks that still wait that there is no
 * more work (the sweep may have stopped before handing any out). Then
 * every rank: agree on rank 0's exit code (returned), free, MPI_Finalize.
 * Collective. */
int cli_mpi_end(cli_mpi *m, int rc);
#endif

#endif
