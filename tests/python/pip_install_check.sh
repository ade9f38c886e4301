#!/usr/bin/env bash
# Installs the package offline into a fresh venv with Debian's tools, as docs/python.md says,
# reusing the configured build tree, then imports it from elsewhere and runs a circuit.
set -euo pipefail
build="$1"
src="$(cd "$(dirname "$0")/../../bindings/python" && pwd)"
work="$(mktemp -d)"
trap 'rm -rf "$work" "$src/build" "$src"/*.egg-info' EXIT
/usr/bin/python3 -m venv --system-site-packages "$work/env"
DISC_CMAKE_BUILD_DIR="$build" "$work/env/bin/pip" install -q --no-build-isolation --no-index "$src"
cd "$work"
"$work/env/bin/python" - <<'PY'
import disc, os
assert "env" in disc.__file__, disc.__file__
c = disc.Circuit()
c.voltage("V1", "a", "gnd", rms=10, frequency=50)
c.resistor("R1", "a", "gnd", 100)
r = c.run_transient(stop=0.04, record=["i:R1"])
assert abs(max(r["i:R1"]) - 0.1414) < 1e-3
# The examples travel with the installed package (disc.example_path()).
example = disc.example_path("table-radio-half-wave.disc")
assert "env" in str(example) and example.is_file(), example
assert disc.example_path("traces/stored-stack-sweep.csv").is_file()
print("installed package works:", disc.__file__)
PY
