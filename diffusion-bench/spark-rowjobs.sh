#!/usr/bin/env bash
# Imputation and denoising throughput through Spark local[1]: rows sent to the core in batches of
# 256 (each record with its own seed) against one core call per row, in turns in one process
# (SparkRowJobsBenchmark in diffusion-spark's test sources).
# Usage: diffusion-bench/spark-rowjobs.sh [--rows N] [--draws D]
#   defaults: 20,000 rows (one row per call on a tenth of them), 5 draws; a few minutes on 2 cores.
# Writes diffusion-bench/results/spark-rowjobs.txt (or $OUT). Prints the kernel and settings it ran with; it
# never changes OPENBLAS_CORETYPE.
set -euo pipefail
cd "$(dirname "$0")/.."
. diffusion-bench/spark-java.sh
ROWS=20000
DRAWS=5
while [ $# -gt 0 ]; do
  case "$1" in
    --rows) ROWS=$2; shift 2 ;;
    --draws) DRAWS=$2; shift 2 ;;
    *) echo "unknown argument $1; usage: $0 [--rows N] [--draws D]" >&2; exit 2 ;;
  esac
done
OUT=${OUT:-diffusion-bench/results/spark-rowjobs.txt}
spark_settings "rows=$ROWS draws=$DRAWS"
spark_main org.backstep.spark.SparkRowJobsBenchmark "$ROWS" "$DRAWS" "$OUT"
