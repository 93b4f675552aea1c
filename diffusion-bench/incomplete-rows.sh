#!/usr/bin/env bash
# Measures training on rows with missing cells (issue 14, item 1) and writes
# diffusion-bench/results/incomplete-rows.txt: on iris, breast_cancer and diabetes_raw (SEX left
# out), 30% of the training rows given 1 or 2 missing cells, fits on (a) the complete rows only,
# (b) every row by the trainer's stochastic EM, (c) the rows without gaps; held-out exact bound and
# imputation RMSE of each. See IncompleteRowsMeasurement.
#
#   diffusion-bench/incomplete-rows.sh [UPDATES] [SEEDS]     defaults 2000 updates per fit, 5 seeds (about 15 minutes)
#
# About 9 x SEEDS fits of the library's default network (roughly 10 to 30 s each on 2 shared
# cores). OPENBLAS_VERBOSE=2 makes the bundled OpenBLAS name its kernel, recorded at the end of
# the results; OPENBLAS_CORETYPE is left as the environment has it.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "${here}/.." && pwd)
updates="${1:-2000}"
seeds="${2:-5}"
if ! build=$(cd "${root}" && mvn -B -q -o -pl diffusion-bench -am package -DskipTests 2>&1); then
  echo "${build}"
  exit 1
fi
out="${here}/results/incomplete-rows.txt"
log="${here}/results/incomplete-rows.log"
cd "${root}"
OPENBLAS_VERBOSE=2 java -cp "${here}/target/benchmarks.jar" org.backstep.bench.IncompleteRowsMeasurement \
  diffusion-core/src/test/resources/data "${out}" "${updates}" "${seeds}" > "${log}" 2>&1 || { cat "${log}"; exit 1; }
kernel=$(grep -m1 -o 'Core: [A-Za-z0-9_]*' "${log}" || echo "Core: (not printed)")
echo "# bundled OpenBLAS kernel: ${kernel#Core: } (OPENBLAS_VERBOSE=2); git $(git rev-parse --short HEAD)$(git diff --quiet HEAD -- . ':!diffusion-bench/results' || echo ' (uncommitted changes)')" >> "${out}"
rm -f "${log}"
cat "${out}"
