# Sourced by spark-scoring.sh, spark-rowjobs.sh and spark-fitting.sh (from the repository root):
#   spark_settings LINE   prints the kernel, CPUs, BLAS/OpenMP variables, java, Spark, load, commit
#                         and the given line of the script's own settings; never changes OPENBLAS_CORETYPE.
#   spark_main CLASS ARGS...  compiles diffusion-spark's test sources offline, prints the JVM options
#                         of diffusion-spark/pom.xml and runs CLASS from the test classpath with ARGS.
spark_settings() {
  local spark_version
  spark_version=$(sed -n 's:.*<spark.version>\(.*\)</spark.version>.*:\1:p' pom.xml | head -1)
  echo "kernel: $(uname -srm)"
  echo "cpus: $(nproc) ($(lscpu | awk -F: '/^Model name/ {sub(/^ +/, "", $2); print $2; exit}'))"
  echo "OPENBLAS_CORETYPE=${OPENBLAS_CORETYPE:-} OMP_NUM_THREADS=${OMP_NUM_THREADS:-}"
  echo "java: $(java -version 2>&1 | head -1)"
  echo "spark: ${spark_version}"
  echo "load: $(cat /proc/loadavg)"
  echo "commit: $(git rev-parse --short HEAD)$(git diff --quiet HEAD -- . || echo ' (with uncommitted changes)')"
  echo "$1"
}

spark_main() {
  local main=$1
  shift
  mvn -B -q -o -pl diffusion-spark -am test-compile dependency:build-classpath \
      -Dmdep.includeScope=test -Dmdep.outputFile=target/test-cp.txt
  local opts
  opts=$(sed -n '/<spark.jvm.options>/,/<\/spark.jvm.options>/p' diffusion-spark/pom.xml | sed 's/<[^>]*>//g' | tr '\n' ' ')
  echo "jvm options: $opts"
  # shellcheck disable=SC2086 # the options are several words
  java $opts -Dlog4j2.configurationFile=diffusion-spark/src/test/resources/log4j2-test.properties \
      -cp "diffusion-spark/target/test-classes:diffusion-spark/target/classes:$(cat diffusion-spark/target/test-cp.txt)" \
      "$main" "$@"
}
