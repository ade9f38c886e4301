#!/usr/bin/env bash
# Installs the configured build tree (cmake --install) into a scratch prefix, checks the
# installed files, then configures, builds and runs tests/consumer against it with
# find_package(disc); with the Python module built, imports the installed package.
# Usage: check.sh <build-dir> [ON: the Python module is built]
set -euo pipefail
build="$1"
here="$(cd "$(dirname "$0")" && pwd)"
work="$(mktemp -d)"
trap 'rm -rf "$work"' EXIT
cmake --install "$build" --prefix "$work/prefix" >/dev/null
for f in include/disc/disc.hpp include/disc/version.hpp bin/disc share/disc/plate-types.json; do
  [ -s "$work/prefix/$f" ] || { echo "not installed: $f"; exit 1; }
done
libdir=$(dirname "$(find "$work/prefix" -name discConfig.cmake)")
[ -f "$libdir/discTargets.cmake" ] || { echo "no discTargets.cmake beside discConfig.cmake"; exit 1; }
ls "$libdir"/../../libdisc.* >/dev/null || { echo "library not installed"; exit 1; }
"$work/prefix/bin/disc" --version
# The Python package with its example netlists, imported from the prefix in another folder.
py="$work/prefix/lib/python3/dist-packages"
if [ "${2:-OFF}" = ON ]; then   # the Python module is built: it must be installed
  [ -f "$py/disc/__init__.py" ] || { echo "not installed: the disc Python package in $py"; exit 1; }
  (cd "$work" && PYTHONPATH="$py" /usr/bin/python3 - <<'PY'
import disc
example = disc.example_path("table-radio-half-wave.disc")
assert "prefix" in str(example) and example.is_file(), example
results, report = disc.load(example).run()
assert report["output"]["mean_V"] > 0
print("installed Python package and examples work:", example)
PY
  )
fi
generator=()
command -v ninja >/dev/null && generator=(-G Ninja)
cmake -S "$here" -B "$work/build" "${generator[@]}" -DCMAKE_BUILD_TYPE=Release \
  -DCMAKE_PREFIX_PATH="$work/prefix" >/dev/null
cmake --build "$work/build" >/dev/null
"$work/build/consumer"
