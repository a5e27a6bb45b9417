#!/bin/sh
# Example batch job: one quantcap sweep spread over the nodes of a Slurm
# cluster with Open MPI. Submit with `sbatch examples/sweep_slurm.sh`;
# adjust the resources, the scenario and the folder to your study.
#
# One MPI rank per node, each running its points on the node's cores with
# OpenMP threads (--jobs); rank 0 writes the checkpoint, the tables and
# the plots into DIR, which must be on a file system every node sees only
# if you want to read the results from the other nodes (the other ranks
# write nothing). The scenario file must be readable from every node.
#SBATCH --job-name=quantcap-sweep
#SBATCH --nodes=4
#SBATCH --ntasks-per-node=1
#SBATCH --cpus-per-task=32
#SBATCH --time=12:00:00
#SBATCH --output=quantcap-sweep-%j.log
set -eu

SCENARIO=${SCENARIO:-scenarios/designer.ini}
DIR=${DIR:-out/cluster}

# Continue the checkpoint if an earlier job (of any size) was cut short
# by its time limit or a failed node; --resume starts afresh if there is
# none, so the same script serves the first job and its continuations.
# --bind-to none leaves every core of its node to a rank's threads.
mpirun -n "$SLURM_NTASKS" --map-by node --bind-to none \
    quantcap sweep "$SCENARIO" --output-dir "$DIR" --resume --quiet \
    --jobs "$SLURM_CPUS_PER_TASK"
