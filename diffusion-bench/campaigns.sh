#!/usr/bin/env bash
# Runs the long hardening campaigns of issue 15 (the same code as diffusion-core's tests
# ModelFileFuzzTest and KillDuringSaveTest, at larger counts) and keeps the summary in
# diffusion-bench/results/campaigns.txt, headed by the machine and settings it ran with.
#
#   diffusion-bench/campaigns.sh [FILES [KILLS [SEED [BOMB_MIB]]]]   defaults 10000 100 15 1024
#
# About 10 minutes for the defaults on 2 shared cores (each kill starts a JVM with ND4J).
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "${here}/.." && pwd)
results="${here}/results"
mkdir -p "${results}"
files="${1:-10000}"
kills="${2:-100}"
seed="${3:-15}"
bomb="${4:-1024}"

if ! build=$(cd "${root}" && mvn -B -q -o -pl diffusion-bench -am package -DskipTests 2>&1); then
  echo "${build}"
  exit 1
fi
jar="${here}/target/benchmarks.jar"
out="${results}/campaigns.txt"
started=$(date -u '+%Y-%m-%d %H:%M')
load_before=$(cut -d' ' -f1-3 /proc/loadavg)
log=$(mktemp)
status=0
OMP_NUM_THREADS=1 java -Xmx2g -Dorg.slf4j.simpleLogger.log.org.backstep.internal.chain.Engine=error \
  -cp "${jar}" org.backstep.bench.Campaigns "${files}" "${kills}" "${seed}" "${bomb}" \
  > "${log}" || status=$?
{
  echo "Backstep hardening campaigns, run ${started} to $(date -u '+%H:%M UTC'), git $(cd "${root}" && git rev-parse --short HEAD)$(cd "${root}" && git diff --quiet HEAD -- . ':!diffusion-bench/results' || echo ' (uncommitted changes)')"
  echo "machine: $(nproc) CPUs, kernel $(uname -sr); load average (1, 5, 15 min) before ${load_before}, after $(cut -d' ' -f1-3 /proc/loadavg) (the machine is shared)"
  echo "java: $(java -version 2>&1 | head -1); -Xmx2g; OMP_NUM_THREADS=1; the mutated models' sampling warnings silenced; OPENBLAS_CORETYPE=${OPENBLAS_CORETYPE:-(not set)}"
  echo "arguments: ${files} files, ${kills} kills, seed ${seed}, zero bombs of ${bomb} MiB; exit status ${status}"
  echo
  cat "${log}"
} > "${out}"
rm -f "${log}"
cat "${out}"
exit "${status}"
