#!/usr/bin/env bash
# Benchmark (not a test): the demo network for 10 s of model time, three ways:
#   static       models/demo_network.toml as it is
#   stdp_ideal   + pair STDP on the recurrent excitatory pathway, floating-point weights
#   stdp_pcm     + the same rule with the weights in phase-change differential pairs
# Prints wall time, synaptic events per second and plastic updates per second.
# Usage: experiments/bench/run_plastic.sh [BUILD_DIR]   (default: build)
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
build=${1:-$root/build}
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT

# The rule and the device are shared with run_suite.py (experiments/bench/fragments).
rule="$here/fragments/pair_stdp_exc_exc.toml"
device="$here/fragments/phase_change_exc_exc.toml"
cp "$root/models/demo_network.toml" "$work/static.toml"
cat "$root/models/demo_network.toml" "$rule" > "$work/stdp_ideal.toml"
cat "$root/models/demo_network.toml" "$rule" "$device" > "$work/stdp_pcm.toml"
# Presets are found by name relative to nvsyn's models/devices.
echo "machine: $(nproc) cores, $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2 | sed 's/^ //')"
printf '%-12s %10s %16s %14s %12s\n' variant wall_s events_per_s updates_per_s peak_MiB
for v in static stdp_ideal stdp_pcm; do
  /usr/bin/time -v "$build/nvsyn" run "$work/$v.toml" -o "$work/$v.h5" --duration "10 s" --quiet \
    > "$work/$v.out" 2> "$work/$v.time"
  wall=$(grep "Elapsed (wall clock)" "$work/$v.time" | awk '{print $NF}' | awk -F: '{ if (NF==3) print $1*3600+$2*60+$3; else print $1*60+$2 }')
  rss=$(grep "Maximum resident set size" "$work/$v.time" | awk '{print $NF}')
  events=$(grep -o '[0-9]* synaptic events' "$work/$v.out" | awk '{print $1}')
  updates=$(/usr/bin/python3 -c "
import h5py, sys
with h5py.File('$work/$v.h5') as f:
    print(int(f['pathways/exc_exc'].attrs.get('updates', 0)))")
  printf '%-12s %10.2f %16.3g %14.3g %12.1f\n' "$v" "$wall" "$(awk -v e="$events" -v s="$wall" 'BEGIN{print e/s}')" \
    "$(awk -v u="$updates" -v s="$wall" 'BEGIN{print u/s}')" "$(awk -v k="$rss" 'BEGIN{print k/1024}')"
done
