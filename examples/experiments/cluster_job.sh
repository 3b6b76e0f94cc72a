#!/bin/bash
# A sample batch job for a cluster that schedules with Slurm: one sweep
# spread over 4 nodes x 32 ranks. Each rank plays one run at a time (the
# runs are handed out as ranks become free) and writes it into
# <output.file>.parts/ on the shared filesystem; rank 0 merges them into the
# results file at the end. If the job is killed (time limit, node failure),
# submit it again unchanged: finished runs are kept and only the rest run.
#
#   sbatch examples/experiments/cluster_job.sh examples/experiments/temperature_sweep.ini
#
#SBATCH --job-name=allocsim-sweep
#SBATCH --nodes=4
#SBATCH --ntasks-per-node=32
#SBATCH --cpus-per-task=1
#SBATCH --time=12:00:00
#SBATCH --output=allocsim-%j.log
set -euo pipefail
experiment=${1:?usage: sbatch cluster_job.sh EXPERIMENT.ini}
# Slurm's own launcher works as well: srun build/allocsim run "$experiment" --threads 1
mpirun build/allocsim run "$experiment" --threads 1 --quiet --csv "${experiment%.ini}.csv"
