#!/usr/bin/env bash
# Submits a PathBench render as a Slurm job array of N shards and a merge job that runs once all
# of them succeed:
#   tools/slurm/submit.sh N SCENE OUT_DIR [render options…]     e.g. --spp 4096 --seed 1
# prints "array JOBID" and "merge JOBID"; the result is OUT_DIR/merged.exr with its sidecar.
# PATHBENCH names the executable (default: pathbench on PATH; it must be reachable from every node,
# and so must SCENE and OUT_DIR). Extra sbatch options go in SBATCH_ARGS, e.g. "--partition=long
# --cpus-per-task=8 --time=12:00:00"; MERGE_WAIT=1 makes this script wait for the merge (sbatch --wait).
set -euo pipefail
if [ $# -lt 3 ]; then
  echo "usage: $0 N SCENE OUT_DIR [render options...]" >&2
  exit 2
fi
shards=$1 scene=$(realpath "$2") out=$(realpath -m "$3")
shift 3
case $shards in ''|*[!0-9]*|0) echo "$0: N must be a positive integer, got '$shards'" >&2; exit 2 ;; esac
here=$(cd "$(dirname "$0")" && pwd)
mkdir -p "$out"
read -r -a extra <<< "${SBATCH_ARGS:-}"
array=$(sbatch --parsable "${extra[@]}" --array="0-$((shards - 1))" --output="$out/shard-%a.log" \
  --export=ALL "$here/shard.sbatch" "$shards" "$scene" "$out" "$@")
array=${array%%;*}
echo "array $array"
wait=()
[ "${MERGE_WAIT:-0}" = 1 ] && wait=(--wait)
merge=$(sbatch --parsable "${extra[@]}" "${wait[@]}" --dependency="afterok:$array" --output="$out/merge.log" \
  --export=ALL "$here/merge.sbatch" "$shards" "$out")
echo "merge ${merge%%;*}"
