#!/usr/bin/env bash
# Mutation check: breaks one device law, one integrator coefficient and one report formula on
# purpose, each in turn, in a scratch copy of the tree, and shows that the C++ suite goes red
# every time (and is green before). Run by hand, not in CI (it rebuilds three times):
#
#   bash tests/mutation_check.sh [scratch-dir]      # default: a fresh mktemp -d, removed after
#
# Each mutation names the file, the exact text it replaces and the replacement. When a
# refactoring moves that text the script stops and says so: update the mutation beside it.
set -euo pipefail
root="$(cd "$(dirname "$0")/.." && pwd)"
scratch="${1:-}"
keep=1
if [ -z "$scratch" ]; then
  scratch="$(mktemp -d)"
  keep=0
fi
[ "$keep" -eq 1 ] || trap 'rm -rf "$scratch"' EXIT
jobs="${JOBS:-2}"

mutations=(
  # file | text | replacement | what it breaks
  "libdisc/src/plate/plate_model.cpp|const double nvt = k.n * constants::thermalVoltage(T);|const double nvt = 1.05 * k.n * constants::thermalVoltage(T);|device law: the plate's forward exponential 5 % too soft"
  "libdisc/src/engine/integrators.cpp|c.a0 = 2.0 / h;|c.a0 = 2.02 / h;|integrator: trapezoidal a0 1 % off"
  "libdisc/src/analysis/waveform_measures.cpp|s += (da * da + da * db + db * db) * (b - a) / 3.0;|s += (da * da + db * db) * (b - a) / 3.0;|report formula: ripple rms of a segment without its cross term"
)

echo "copying the tree (tracked files as they are now) to $scratch/src"
mkdir -p "$scratch/src"
(cd "$root" && git ls-files -z | tar --null -T - -cf -) | tar -xf - -C "$scratch/src"

launcher=()
command -v ccache >/dev/null && launcher=(-DCMAKE_CXX_COMPILER_LAUNCHER=ccache)
export CCACHE_BASEDIR="$scratch"
cmake -S "$scratch/src" -B "$scratch/build" -G Ninja -DCMAKE_BUILD_TYPE=Release \
  -DDISC_BUILD_PYTHON=OFF -DDISC_BUILD_BENCHMARKS=OFF -DDISC_INSTALL=OFF "${launcher[@]}" >/dev/null

run_suite() {  # the C++ test cases and the command-line checks; 0 when all pass
  cmake --build "$scratch/build" -j "$jobs" >/dev/null
  (cd "$scratch/build" && ctest -j "$jobs" -E "python" --timeout 600 >"$scratch/ctest.log" 2>&1)
}

echo "baseline: the unmutated suite must pass"
if ! run_suite; then
  tail -n 30 "$scratch/ctest.log"
  echo "the unmutated suite fails: fix that first"
  exit 1
fi
tail -n 3 "$scratch/ctest.log"

caught=0
for m in "${mutations[@]}"; do
  IFS='|' read -r file from to what <<<"$m"
  target="$scratch/src/$file"
  if [ "$(grep -cF -- "$from" "$target")" != 1 ]; then
    echo "MUTATION STALE: '$from' does not occur exactly once in $file"
    exit 2
  fi
  cp "$target" "$target.orig"
  FROM="$from" TO="$to" perl -0pi -e 's/\Q$ENV{FROM}\E/$ENV{TO}/' "$target"
  echo
  echo "mutation: $what ($file)"
  if run_suite; then
    echo "  NOT CAUGHT: the suite stayed green"
  else
    caught=$((caught + 1))
    echo "  caught: $(grep -c 'Failed\|\*\*\*Timeout\|\*\*\*Exception' "$scratch/ctest.log") failing test(s), e.g."
    grep -E 'Failed|\*\*\*Timeout|\*\*\*Exception' "$scratch/ctest.log" | grep -v '^[0-9]*% tests' | head -n 5 |
      sed 's/^/    /'
  fi
  mv "$target.orig" "$target"
done

echo
echo "$caught of ${#mutations[@]} mutations caught"
[ "$caught" -eq "${#mutations[@]}" ]
