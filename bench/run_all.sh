#!/usr/bin/env bash
# Runs every benchmark of issue 7 and collects the ratios and figures.
#
#   bench/run_all.sh [BUILD_DIR] [OUT_DIR]      (defaults: build, BUILD_DIR/bench-results)
#
# Each bench_* executable prints, after Google Benchmark's table, a summary of `RATIO ...` and
# `FIGURE ...` lines computed from timings taken in that same run; this script adds (e), the peak
# memory of `netfold solve --no-verify` on generated grids (GNU time's -v report) against the size
# of the factor (bench/factor_info), and the end-to-end time of the 10^6-node grid. Everything ends
# up in OUT_DIR: one .txt and one .json per executable, memory.txt, machine.txt, summary.txt, and
# baseline.json (every executable's JSON merged: one "context", all "benchmarks").
#
# Environment: NETFOLD_BENCH_TMP (scratch for generated files, default /tmp/netfold_bench),
# NETFOLD_BENCH_GRID_SIZES (bench_states (d): grid sizes with 100 capacitors, default "10000 100000"),
# BENCH_ONLY (space-separated subset of: solve sweep factor parse spsolve states worst_box diodes memory),
# BENCH_MEMORY_SIZES (grid sizes of (e), default "1000 10000 100000 1000000"),
# BENCH_ARGS (extra flags for every bench_* executable, e.g. --benchmark_filter=...).
# Needs /usr/bin/time (Debian package `time`) and /usr/bin/python3 with python3-scipy.
set -euo pipefail

here=$(cd "$(dirname "$0")" && pwd)
build=$(cd "${1:-$here/../build}" && pwd)
out=${2:-$build/bench-results}
mkdir -p "$out"
export NETFOLD_BENCH_TMP=${NETFOLD_BENCH_TMP:-/tmp/netfold_bench}
mkdir -p "$NETFOLD_BENCH_TMP"
only=${BENCH_ONLY:-solve sweep factor parse spsolve states worst_box diodes memory}
read -r -a extra <<< "${BENCH_ARGS:-}"

wants() { [[ " $only " == *" $1 "* ]]; }

for tool in /usr/bin/time /usr/bin/python3; do
  [[ -x $tool ]] || { echo "run_all.sh: $tool is missing (apt-get install time python3-scipy)" >&2; exit 2; }
done

{
  echo "date: $(date -u +%Y-%m-%dT%H:%M:%SZ)"
  echo "host: $(uname -srm)"
  lscpu | grep -E '^(Model name|CPU\(s\)|Thread|Core|Socket|L1d|L2|L3|Flags)' | sed 's/^Flags:.*avx512f.*/Flags: (avx2, avx512f present)/'
  grep -E '^(MemTotal|MemAvailable)' /proc/meminfo
  echo "compiler: $(c++ --version | head -1)"
  grep -E '^CMAKE_(BUILD_TYPE|CXX_FLAGS_RELEASE):' "$build/CMakeCache.txt" || true
  echo "blas: $(readlink -f /usr/lib/x86_64-linux-gnu/libblas.so.3 2>/dev/null || echo '?')"
  echo "libraries: $(dpkg-query -W -f='${Package} ${Version}; ' libcholmod3 libklu1 libbenchmark-dev python3-scipy libblas3 2>/dev/null || true)"
  echo "transparent hugepages: $(cat /sys/kernel/mm/transparent_hugepage/enabled 2>/dev/null || echo '?')"
  echo "load average at start: $(cut -d' ' -f1-3 /proc/loadavg)"
} > "$out/machine.txt"
cat "$out/machine.txt"

run_bench() {
  local name=$1
  shift
  echo "== bench_$name (load $(cut -d' ' -f1-3 /proc/loadavg))"
  "$build/bench/bench_$name" --benchmark_out="$out/bench_$name.json" --benchmark_out_format=json \
    --benchmark_color=false "${extra[@]}" "$@" | tee "$out/bench_$name.txt"
  echo "load average after bench_$name: $(cut -d' ' -f1-3 /proc/loadavg)" >> "$out/machine.txt"
}

for b in solve sweep factor parse spsolve states worst_box diodes; do
  if wants "$b"; then run_bench "$b"; fi
done

