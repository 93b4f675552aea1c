#!/usr/bin/env bash
# Scoring throughput through Spark local[1] and local[2] against the single-JVM rate on the same
# rows, the overhead per row, the 1 -> 2 core scaling, and the executor's memory at ROWS/10 and ROWS
# rows (SparkScoringBenchmark in diffusion-spark's test sources).
# Usage: diffusion-bench/spark-scoring.sh [--rows N] [--rounds R] [--k K]
#   defaults: 1,000,000 rows (20 columns, generated in the job), 2 rounds, K = 4 Monte Carlo steps.
#   --rows 100000 is a quick run (a few minutes); the full run takes about 10 minutes on 2 cores.
# Writes diffusion-bench/results/spark-scoring.txt (or $OUT). Prints the kernel and settings it ran with; it
# never changes OPENBLAS_CORETYPE.
set -euo pipefail
cd "$(dirname "$0")/.."
. diffusion-bench/spark-java.sh
ROWS=1000000
ROUNDS=2
K=4
while [ $# -gt 0 ]; do
  case "$1" in
    --rows) ROWS=$2; shift 2 ;;
    --rounds) ROUNDS=$2; shift 2 ;;
    --k) K=$2; shift 2 ;;
    *) echo "unknown argument $1; usage: $0 [--rows N] [--rounds R] [--k K]" >&2; exit 2 ;;
  esac
done
OUT=${OUT:-diffusion-bench/results/spark-scoring.txt}
spark_settings "rows=$ROWS rounds=$ROUNDS K=$K"
spark_main org.backstep.spark.SparkScoringBenchmark "$ROWS" "$ROUNDS" "$K" "$OUT"
