#!/usr/bin/env bash
# Prints the machine's FP32 peak in GFLOP/s and how it was derived, tab-separated, from lscpu:
#   peak = physical cores x clock x FP32 FLOPs per cycle per core,
# FLOPs per cycle = FMA units x lanes x 2 (a fused multiply-add is 2 FLOPs). With AVX2 and FMA
# (AMD Zen 2/3, Intel Haswell to Ice Lake client) there are 2 FMA units of 8 FP32 lanes: 32 FLOPs
# per cycle. With AVX-512 on Intel server parts it is 64; AMD Zen 4 runs AVX-512 at the same 32.
# The clock is the base clock (lscpu's "CPU max MHz" if it reports one, else the current "cpu MHz"
# of /proc/cpuinfo, which under a hypervisor is the nominal clock); turbo clocks can exceed it.
set -euo pipefail
cores=$(lscpu -p=CORE,SOCKET | grep -v '^#' | sort -u | wc -l)
mhz=$(lscpu | awk -F: '/^CPU max MHz/ {gsub(/ /, "", $2); print $2; exit}')
source="lscpu CPU max MHz"
if [ -z "${mhz}" ]; then
  mhz=$(awk -F: '/^cpu MHz/ {gsub(/ /, "", $2); print $2; exit}' /proc/cpuinfo)
  source="/proc/cpuinfo cpu MHz (lscpu reports no clock)"
fi
flags=$(lscpu | awk -F: '/^Flags/ {print $2}')
vendor=$(lscpu | awk -F: '/^Vendor ID/ {gsub(/ /, "", $2); print $2}')
model=$(lscpu | awk -F: '/^Model name/ {sub(/^ +/, "", $2); print $2}')
if [[ " ${flags} " == *" avx512f "* && "${vendor}" == "GenuineIntel" ]]; then
  per_cycle=64; why="AVX-512: 2 FMA units x 16 FP32 lanes x 2"
elif [[ " ${flags} " == *" avx2 "* && " ${flags} " == *" fma "* ]]; then
  per_cycle=32; why="AVX2+FMA, no AVX-512 used: 2 FMA units x 8 FP32 lanes x 2"
else
  per_cycle=16; why="AVX without FMA: 8 FP32 lanes x (1 add + 1 multiply)"
fi
peak=$(awk -v c="${cores}" -v m="${mhz}" -v f="${per_cycle}" 'BEGIN {printf "%.1f", c * m / 1000 * f}')
printf '%s\t%s core(s) of %s x %.3f GHz (%s) x %s FLOPs/cycle (%s)\n' "${peak}" "${cores}" "${model}" \
  "$(awk -v m="${mhz}" 'BEGIN {print m / 1000}')" "${source}" "${per_cycle}" "${why}"
