#!/bin/bash
# One shard of a deflator batch per Slurm array task.
#   deflator batch plan grid.json --db project.db --out "$BATCH_DIR"   (once, before)
#   sbatch --array=0-7 --export=ALL,BATCH_DIR=/shared/batches/factor-search slurm-shards.sh
# --array=0-N starts N+1 array tasks; Slurm sets SLURM_ARRAY_TASK_ID (0..N) and
# SLURM_ARRAY_TASK_COUNT (N+1) in each, so the shard count follows the --array range.
#SBATCH --job-name=deflator-shards
#SBATCH --cpus-per-task=1
#SBATCH --mem=1G
#SBATCH --time=04:00:00
#SBATCH --output=deflator-shard-%A_%a.log
set -euo pipefail
: "${BATCH_DIR:?set BATCH_DIR to the batch folder on the shared file system}"
: "${SLURM_ARRAY_TASK_ID:?submit with sbatch --array=0-N}"
: "${SLURM_ARRAY_TASK_COUNT:?submit with sbatch --array=0-N}"
DEFLATOR=${DEFLATOR:-deflator}
# One core per shard: two shards beat one shard with two threads (README, Performance).
# A requeued or resubmitted array task skips the tasks its shard already finished.
$DEFLATOR batch run "$BATCH_DIR" --shard "${SLURM_ARRAY_TASK_ID}/${SLURM_ARRAY_TASK_COUNT}" --threads "${SLURM_CPUS_PER_TASK:-1}"
