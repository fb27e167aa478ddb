#!/usr/bin/env bash
# Measures the figures of the README's overnight section with a Release build and prints them as
# JSON lines (one object per figure; seconds are wall time on this machine, two cores here):
#   shard_throughput   1, 2 and 4 concurrent shard processes (one thread each) against one process
#                      with all cores, fence-yard at 320x200, 128 spp
#   checkpoint         one checkpoint write of a 1024x1024 film, and its share of render time at the
#                      default 10-minute interval
#   accumulation_size  bytes of a 1024x1024 accumulation file (16 spp), per megapixel
#   merge              time to merge 16 shards of 1024x1024 (1 spp each)
# Run it on an otherwise idle machine: flock /tmp/pathbench-build.lock tools/overnight-figures.sh
set -euo pipefail
cd "$(dirname "$0")/.."
dotnet build -c Release src/PathBench.Cli -v q -nologo >/dev/null
pb="$PWD/src/PathBench.Cli/bin/Release/net10.0/pathbench"
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
cores=$(nproc)
now() { date +%s%N; }
ms() { echo $(( ($(now) - $1) / 1000000 )); }

scene=scenes/fence-yard.yaml
spp=128
pixels=$((320 * 200))
t=$(now)
"$pb" render "$scene" --spp $spp --threads "$cores" --quiet --out "$work/one.exr" >/dev/null
base=$(ms "$t")
echo "{\"figure\": \"shard_throughput\", \"processes\": 0, \"threads_each\": $cores, \"wall_ms\": $base, \"samples_per_second\": $((pixels * spp * 1000 / base))}"
for n in 1 2 4; do
  t=$(now)
  for ((i = 0; i < n; i++)); do
    "$pb" render "$scene" --spp $spp --shard "$i/$n" --threads 1 --quiet --out "$work/s$n-$i.exr" >/dev/null &
  done
  wait
  w=$(ms "$t")
  "$pb" merge "$work"/s$n-*.accum --out "$work/m$n.exr" >/dev/null
  same=$(cmp -s "$work/one.exr" "$work/m$n.exr" && echo true || echo false)
  echo "{\"figure\": \"shard_throughput\", \"processes\": $n, \"threads_each\": 1, \"wall_ms\": $w, \"samples_per_second\": $((pixels * spp * 1000 / w)), \"relative_to_one_process\": $(awk "BEGIN { printf \"%.3f\", $base / $w }"), \"merged_equals_single\": $same}"
done

big="$work/big.yaml"
sed 's/resolution: \[320, 200\]/resolution: [1024, 1024]/' "$scene" >"$big"
t=$(now)
"$pb" render "$big" --spp 16 --threads "$cores" --quiet --checkpoint "$work/big.accum" --out "$work/big.exr" >/dev/null
render_ms=$(ms "$t")
cs=$(python3 -c "import json,sys; j=json.load(open(sys.argv[1])); print(j['checkpoint_seconds'] / max(1, j['checkpoints_written']))" "$work/big.json")
echo "{\"figure\": \"checkpoint\", \"width\": 1024, \"height\": 1024, \"seconds_per_write\": $cs, \"share_at_10_min\": $(awk "BEGIN { printf \"%.6f\", $cs / 600 }"), \"render_16spp_ms\": $render_ms}"
size=$(stat -c %s "$work/big.accum")
echo "{\"figure\": \"accumulation_size\", \"width\": 1024, \"height\": 1024, \"spp\": 16, \"bytes\": $size, \"bytes_per_megapixel\": $((size * 1000000 / (1024 * 1024))), \"uncompressed_bytes_per_megapixel\": 116000000}"

for ((i = 0; i < 16; i++)); do
  "$pb" render "$big" --spp 16 --shard "$i/16" --threads "$cores" --quiet --out "$work/shard$i.exr" >/dev/null
done
t=$(now)
"$pb" merge "$work"/shard*.accum --out "$work/bm.exr" >/dev/null
merge_ms=$(ms "$t")
same=$(cmp -s "$work/big.exr" "$work/bm.exr" && echo true || echo false)
echo "{\"figure\": \"merge\", \"shards\": 16, \"width\": 1024, \"height\": 1024, \"wall_ms\": $merge_ms, \"merged_equals_single\": $same}"
