#!/bin/bash
# range-array.sh - one particle-number sector of lam-range per job of a
# job array.  An example for a cluster scheduler: SLURM-style directives
# below; other schedulers have the same idea under other names.
#
#SBATCH --job-name=lam-range
#SBATCH --cpus-per-task=2
#SBATCH --mem=8G
#SBATCH --time=02:00:00
#SBATCH --output=logs/range-%A_%a.log
#
# Usage (paths relative to the directory you submit from):
#   ./sectors.sh H.op > sectors.txt
#   mkdir -p logs sectors
#   sbatch --array=1-$(wc -l < sectors.txt) range-array.sh H.op sectors.txt sectors
#   # ... when every job is done:
#   ./gather.sh sectors 8 > range.report          (8 = electron number, optional)
#
# The job number comes from SLURM_ARRAY_TASK_ID (SLURM sets it for each
# job of the array, 1-based here); without a scheduler set TASK_ID instead,
# e.g. all sectors on one machine, two at a time:
#   seq "$(wc -l < sectors.txt)" | xargs -P 2 -I{} env TASK_ID={} ./range-array.sh H.op sectors.txt sectors
#
# LAM_BIN is the directory of the lamina programs (default: on PATH).
set -euo pipefail
op=${1:?usage: range-array.sh OPERATOR SECTORS-FILE OUTPUT-DIR}
list=${2:?usage: range-array.sh OPERATOR SECTORS-FILE OUTPUT-DIR}
outdir=${3:?usage: range-array.sh OPERATOR SECTORS-FILE OUTPUT-DIR}
task=${SLURM_ARRAY_TASK_ID:-${TASK_ID:?set SLURM_ARRAY_TASK_ID or TASK_ID to a line number of $list}}
sector=$(sed -n "${task}p" "$list")
if [ -z "$sector" ]; then
    echo "range-array.sh: $list has no line $task" >&2
    exit 64
fi
lam_range=${LAM_BIN:+$LAM_BIN/}lam-range
out="$outdir/sector-${sector/,/-}.report"
# Threads for the matrix products: what the scheduler granted, else 1.
"$lam_range" --quiet --threads "${SLURM_CPUS_PER_TASK:-1}" --sector "$sector" -o "$out.tmp" "$op"
mv "$out.tmp" "$out"
