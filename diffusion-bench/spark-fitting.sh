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
SPARK_VERSION=$(sed -n 's:.*<spark.version>\(.*\)</spark.version>.*:\1:p' pom.xml | head -1)
echo "kernel: $(uname -srm)"
echo "cpus: $(nproc) ($(lscpu | awk -F: '/^Model name/ {sub(/^ +/, "", $2); print $2; exit}'))"
echo "OPENBLAS_CORETYPE=${OPENBLAS_CORETYPE:-} OMP_NUM_THREADS=${OMP_NUM_THREADS:-}"
echo "java: $(java -version 2>&1 | head -1)"
echo "spark: ${SPARK_VERSION}"
echo "load: $(cat /proc/loadavg)"
echo "commit: $(git rev-parse --short HEAD)$(git diff --quiet HEAD -- . || echo ' (with uncommitted changes)')"
echo "rows=$ROWS steps=$STEPS hidden=$HIDDEN timing-hidden=$TIMING timing-steps=$TIMING_STEPS"
mvn -B -q -o -pl diffusion-spark -am test-compile dependency:build-classpath \
    -Dmdep.includeScope=test -Dmdep.outputFile=target/test-cp.txt
OPTS=$(sed -n '/<spark.jvm.options>/,/<\/spark.jvm.options>/p' diffusion-spark/pom.xml | sed 's/<[^>]*>//g' | tr '\n' ' ')
echo "jvm options: $OPTS"
java $OPTS -Dlog4j2.configurationFile=diffusion-spark/src/test/resources/log4j2-test.properties \
    -cp "diffusion-spark/target/test-classes:diffusion-spark/target/classes:$(cat diffusion-spark/target/test-cp.txt)" \
    org.backstep.spark.SparkFittingMeasurement "$ROWS" "$STEPS" "$HIDDEN" "$OUT" "$TIMING" "$TIMING_STEPS"
