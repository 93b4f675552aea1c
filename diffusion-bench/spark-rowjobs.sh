#!/usr/bin/env bash
# Imputation and denoising throughput through Spark local[1]: rows sent to the core in batches of
# 256 (each record with its own seed) against one core call per row, in turns in one process
# (SparkRowJobsBenchmark in diffusion-spark's test sources).
# Usage: diffusion-bench/spark-rowjobs.sh [--rows N] [--draws D]
#   defaults: 20,000 rows (one row per call on a tenth of them), 5 draws; a few minutes on 2 cores.
# Writes diffusion-bench/results/spark-rowjobs.txt. Prints the kernel and settings it ran with; it
# never changes OPENBLAS_CORETYPE.
set -euo pipefail
cd "$(dirname "$0")/.."
ROWS=20000
DRAWS=5
while [ $# -gt 0 ]; do
  case "$1" in
    --rows) ROWS=$2; shift 2 ;;
    --draws) DRAWS=$2; shift 2 ;;
    *) echo "unknown argument $1; usage: $0 [--rows N] [--draws D]" >&2; exit 2 ;;
  esac
done
SPARK_VERSION=$(sed -n 's:.*<spark.version>\(.*\)</spark.version>.*:\1:p' pom.xml | head -1)
echo "kernel: $(uname -srm)"
echo "cpus: $(nproc) ($(lscpu | awk -F: '/^Model name/ {sub(/^ +/, "", $2); print $2; exit}'))"
echo "OPENBLAS_CORETYPE=${OPENBLAS_CORETYPE:-} OMP_NUM_THREADS=${OMP_NUM_THREADS:-}"
echo "java: $(java -version 2>&1 | head -1)"
echo "spark: ${SPARK_VERSION}"
echo "load: $(cat /proc/loadavg)"
echo "rows=$ROWS draws=$DRAWS"
mvn -B -q -o -pl diffusion-spark -am test-compile dependency:build-classpath \
    -Dmdep.includeScope=test -Dmdep.outputFile=target/test-cp.txt
OPTS=$(sed -n '/<spark.jvm.options>/,/<\/spark.jvm.options>/p' diffusion-spark/pom.xml | sed 's/<[^>]*>//g' | tr '\n' ' ')
echo "jvm options: $OPTS"
java $OPTS -Dlog4j2.configurationFile=diffusion-spark/src/test/resources/log4j2-test.properties \
    -cp "diffusion-spark/target/test-classes:diffusion-spark/target/classes:$(cat diffusion-spark/target/test-cp.txt)" \
    org.backstep.spark.SparkRowJobsBenchmark "$ROWS" "$DRAWS" diffusion-bench/results/spark-rowjobs.txt
