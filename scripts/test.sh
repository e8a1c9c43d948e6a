#!/usr/bin/env bash
# test.sh — installs what is missing, builds nervegap in release mode and
# runs every test of the default suites; then builds with the address and
# undefined-behaviour sanitizers and runs the unit, CLI and robustness
# tests again.
#   scripts/test.sh            release + sanitizer runs
#   NG_SLOW=1 scripts/test.sh  also the 'slow' suite
#   NG_NO_SANITIZE=1           skip the sanitizer build
set -euo pipefail
top=$(cd "$(dirname "$0")/.." && pwd)
cd "$top"
. scripts/deps.sh
ng_install_missing "${ng_cluster_packages[@]}"
cores=$(nproc 2>/dev/null || echo 2)

echo "== release build"
ng_build build --buildtype=release
meson test -C build --num-processes "$cores" --no-suite slow --print-errorlogs
if [ "${NG_SLOW:-0}" = 1 ]; then
    meson test -C build --num-processes "$cores" --suite slow --print-errorlogs
fi

if [ "${NG_NO_SANITIZE:-0}" != 1 ]; then
    echo "== sanitizer build (address, undefined)"
    ng_build build-asan --buildtype=debugoptimized -Db_sanitize=address,undefined -Db_lundef=false
    # Check forks each test; leak checks stay on. The reference suites run
    # the same code as the release build and are skipped here for time;
    # the robustness suite (fuzz corpus replay, allocation-failure sweep,
    # degenerate geometry, resource guards) runs here too.
    ASAN_OPTIONS=detect_leaks=1:abort_on_error=1 \
    UBSAN_OPTIONS=halt_on_error=1:print_stacktrace=1 \
        meson test -C build-asan --num-processes "$cores" --suite unit --suite cli \
            --suite robust --print-errorlogs
fi
echo "all tests passed"
