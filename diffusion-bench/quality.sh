#!/usr/bin/env bash
# Backstep's quality benchmark: fits Backstep at its defaults on the fixed split of iris,
# breast_cancer, diabetes_raw without SEX and digits_binary (SOURCES.md: row i is a test row when
# i % 5 == 0), and prints one table beside the classical models of quality-baselines.sh: held-out
# density (nats per record, standardized space), imputation RMSE and 90% interval coverage, anomaly
# ranks (AUROC, recall) and fit seconds. QualityBenchmark's Javadoc says how each figure is made.
#
#   diffusion-bench/quality.sh                       defaults, fit seed 1 (about 10 minutes on 2 cores)
#   diffusion-bench/quality.sh --levers --seeds 1,2,3 --seeds:breast_cancer 1,2 --seeds:digits_binary 1,2
#                                                    the table transforms too (Lever), several fit seeds
#   further options: --tables iris,breast_cancer  --bound-seeds 5  --weight-decay 1e-4 (instead of Defaults.WEIGHT_DECAY)
#
# Needs results/quality-baselines.json (run quality-baselines.sh first; it is committed).
# Output: printed, and kept in results/quality.txt, with one line per fit in results/quality-runs.csv.
# The machines are shared: the table records the load average at the start and the end.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "${here}/.." && pwd)
results="${here}/results"
baselines="${results}/quality-baselines.json"
[ -f "${baselines}" ] || { echo "missing ${baselines}: run diffusion-bench/quality-baselines.sh first"; exit 1; }

echo "kernel: $(uname -srvm); $(nproc) CPUs; load average $(cut -d' ' -f1-3 /proc/loadavg)" >&2
echo "OPENBLAS_CORETYPE: ${OPENBLAS_CORETYPE:-(not set)}" >&2
if ! build=$(cd "${root}" && mvn -B -q -o -pl diffusion-bench -am package -DskipTests 2>&1); then
  echo "${build}"
  exit 1
fi
git=$(cd "${root}" && git rev-parse --short HEAD)$(cd "${root}" && git diff --quiet HEAD -- . ':!diffusion-bench/results' || echo '+uncommitted')
java -cp "${here}/target/benchmarks.jar" org.backstep.bench.quality.QualityBenchmark \
  --baselines "${baselines}" --data "${root}/diffusion-core/src/test/resources/data" --labels "${here}/data" \
  --out "${results}/quality.txt" --runs "${results}/quality-runs.csv" --git "${git}" "$@"
