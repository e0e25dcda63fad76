#!/usr/bin/env bash
# `cmake --install` into a temporary prefix, then use what was installed as a user would: the
# command on a shipped example, a CMake project with find_package(netfold), a program built
# with pkg-config's flags, the Python module, the manual page. Run by ctest (install_consumer).
#   check_install.sh BUILD_DIR SOURCE_DIR WORK_DIR VERSION PYTHON_BUILT(0|1) PYTHON [LAUNCHER]
set -euo pipefail
build="$1" source="$2" work="$3" version="$4" python_built="$5" python="$6" launcher="${7:-}"
prefix="$work/prefix"
rm -rf "$work"
mkdir -p "$work"
fail() { echo "check_install: $*" >&2; exit 1; }

cmake --install "$build" --prefix "$prefix" >"$work/install.log"

for f in bin/netfold include/netfold/solve.hpp include/netfold/parse.hpp lib/libnetfold_core.a \
         lib/cmake/netfold/netfold-config.cmake lib/cmake/netfold/netfold-config-version.cmake \
         lib/cmake/netfold/netfold-targets.cmake lib/pkgconfig/netfold.pc share/man/man1/netfold.1.gz \
         share/doc/netfold/README.md share/doc/netfold/cli.md share/doc/netfold/netlist-format.md \
         share/netfold/examples/valve_coil.nf share/netfold/examples/harmonic_supply.golden.csv \
         share/netfold/examples/bad/missing_comma.nf share/netfold/examples/sweep_component.py; do
  [[ -f "$prefix/$f" ]] || fail "not installed: $f"
done
[[ -x "$prefix/bin/netfold" && -x "$prefix/share/netfold/examples/sweep_component.py" ]] || fail "not executable"
example="$prefix/share/netfold/examples/valve_coil.nf"

# The command, from the prefix.
[[ "$("$prefix/bin/netfold" --version)" == "netfold $version" ]] || fail "installed netfold --version"
"$prefix/bin/netfold" solve "$example" --no-verify | grep -q "τ = L/R_th = 6.667 ms" || fail "installed netfold solve"

# A CMake project: find_package(netfold) and netfold::core.
cmake -S "$source/tests/install/consumer" -B "$work/consumer" -DCMAKE_BUILD_TYPE=Release \
      -DCMAKE_PREFIX_PATH="$prefix" ${launcher:+-DCMAKE_CXX_COMPILER_LAUNCHER="$launcher"} >"$work/consumer.log"
cmake --build "$work/consumer" -j2 >>"$work/consumer.log"
out="$("$work/consumer/consumer" "$example")"
echo "$out"
grep -qx "tau\[1\] = 6.667 ms" <<<"$out" || fail "consumer (CMake) printed no tau[1] = 6.667 ms"
grep -q "^peak coil_l.i = " <<<"$out" || fail "consumer (CMake) printed no peak"

# pkg-config: the same program from the .pc file's flags alone.
export PKG_CONFIG_PATH="$prefix/lib/pkgconfig"
[[ "$(pkg-config --modversion netfold)" == "$version" ]] || fail "pkg-config --modversion"
# shellcheck disable=SC2046  # the flags are words
${launcher} c++ -std=c++20 -O1 "$source/tests/install/consumer/main.cpp" -o "$work/consumer_pc" \
  $(pkg-config --cflags --libs netfold)
[[ "$("$work/consumer_pc" "$example")" == "$out" ]] || fail "consumer (pkg-config) differs from consumer (CMake)"

# The Python module, from the prefix's dist-packages.
if [[ "$python_built" == 1 ]]; then
  PYTHONPATH="$prefix/lib/python3/dist-packages" "$python" -c "
import sys, netfold
assert netfold.__file__.startswith(sys.argv[1]), netfold.__file__
s = netfold.solve(netfold.parse_file(sys.argv[2]), verify=False)
assert abs(s.segments[0]['tau'] - 0.12 / 18) < 1e-15, s.segments[0]['tau']
print('python module from', netfold.__file__)
" "$prefix" "$example"
fi

# The manual page, as man reads it.
if command -v groff >/dev/null; then
  warnings="$(gzip -dc "$prefix/share/man/man1/netfold.1.gz" | groff -man -Tutf8 -ww -z 2>&1)"
  [[ -z "$warnings" ]] || fail "groff warns about the installed man page: $warnings"
fi
echo "install to $prefix: command, CMake package, pkg-config, Python module and man page work"
