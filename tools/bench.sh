#!/usr/bin/env bash
# The BenchmarkDotNet project in Release, with what its comparisons need: OpenImageIO's Python
# module (writes the OpenEXR files the decode benchmarks read) and oiiotool (Debian
# openimageio-tools, timed on the same files in the same run). Arguments go to BenchmarkDotNet,
# e.g. tools/bench.sh --filter '*ExrDecode*'. Exit status 2 when packages are missing and this
# is not root (the apt line is printed), 1 when apt fails.
set -uo pipefail
cd "$(dirname "$0")/.."

source tools/require-debian.sh
require_debian_packages tools/bench.sh python3 python3-numpy python3-openimageio openimageio-tools
status=$?
[ "$status" -eq 0 ] || exit "$status"

exec dotnet run -c Release --project tools/PathBench.Benchmarks -- "$@"
