#!/usr/bin/env bash
# Benchmark (not a test): the demo network for 10 s of model time.
# Prints wall time, synaptic events per second and peak memory (/usr/bin/time -v).
# Usage: experiments/bench/run_demo.sh [BUILD_DIR]   (default: build)
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
build=${1:-$root/build}
out=$(mktemp -d)
trap 'rm -rf "$out"' EXIT
[ -x /usr/bin/time ] || { echo "needs /usr/bin/time (apt-get install -y time)"; exit 2; }
echo "machine: $(nproc) cores, $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2 | sed 's/^ //')"
echo "command: nvsyn run models/demo_network.toml --duration \"10 s\""
/usr/bin/time -v "$build/nvsyn" run "$root/models/demo_network.toml" -o "$out/demo.h5" --duration "10 s" \
  > "$out/stdout" 2> "$out/time"
cat "$out/stdout"
wall=$(grep "Elapsed (wall clock)" "$out/time" | awk '{print $NF}')
rss=$(grep "Maximum resident set size" "$out/time" | awk '{print $NF}')
events=$(grep -o '[0-9]* synaptic events' "$out/stdout" | awk '{print $1}')
secs=$(echo "$wall" | awk -F: '{ if (NF==3) print $1*3600+$2*60+$3; else print $1*60+$2 }')
echo "wall time: ${secs} s"
echo "synaptic events per second: $(awk -v e="$events" -v s="$secs" 'BEGIN { printf "%.3g", e / s }')"
echo "peak memory: $(awk -v k="$rss" 'BEGIN { printf "%.1f MiB", k / 1024 }')"
