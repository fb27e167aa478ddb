#!/usr/bin/env bash
# The whole test suite on a fresh machine: installs the reference tools the live cross-checks
# compare against (Debian packages, apt as root; otherwise prints the apt line and exits 2), runs
# `dotnet test PathBench.sln -c Release`, and ends with the line "N passed, N failed" summed over every test
# assembly. Exit status: dotnet test's, 1 when the install fails, 2 when it needs root.
set -uo pipefail
cd "$(dirname "$0")/.."

# What each is for: /usr/bin/python3 with scipy.stats.qmc (Sobol, Halton, L2-star), scikit-image
# (SSIM, PSNR), numpy, matplotlib (the viridis table), PIL (PNG decoding), lxml (libxml2's XML Schema
# validator, for the JUnit report) and OpenImageIO (decodes
# every OpenEXR pixel through the OpenEXR library); the OpenEXR command-line tools (exrheader and
# the rewriting tools); the fonts and fontconfig SkiaSharp's native library needs to draw labels; and
# chromium, the browser the study report's tests drive headless (Microsoft.Playwright, pointed at it).
# The sampling tests and the rendering pins run a second time without AVX2, and on an AVX-512 machine a third time in
# the 512-bit lane form (see below). After the .NET tests, the
# one-node Slurm test (tools/slurm/local-cluster-test.sh, which installs
# slurm-wlm and munge itself) counts as one more test: passed, or failed when the array's merged
# image is wrong or a job fails. A machine that cannot host the daemons (not root, packages that do
# not install, a node that never comes up) is reported with the reason and counted in neither.
packages=(python3 python3-numpy python3-scipy python3-skimage python3-matplotlib python3-pil python3-openimageio python3-lxml
          openexr fonts-dejavu-core libfontconfig1 chromium)

source tools/require-debian.sh
require_debian_packages tools/test.sh "${packages[@]}"
case $? in
  0) ;;
  2) exit 2 ;;
  *) echo "0 passed, 1 failed"; exit 1 ;;
esac

if ! command -v dotnet >/dev/null; then
  echo "tools/test.sh: the .NET 10 SDK (dotnet) is not on PATH" >&2
  echo "0 passed, 1 failed"
  exit 1
fi

log=$(mktemp)
trap 'rm -f "$log"' EXIT
# Release: the configuration users run (the JIT optimises the SIMD and inlined paths only there), and
# the statistical tests run two to three times faster than in Debug.
dotnet test PathBench.sln -c Release 2>&1 | tee "$log"
status=${PIPESTATUS[0]}

# The paths a machine without AVX2 takes (ARM64, older x86): the sampling tests and the rendering pins, determinism
# and sample-cache tests again with the runtime's AVX2 turned off (DOTNET_EnableAVX2=0), so every batch's fallback is held to the same
# bits; tests that need AVX2 skip themselves. Their counts join the totals below.
if [ "$status" -eq 0 ]; then
  DOTNET_EnableAVX2=0 dotnet test tests/PathBench.Sampling.Tests -c Release --no-build 2>&1 | tee -a "$log"
  status=${PIPESTATUS[0]}
fi
if [ "$status" -eq 0 ]; then
  DOTNET_EnableAVX2=0 dotnet test tests/PathBench.Rendering.Tests -c Release --no-build \
    --filter "FullyQualifiedName~SamplerPathHashTests|FullyQualifiedName~DeterminismTests|FullyQualifiedName~SampleCacheTests" 2>&1 | tee -a "$log"
  status=${PIPESTATUS[0]}
fi

# The 512-bit lane forms: the generators run the 256-bit ones by default on every machine (faster in the renderer's
# pattern on the AVX-512 machine measured, PathBench.Sampling.Generators.SamplerLanes), so on a machine with AVX-512 the
# same tests run again with PATHBENCH_SAMPLER_LANES=wide, which switches every automatic 512-bit choice on. Without
# AVX-512 that setting falls back to the 256-bit form and the pass would repeat the first; it is left out, with the reason.
if [ "$status" -eq 0 ]; then
  if grep -qw avx512f /proc/cpuinfo; then
    PATHBENCH_SAMPLER_LANES=wide dotnet test tests/PathBench.Sampling.Tests -c Release --no-build 2>&1 | tee -a "$log"
    status=${PIPESTATUS[0]}
    if [ "$status" -eq 0 ]; then
      PATHBENCH_SAMPLER_LANES=wide dotnet test tests/PathBench.Rendering.Tests -c Release --no-build \
        --filter "FullyQualifiedName~SamplerPathHashTests|FullyQualifiedName~DeterminismTests|FullyQualifiedName~SampleCacheTests" 2>&1 | tee -a "$log"
      status=${PIPESTATUS[0]}
    fi
  else
    echo "tools/test.sh: no AVX-512 on this machine: the pass with PATHBENCH_SAMPLER_LANES=wide is left out (it would run the 256-bit forms again)"
  fi
fi
# dotnet prints one summary per assembly: "Passed!  - Failed: 0, Passed: 126, Skipped: 0, ..."
passed=$(grep -oE 'Passed: +[0-9]+' "$log" | awk '{ s += $2 } END { print s + 0 }')
failed=$(grep -oE 'Failed: +[0-9]+' "$log" | awk '{ s += $2 } END { print s + 0 }')
if [ "$status" -ne 0 ] && [ "$failed" -eq 0 ]; then
  failed=1 # a build error or crashed test host: no summary to count, but not a pass
fi

if [ "$status" -eq 0 ]; then
  tools/slurm/local-cluster-test.sh
  case $? in
    0) passed=$((passed + 1)) ;;
    2|3) echo "tools/test.sh: the one-node Slurm test could not run on this machine (reason above); not counted" ;;
    *) failed=$((failed + 1)); status=1 ;;
  esac
fi

echo "$passed passed, $failed failed"
exit "$status"
