#!/usr/bin/env bash
# gravline batch as a Slurm array job: task K of N runs shard K/N of the batch, with --resume,
# so a task that was cancelled or pre-empted continues where it stopped when submitted again.
#
#   sbatch --array=1-N examples/slurm/array.sh N INPUT OUT [gravline batch options...]
#   # a task that failed or was cancelled, again (here task 2):
#   sbatch --array=2 examples/slurm/array.sh N INPUT OUT [options...]
#   # once every task has finished:
#   gravline merge OUT/summary-*-of-N.parquet --out OUT
#
# INPUT is a manifest CSV or a folder of trials, OUT the output folder every task shares (on a
# file system all nodes see). N is given explicitly because a resubmitted single task does not
# know the size of the original array. Array indices run from 1 to N; with --array=0-(N-1),
# set GRAVLINE_FIRST_INDEX=0. The gravline binary is taken from $GRAVLINE, else from PATH.
#SBATCH --job-name=gravline-batch
#SBATCH --cpus-per-task=1
set -euo pipefail

if [ "$#" -lt 3 ]; then
    echo "usage: sbatch --array=1-N $0 N INPUT OUT [gravline batch options...]" >&2
    exit 2
fi
n=$1
input=$2
out=$3
shift 3
if [ -z "${SLURM_ARRAY_TASK_ID:-}" ]; then
    echo "error: SLURM_ARRAY_TASK_ID is not set: submit as an array job (sbatch --array=1-$n)" >&2
    exit 2
fi
k=$((SLURM_ARRAY_TASK_ID + 1 - ${GRAVLINE_FIRST_INDEX:-1}))
if [ "$k" -lt 1 ] || [ "$k" -gt "$n" ]; then
    echo "error: array task $SLURM_ARRAY_TASK_ID is outside 1..$n (first index ${GRAVLINE_FIRST_INDEX:-1})" >&2
    exit 2
fi
exec "${GRAVLINE:-gravline}" batch "$input" --out "$out" --shard "$k/$n" --resume "$@"
