#!/usr/bin/env bash
# Benchmark (not a test): pulses and noisy reads per second for every device preset
# in models/devices, on arrays of 10^6 devices visited in random order, and bytes
# per device and per synapse (default layout). Prints the machine, the command and
# the table of experiments/bench/device_throughput.cpp.
# Usage: experiments/bench/run_devices.sh [BUILD_DIR]   (default: build)
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
build=${1:-$root/build}
bench="$build/experiments/nvsyn_bench_devices"
[ -x "$bench" ] || { echo "build the benchmark first: cmake --build $build --target nvsyn_bench_devices"; exit 2; }
echo "date: $(date -u +%Y-%m-%dT%H:%M:%SZ)"
echo "machine: $(nproc) cores, $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2 | sed 's/^ //')"
echo "build type: $(grep -m1 '^CMAKE_BUILD_TYPE' "$build/CMakeCache.txt" | cut -d= -f2)"
echo "command: nvsyn_bench_devices --devices 1000000 --operations 2000000 --repeats 3 models/devices"
"$bench" --devices 1000000 --operations 2000000 --repeats 3 "$root/models/devices"