# (e) Peak memory of `netfold solve --no-verify` versus the factor's size, and the end-to-end time.
if wants memory; then
  echo "== memory (load $(cut -d' ' -f1-3 /proc/loadavg))"
  : > "$out/memory.txt"
  for n in ${BENCH_MEMORY_SIZES:-1000 10000 100000 1000000}; do
    f="$NETFOLD_BENCH_TMP/memory_grid_$n.nf"
    "$build/bench/gen_network" grid "$n" > "$f" 2>/dev/null
    info=$("$build/bench/factor_info" "$f")
    factor_bytes=$(awk '$1 == "factor_bytes" {print $2}' <<< "$info")
    file_bytes=$(awk '$1 == "file_bytes" {print $2}' <<< "$info")
    unknowns=$(awk '$1 == "unknowns" {print $2}' <<< "$info")
    runs=3
    rss_all="" wall_all="" cpu_all=""
    for ((r = 0; r < runs; ++r)); do
      /usr/bin/time -v "$build/netfold" solve --no-verify "$f" > /dev/null 2> "$out/time_grid_$n.txt"
      rss=$(awk -F': ' '/Maximum resident set size/ {print $2}' "$out/time_grid_$n.txt")
      wall=$(awk -F': ' '/Elapsed \(wall clock\)/ {print $2}' "$out/time_grid_$n.txt" |
        awk -F: '{ s = 0; for (i = 1; i <= NF; ++i) s = s * 60 + $i; print s }')
      user=$(awk -F': ' '/User time/ {print $2}' "$out/time_grid_$n.txt")
      sys=$(awk -F': ' '/System time/ {print $2}' "$out/time_grid_$n.txt")
      rss_all+="$rss " wall_all+="$wall " cpu_all+="$(awk -v u="$user" -v s="$sys" 'BEGIN {print u + s}') "
    done
    median() { tr ' ' '\n' <<< "$1" | grep . | sort -g | awk '{a[NR] = $1} END {print a[int((NR + 1) / 2)]}'; }
    rss=$(median "$rss_all") wall=$(median "$wall_all") cpu=$(median "$cpu_all")
    {
      echo "grid $n nodes: $unknowns unknowns, file $file_bytes bytes, factor $factor_bytes bytes"
      echo "  peak RSS (KiB) over $runs runs: $rss_all; wall (s): $wall_all; user+sys (s): $cpu_all"
      awk -v n="$n" -v rss="$rss" -v fb="$factor_bytes" -v file="$file_bytes" -v wall="$wall" -v cpu="$cpu" 'BEGIN {
        printf "RATIO (e) grid %d nodes: peak RSS / factor size: %.3gx  (%.4g MiB / %.4g MiB; the file is %.4g MiB)  [netfold solve --no-verify, /usr/bin/time -v, median of 3]\n",
          n, rss * 1024 / fb, rss / 1024, fb / 1048576, file / 1048576
        if (n == 1000000) {
          printf "FIGURE 10^6-node grid end to end: %.4g s wall, %.4g s user+sys  target <= 10 s: %s  [netfold solve --no-verify]\n",
            wall, cpu, (wall <= 10 ? "MET" : "NOT MET")
          printf "FIGURE 10^6-node grid peak memory: %.4g GiB  target <= 4 GiB: %s  [maximum resident set size]\n",
            rss / 1048576, (rss <= 4 * 1048576 ? "MET" : "NOT MET")
        }
      }'
    } | tee -a "$out/memory.txt"
  done
fi

grep -h -E '^(RATIO|FIGURE|NOTE)' "$out"/bench_*.txt "$out/memory.txt" 2>/dev/null > "$out/summary.txt" || true
echo "load average at end: $(cut -d' ' -f1-3 /proc/loadavg)" >> "$out/machine.txt"

/usr/bin/python3 - "$out" <<'EOF'
import glob, json, os, sys
out = sys.argv[1]
merged = {"context": None, "benchmarks": []}
for path in sorted(glob.glob(os.path.join(out, "bench_*.json"))):
    with open(path) as f:
        data = json.load(f)
    exe = os.path.basename(path)[:-5]
    if merged["context"] is None:
        merged["context"] = data.get("context", {})
    merged["context"].setdefault("executables", []).append(exe)
    for b in data.get("benchmarks", []):
        b["executable"] = exe
        merged["benchmarks"].append(b)
with open(os.path.join(out, "baseline.json"), "w") as f:
    json.dump(merged, f, indent=1)
EOF

echo
echo "==== every ratio and figure ($out/summary.txt) ===="
cat "$out/summary.txt"
