#!/usr/bin/env bash
# Runs Backstep's JMH benchmarks and writes JMH's own JSON (which records the JVM and every
# parameter) and a short table with ms per 1,000 records, steps/s and GFLOP/s against the
# machine's peak from peak.sh.
#
#   diffusion-bench/bench.sh                      every benchmark (about 15 minutes on 2 cores)
#   diffusion-bench/bench.sh 'SamplingBenchmark'  a regular expression of benchmarks, then any
#                                                 further JMH options (e.g. -p columns=8 -f 1)
#   diffusion-bench/bench.sh --update-reference [PATTERN [JMH options]]
#
# By default the results go to results/run-<UTC time>.json and .txt, new files that git ignores,
# so that a run never overwrites the reference results the READMEs quote. --update-reference
# writes results/latest.json and latest.txt instead, the tracked reference: use it for a run meant
# to replace the quoted figures, on a quiet machine, and update the READMEs with it.
#
# Benchmarks are timed in wall-clock time: other work on the machine slows them, so the table
# records the load average before and after the run. OPENBLAS_VERBOSE=2 is set so that the bundled
# OpenBLAS names the kernel it chose (OPENBLAS_CORETYPE is not set: it picks by itself).
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "${here}/.." && pwd)
results="${here}/results"
mkdir -p "${results}"
if [ "${1:-}" = "--update-reference" ]; then
  name="latest"
  shift
else
  name="run-$(date -u '+%Y%m%dT%H%M%SZ')"
fi
pattern="${1:-.*}"
shift || true
json="${results}/${name}.json"
table="${results}/${name}.txt"
echo "bench.sh: results go to ${json} and ${table}$([ "${name}" = latest ] && echo ' (the tracked reference)')"

if ! build=$(cd "${root}" && mvn -B -q -o -pl diffusion-bench -am package -DskipTests 2>&1); then
  echo "${build}"
  exit 1
fi
jar="${here}/target/benchmarks.jar"
IFS=$'\t' read -r peak derivation < <("${here}/peak.sh")

load_before=$(cut -d' ' -f1-3 /proc/loadavg)
started=$(date -u '+%Y-%m-%d %H:%M')
log="${results}/${name}.log"
echo "bench.sh: OPENBLAS_VERBOSE=2 java -jar ${jar} ${pattern} -rf json -rff ${json} $*"
OPENBLAS_VERBOSE=2 java -jar "${jar}" "${pattern}" -rf json -rff "${json}" "$@" | tee "${log}"
load_after=$(cut -d' ' -f1-3 /proc/loadavg)
kernel=$(grep -m1 -o 'Core: [A-Za-z0-9_]*' "${log}" || echo "Core: (not printed)")

{
  echo "Backstep JMH results, run ${started} to $(date -u '+%H:%M UTC'), git $(cd "${root}" && git rev-parse --short HEAD)$(cd "${root}" && git diff --quiet HEAD -- . ':!diffusion-bench/results' || echo ' (uncommitted changes)')"
  echo "machine: $(nproc) CPUs; load average (1, 5, 15 min) before ${load_before}, after ${load_after}"
  echo "bundled OpenBLAS kernel: ${kernel#Core: } (OPENBLAS_VERBOSE=2; OPENBLAS_CORETYPE not set)"
  java -cp "${jar}" org.backstep.bench.ResultTable "${json}" "${peak}" "${derivation}"
} > "${table}"
rm -f "${log}"
cat "${table}"
