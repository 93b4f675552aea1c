#!/usr/bin/env bash
# Fitting from a DataFrame, measured: (a) a uniform sample trained on the driver against (b)
# synchronous data-parallel training over the executors (each step: broadcast the weights, a share
# of the minibatch's gradient per partition, treeAggregate, Adam on the driver), in Spark
# local[2], time per step and the held-out bound as training goes (SparkFittingMeasurement in
# diffusion-spark's test sources).
# Usage: diffusion-bench/spark-fitting.sh [--rows N,N..] [--steps S] [--hidden W,W] [--timing-hidden W,W,W]
#   defaults: 100,000 and 1,000,000 rows of 20 columns, 1,000 steps, hidden 64,64; time per step
#   also with the core's default network 256,256,256 (100 steps). About 10 minutes on 2 cores.
# Writes diffusion-bench/results/spark-fitting.txt. Prints the kernel and settings it ran with; it
# never changes OPENBLAS_CORETYPE.
set -euo pipefail
cd "$(dirname "$0")/.."
. diffusion-bench/spark-java.sh
ROWS=100000,1000000
STEPS=1000
HIDDEN=64,64
TIMING=256,256,256
TIMING_STEPS=100
while [ $# -gt 0 ]; do
  case "$1" in
    --rows) ROWS=$2; shift 2 ;;
    --steps) STEPS=$2; shift 2 ;;
    --hidden) HIDDEN=$2; shift 2 ;;
    --timing-hidden) TIMING=$2; shift 2 ;;
    --timing-steps) TIMING_STEPS=$2; shift 2 ;;
    *) echo "unknown argument $1; usage: $0 [--rows N,N..] [--steps S] [--hidden W,W] [--timing-hidden W,W,W] [--timing-steps S]" >&2; exit 2 ;;
  esac
done
OUT=${OUT:-diffusion-bench/results/spark-fitting.txt}
spark_settings "rows=$ROWS steps=$STEPS hidden=$HIDDEN timing-hidden=$TIMING timing-steps=$TIMING_STEPS"
spark_main org.backstep.spark.SparkFittingMeasurement "$ROWS" "$STEPS" "$HIDDEN" "$OUT" "$TIMING" "$TIMING_STEPS"
