#!/usr/bin/env bash
# Scoring throughput through Spark local[1] and local[2] against one JVM on the same rows
# (SparkScoringBenchmark). Usage: diffusion-spark/bench.sh [ROWS] [ROUNDS] [K]
# Writes diffusion-bench/results/spark-scoring.txt. Prints the kernel and settings it ran with.
set -euo pipefail
cd "$(dirname "$0")/.."
ROWS=${1:-1000000}
ROUNDS=${2:-2}
K=${3:-4}
echo "kernel: $(uname -srm)"
echo "java: $(java -version 2>&1 | head -1)"
echo "OPENBLAS_CORETYPE=${OPENBLAS_CORETYPE:-} OMP_NUM_THREADS=${OMP_NUM_THREADS:-}"
echo "rows=$ROWS rounds=$ROUNDS K=$K"
mvn -B -q -o -pl diffusion-spark -am test-compile dependency:build-classpath \
    -Dmdep.includeScope=test -Dmdep.outputFile=target/test-cp.txt
OPTS=$(sed -n '/<spark.jvm.options>/,/<\/spark.jvm.options>/p' diffusion-spark/pom.xml | sed 's/<[^>]*>//g' | tr '\n' ' ')
echo "jvm options: $OPTS"
java $OPTS -Dlog4j2.configurationFile=diffusion-spark/src/test/resources/log4j2-test.properties \
    -cp "diffusion-spark/target/test-classes:diffusion-spark/target/classes:$(cat diffusion-spark/target/test-cp.txt)" \
    org.backstep.spark.SparkScoringBenchmark "$ROWS" "$ROUNDS" "$K" diffusion-bench/results/spark-scoring.txt
