#!/usr/bin/env bash
# Fits the classical models of Backstep's quality benchmark on the fixed split of the open tables
# (src/main/python/quality_baselines.py says what each model is and how its settings are chosen):
# densities (nats per record, standardized space), imputation (RMSE, 90% interval coverage),
# anomaly ranks (AUROC, recall) and seconds, for iris, breast_cancer, diabetes_raw without SEX and
# digits_binary.
#
# Python: Debian's /usr/bin/python3 with python3-sklearn (scikit-learn 1.2.1 on Debian 12). If
# `import sklearn` fails, the script installs python3-sklearn with apt-get (after apt-get update)
# and exits with status 3 if that is impossible.
#
# Data: the four tables are read from diffusion-core/src/test/resources/data (one copy in the
# project), the label files of the anomaly checks from diffusion-bench/data.
#
# Output: printed, and kept in results/quality-baselines.json (every figure, and the hidden cells
# of the imputation check, which the Java side reads), results/quality-baselines.csv (the figures
# as rows) and results/quality-baselines.txt (this script's log, with the settings it ran with).
# Takes a few minutes on two cores.
set -uo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "${here}/.." && pwd)
results="${here}/results"
mkdir -p "${results}"
exec > >(tee "${results}/quality-baselines.txt") 2>&1

PY=/usr/bin/python3
echo "Classical baselines for the quality benchmark, $(date -u '+%Y-%m-%d %H:%M UTC'), git $(cd "${root}" && git rev-parse --short HEAD)"
echo "kernel: $(uname -srvm)"
echo "load average (1, 5, 15 min) at start: $(cut -d' ' -f1-3 /proc/loadavg) on $(nproc) CPUs"
echo "OPENBLAS_CORETYPE: ${OPENBLAS_CORETYPE:-(not set)}; OPENBLAS_NUM_THREADS: ${OPENBLAS_NUM_THREADS:-(not set)}; OMP_NUM_THREADS: ${OMP_NUM_THREADS:-(not set)}"

if ! "${PY}" -c 'import sklearn' >/dev/null 2>&1; then
  echo "${PY} -c 'import sklearn' fails: installing Debian's python3-sklearn with apt-get"
  export DEBIAN_FRONTEND=noninteractive
  if ! apt-get update; then
    echo "BLOCKER: apt-get update failed (exit status above); cannot install python3-sklearn"
    exit 3
  fi
  if ! apt-get install -y --no-install-recommends python3-sklearn; then
    echo "BLOCKER: apt-get install python3-sklearn failed (error above)"
    exit 3
  fi
  if ! "${PY}" -c 'import sklearn' >/dev/null 2>&1; then
    echo "BLOCKER: python3-sklearn is installed but 'import sklearn' still fails:"
    "${PY}" -c 'import sklearn' || true
    exit 3
  fi
fi
"${PY}" - <<'EOF'
import platform, numpy, scipy, sklearn
print(f"python {platform.python_version()} ({platform.python_implementation()}), numpy {numpy.__version__}, "
      f"scipy {scipy.__version__}, scikit-learn {sklearn.__version__}")
try:
    from threadpoolctl import threadpool_info
    for p in threadpool_info():
        print(f"  thread pool: {p.get('internal_api')} {p.get('version')} {p.get('num_threads')} threads, "
              f"core {p.get('architecture')}")
except Exception as e:  # threadpoolctl is a dependency of python3-sklearn; say so if it is not there
    print(f"  thread pools: not listed ({e})")
EOF
echo

json="${results}/quality-baselines.json"
tmp="${json}.tmp"
start=$(date +%s)
if ! "${PY}" "${here}/src/main/python/quality_baselines.py" \
      --data "${root}/diffusion-core/src/test/resources/data" --labels "${here}/data" \
      --csv "${results}/quality-baselines.csv.tmp" > "${tmp}"; then
  rm -f "${tmp}" "${results}/quality-baselines.csv.tmp"
  echo "quality_baselines.py failed"
  exit 1
fi
mv "${tmp}" "${json}"
mv "${results}/quality-baselines.csv.tmp" "${results}/quality-baselines.csv"
echo
echo "wrote ${json#${root}/} and results/quality-baselines.csv in $(( $(date +%s) - start )) s"
echo "load average (1, 5, 15 min) at end: $(cut -d' ' -f1-3 /proc/loadavg)"
