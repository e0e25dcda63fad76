#!/usr/bin/env bash
# `cpack -G DEB` into a scratch folder, then check the package without installing it into the
# system: its control fields, that Depends names the package of every shared library the
# command and the Python module need, its file list, and that the command, the example and the
# Python module work from the unpacked tree. Run by ctest (package_deb); .ci/run installs the
# real package with apt-get.
#   check_package.sh BUILD_DIR WORK_DIR VERSION PYTHON_BUILT(0|1) PYTHON
set -euo pipefail
build="$1" work="$2" version="$3" python_built="$4" python="$5"
rm -rf "$work"
mkdir -p "$work"
fail() { echo "check_package: $*" >&2; exit 1; }

cpack --config "$build/CPackConfig.cmake" -G DEB -B "$work" >"$work/cpack.log" 2>&1 || { cat "$work/cpack.log"; fail "cpack failed"; }
deb="$work/netfold_${version}_$(dpkg --print-architecture).deb"
[[ -f "$deb" ]] || fail "no $deb (cpack wrote: $(ls "$work"))"

field() { dpkg-deb --field "$deb" "$1"; }
[[ "$(field Package)" == netfold && "$(field Version)" == "$version" ]] || fail "package name or version"
[[ "$(field Section)" == electronics ]] || fail "section: $(field Section)"
[[ -n "$(field Maintainer)" && -n "$(field Description)" ]] || fail "no maintainer or description"
# The extended description is flowed text: one leading space a line, no verbatim (two-space) lines.
if tail -n +2 <<<"$(field Description)" | grep -q '^  '; then fail "description lines shown verbatim"; fi
depends="$(field Depends)"
echo "Depends: $depends"
# The package names alone, one a line: "libfmt9 (>= 9.1.0+ds1), libc6 (>= 2.34)" -> libfmt9, libc6.
depends_names="$(tr ',|' '\n\n' <<<"$depends" | sed 's/(.*//; s/ //g')"

# Every shared library a binary names (NEEDED; what those load in turn is their own
# packages' business) belongs to a Debian package, and that package must be a dependency.
dpkg-deb -x "$deb" "$work/root"
binaries=("$work/root/usr/bin/netfold")
if [[ "$python_built" == 1 ]]; then binaries+=("$work"/root/usr/lib/python3/dist-packages/netfold.*.so); fi
for bin in "${binaries[@]}"; do
  resolved="$(ldd "$bin")"
  needed="$(objdump -p "$bin" | awk '$1 == "NEEDED" { print $2 }')"
  [[ -n "$needed" ]] || fail "$(basename "$bin") names no shared library"
  while read -r soname; do
    lib="$(awk -v so="$soname" '$1 == so && $2 == "=>" { print $3 }' <<<"$resolved")"
    # The dynamic loader (named when thread-local storage is used from position-independent
    # code) is listed by ldd by its path alone, without "=>".
    [[ -n "$lib" ]] || lib="$(awk -v so="$soname" '$1 ~ ("/" so "$") { print $1 }' <<<"$resolved")"
    [[ -n "$lib" ]] || fail "$(basename "$bin"): $soname is not found on this system"
    # dpkg knows a library by the path its package installed, before or after /usr merging.
    owner="$( (dpkg -S "$lib" 2>/dev/null || dpkg -S "$(readlink -f "$lib")" 2>/dev/null) | head -n1 | cut -d: -f1)"
    [[ -n "$owner" ]] || fail "$(basename "$bin"): no package owns $lib"
    grep -qxF "$owner" <<<"$depends_names" || fail "$(basename "$bin") needs $soname of package $owner, not in Depends"
  done <<<"$needed"
done

contents="$(dpkg-deb --contents "$deb" | awk '{ print $6 }')"
for f in ./usr/bin/netfold ./usr/share/man/man1/netfold.1.gz ./usr/share/netfold/examples/valve_coil.nf \
         ./usr/include/netfold/solve.hpp ./usr/lib/libnetfold_core.a ./usr/lib/cmake/netfold/netfold-config.cmake \
         ./usr/lib/pkgconfig/netfold.pc ./usr/share/doc/netfold/cli.md; do
  grep -qx "$f" <<<"$contents" || fail "not in the package: $f"
done

# The command and the example from the unpacked package.
root="$work/root/usr"
[[ "$("$root/bin/netfold" --version)" == "netfold $version" ]] || fail "packaged netfold --version"
"$root/bin/netfold" solve "$root/share/netfold/examples/valve_coil.nf" | grep -q "^verification: closed form matches" \
  || fail "packaged netfold solve on the packaged example"
if [[ "$python_built" == 1 ]]; then
  PYTHONPATH="$root/lib/python3/dist-packages" "$python" -c "
import sys, netfold
assert netfold.__file__.startswith(sys.argv[1]), netfold.__file__
print('packaged module', netfold.__version__, netfold.parse_file(sys.argv[2]).title)
" "$work/root" "$root/share/netfold/examples/valve_coil.nf"
fi
echo "package $deb: fields, dependencies, contents, command, example and module are right"
