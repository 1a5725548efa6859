#!/bin/bash
# Merge a deflator batch once every shard of the array has finished.
#   jobid=$(sbatch --parsable --array=0-7 --export=ALL,BATCH_DIR=... slurm-shards.sh)
#   sbatch --dependency=afterok:$jobid --export=ALL,BATCH_DIR=...,PROJECT_DB=... slurm-merge.sh
# afterok waits for every array task to succeed; a shard with a failed task exits 5, so
# the merge does not start: run `deflator batch status "$BATCH_DIR"`, then resubmit the array.
#SBATCH --job-name=deflator-merge
#SBATCH --cpus-per-task=1
#SBATCH --mem=2G
#SBATCH --time=00:30:00
#SBATCH --output=deflator-merge-%j.log
set -euo pipefail
: "${BATCH_DIR:?set BATCH_DIR to the batch folder}"
: "${PROJECT_DB:?set PROJECT_DB to the project database the batch was planned from}"
DEFLATOR=${DEFLATOR:-deflator}
$DEFLATOR batch status "$BATCH_DIR"
$DEFLATOR batch merge "$BATCH_DIR" --db "$PROJECT_DB"
