#!/usr/bin/env bash
# Scoring throughput through Spark local[1] and local[2] against the single-JVM rate on the same
# rows, the overhead per row, the 1 -> 2 core scaling, and the executor's memory at ROWS/10 and ROWS
# rows (SparkScoringBenchmark in diffusion-spark's test sources).
# Usage: diffusion-bench/spark-scoring.sh [--rows N] [--rounds R] [--k K]
#   defaults: 1,000,000 rows (20 columns, generated in the job), 2 rounds, K = 4 Monte Carlo steps.
#   --rows 100000 is a quick run (a few minutes); the full run takes about 10 minutes on 2 cores.
# Writes diffusion-bench/results/spark-scoring.txt. Prints the kernel and settings it ran with; it
# never changes OPENBLAS_CORETYPE.
set -euo pipefail
cd "$(dirname "$0")/.."
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
SPARK_VERSION=$(sed -n 's:.*<spark.version>\(.*\)</spark.version>.*:\1:p' pom.xml | head -1)
echo "kernel: $(uname -srm)"
echo "cpus: $(nproc) ($(lscpu | awk -F: '/^Model name/ {sub(/^ +/, "", $2); print $2; exit}'))"
echo "OPENBLAS_CORETYPE=${OPENBLAS_CORETYPE:-} OMP_NUM_THREADS=${OMP_NUM_THREADS:-}"
echo "java: $(java -version 2>&1 | head -1)"
echo "spark: ${SPARK_VERSION}"
echo "load: $(cat /proc/loadavg)"
echo "rows=$ROWS rounds=$ROUNDS K=$K"
mvn -B -q -o -pl diffusion-spark -am test-compile dependency:build-classpath \
    -Dmdep.includeScope=test -Dmdep.outputFile=target/test-cp.txt
OPTS=$(sed -n '/<spark.jvm.options>/,/<\/spark.jvm.options>/p' diffusion-spark/pom.xml | sed 's/<[^>]*>//g' | tr '\n' ' ')
echo "jvm options: $OPTS"
java $OPTS -Dlog4j2.configurationFile=diffusion-spark/src/test/resources/log4j2-test.properties \
    -cp "diffusion-spark/target/test-classes:diffusion-spark/target/classes:$(cat diffusion-spark/target/test-cp.txt)" \
    org.backstep.spark.SparkScoringBenchmark "$ROWS" "$ROUNDS" "$K" diffusion-bench/results/spark-scoring.txt
