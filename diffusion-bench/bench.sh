#!/usr/bin/env bash
# Runs Backstep's JMH benchmarks and writes diffusion-bench/results/latest.json (JMH's own JSON,
# which records the JVM and every parameter) and latest.txt (a short table with ms per 1,000
# records, steps/s and GFLOP/s against the machine's peak from peak.sh).
#
#   diffusion-bench/bench.sh                      every benchmark (about 15 minutes on 2 cores)
#   diffusion-bench/bench.sh 'SamplingBenchmark'  a regular expression of benchmarks, then any
#                                                 further JMH options (e.g. -p columns=8 -f 1)
#
# Benchmarks are timed in wall-clock time: other work on the machine slows them, so the table
# records the load average before and after the run. OPENBLAS_VERBOSE=2 is set so that the bundled
# OpenBLAS names the kernel it chose (OPENBLAS_CORETYPE is not set: it picks by itself).
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "${here}/.." && pwd)
results="${here}/results"
mkdir -p "${results}"
pattern="${1:-.*}"
shift || true

if ! build=$(cd "${root}" && mvn -B -q -o -pl diffusion-bench -am package -DskipTests 2>&1); then
  echo "${build}"
  exit 1
fi
jar="${here}/target/benchmarks.jar"
IFS=$'\t' read -r peak derivation < <("${here}/peak.sh")

load_before=$(cut -d' ' -f1-3 /proc/loadavg)
started=$(date -u '+%Y-%m-%d %H:%M')
log="${results}/latest.log"
OPENBLAS_VERBOSE=2 java -jar "${jar}" "${pattern}" -rf json -rff "${results}/latest.json" "$@" | tee "${log}"
load_after=$(cut -d' ' -f1-3 /proc/loadavg)
kernel=$(grep -m1 -o 'Core: [A-Za-z0-9_]*' "${log}" || echo "Core: (not printed)")

{
  echo "Backstep JMH results, run ${started} to $(date -u '+%H:%M UTC'), git $(cd "${root}" && git rev-parse --short HEAD)$(cd "${root}" && git diff --quiet HEAD -- . ':!diffusion-bench/results' || echo ' (uncommitted changes)')"
  echo "machine: $(nproc) CPUs; load average (1, 5, 15 min) before ${load_before}, after ${load_after}"
  echo "bundled OpenBLAS kernel: ${kernel#Core: } (OPENBLAS_VERBOSE=2; OPENBLAS_CORETYPE not set)"
  java -cp "${jar}" org.backstep.bench.ResultTable "${results}/latest.json" "${peak}" "${derivation}"
} > "${results}/latest.txt"
rm -f "${log}"
cat "${results}/latest.txt"
