#!/bin/bash
# bandwright nightly as a Slurm job array: one array task per shard.
#
# Each task runs `bandwright nightly --shard K/N` with K = its array index and
# N = the highest index, so the array must be numbered 1..N (--array=1-N).
# A file belongs to shard 1 + (first 64 bits of its SHA-256 mod N): every
# task computes the same partition, no two tasks work on the same file, and
# together they cover the inbox. All tasks share one archive; they take turns
# appending to ledger.csv and history.csv under a short file lock.
#
# Requirements: the inbox and the archive on a file system every node mounts,
# with working flock(2) (NFSv4, CephFS, BeeGFS, GPFS; Lustre mounted with
# -o flock). The inbox can be mounted read-only on the nodes.
#
# Submit it every night, for example from cron on the login node
#   0 2 * * *  sbatch /lab/bandwright/nightly-slurm.sh
# or from Slurm's own cron (scrontab -e), the same line.
#
# Exit status of a task: 0 all files of its shard done (or nothing to do),
# 3 some files failed (listed in ARCHIVE/ledger.csv with a message; the others
# are done), 1 bad usage or the shard is already running. Slurm marks a task
# with a nonzero status FAILED, so `sacct -j JOBID` shows which shards need a
# look. Re-running a task (scontrol requeue JOBID_K) redoes only what its
# shard has not finished.
#
# Two minutes before the time limit (--signal=B:TERM@120; B: because the
# batch shell is bandwright itself after `exec`) and on scancel, bandwright
# gets SIGTERM: it starts no new file, finishes those in progress and records
# them. If it is still running when Slurm's grace period ends, the SIGKILL
# that follows is safe too: the next run removes half-built results and does
# the rest.
#
#SBATCH --job-name=bandwright-nightly
#SBATCH --array=1-8
#SBATCH --cpus-per-task=4
#SBATCH --mem-per-cpu=512M
#SBATCH --time=02:00:00
#SBATCH --signal=B:TERM@120
#SBATCH --output=/lab/archive/logs/nightly-%A_%a.log

set -euo pipefail

INBOX=/lab/inbox                       # measurement files; only read
ARCHIVE=/lab/archive                   # results, ledger, history, summaries
PIPELINE=/lab/pipelines/co-cell.toml   # the chain of stages (its SHA-256 goes into every manifest)

K=${SLURM_ARRAY_TASK_ID}
N=${SLURM_ARRAY_TASK_MAX}

# --workers: files processed at once on this node; the fits are single-threaded.
exec bandwright nightly \
    --inbox "$INBOX" \
    --archive "$ARCHIVE" \
    --pipeline "$PIPELINE" \
    --workers "${SLURM_CPUS_PER_TASK:-1}" \
    --shard "${K}/${N}"
