#!/usr/bin/env bash
# Measures the heap that CSV reading needs against the table's size (CsvReadMemory): generates two
# invented numeric CSV files (ROWS and 2 x ROWS records), and for each way of reading finds the
# smallest -Xmx at which a fresh JVM reads the file. Writes diffusion-bench/results/csv-read-memory.txt.
#
#   diffusion-bench/csv-memory.sh [ROWS [COLUMNS]]     default 1000000 rows, 8 columns (about 15 minutes)
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "${here}/.." && pwd)
mkdir -p "${here}/results"
if ! build=$(cd "${root}" && mvn -B -q -o -pl diffusion-bench -am package -DskipTests 2>&1); then
  echo "${build}"
  exit 1
fi
label="git $(cd "${root}" && git rev-parse --short HEAD)$(cd "${root}" && git diff --quiet HEAD -- . ':!diffusion-bench/results' || echo ' (uncommitted changes)'); kernel $(uname -sr)"
echo "${label}"
java -cp "${here}/target/benchmarks.jar" org.backstep.bench.CsvReadMemory "${1:-1000000}" "${2:-8}" \
  "${here}/results/csv-read-memory.txt" "${label}"
