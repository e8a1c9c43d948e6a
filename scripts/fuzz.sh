#!/usr/bin/env bash
# fuzz.sh — builds the libFuzzer targets of tests/fuzz with clang (address
# and undefined-behaviour sanitizers, leak checks on) in build-fuzz/ and
# fuzzes each target for a bounded time.
#   scripts/fuzz.sh [SECONDS] [TARGET...]   default: 60 s each, all targets
# Targets run one after the other (NG_FUZZ_JOBS=2: two at a time). New
# inputs go to build-fuzz/corpus/TARGET (not committed); the seeds and the
# committed corpus tests/fuzz/corpus/TARGET are read too. A crash, leak,
# hang (> 10 s per input) or memory blow-up (> 2 GiB) stops the target,
# leaves the input in build-fuzz/artifacts/TARGET/ and makes the script fail.
# NG_FUZZ_MERGE=1 afterwards merges what was found into the committed
# corpus (libFuzzer -merge=1 keeps only inputs that add coverage).
# Only this build needs clang, libclang-rt-14-dev (libFuzzer) and
# libomp-14-dev (OpenMP for clang); the default build and CI do not.
# NG_FUZZ_NO_INSTALL=1 (the slow test suite): install nothing; exit 77
# (meson's "skipped") when clang or libFuzzer is missing.
set -euo pipefail
top=$(cd "$(dirname "$0")/.." && pwd)
cd "$top"
. scripts/deps.sh
fuzz_packages=(clang libclang-rt-14-dev libomp-14-dev)
if [ "${NG_FUZZ_NO_INSTALL:-0}" = 1 ]; then
    for p in "${fuzz_packages[@]}"; do
        if ! dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed"; then
            echo "fuzz.sh: $p is not installed; skipped (scripts/fuzz.sh installs it)"
            exit 77
        fi
    done
else
    ng_install_missing "${fuzz_packages[@]}"
fi

seconds=${1:-60}
shift || true
targets=("$@")
if [ ${#targets[@]} -eq 0 ]; then
    targets=(text npy distances h5path simplices manifest)
fi
CC=clang ng_build build-fuzz -Dfuzz=true -Dtests=false \
    --buildtype=debugoptimized -Db_sanitize=address,undefined -Db_lundef=false

export ASAN_OPTIONS=detect_leaks=1:abort_on_error=1:allocator_may_return_null=1
export UBSAN_OPTIONS=halt_on_error=1:print_stacktrace=1
export OMP_WAIT_POLICY=PASSIVE
fuzz_one() {
    local t=$1 work=build-fuzz/corpus/$1 art=build-fuzz/artifacts/$1
    mkdir -p "$work" "$art"
    local started=$SECONDS status=0
    build-fuzz/tests/fuzz/fuzz_"$t" -max_total_time="$seconds" -timeout=10 \
        -rss_limit_mb=2048 -malloc_limit_mb=2048 -print_final_stats=1 \
        -artifact_prefix="$art/" "$work" tests/fuzz/corpus/"$t" \
        >build-fuzz/fuzz-"$t".log 2>&1 || status=$?
    echo "fuzz $t: $((SECONDS - started)) s, exit $status," \
         "$(grep -c '^==.*ERROR\|^SUMMARY' build-fuzz/fuzz-"$t".log || true) error lines" \
         "(log build-fuzz/fuzz-$t.log)"
    if [ "$status" -ne 0 ]; then
        tail -n 40 build-fuzz/fuzz-"$t".log >&2
        return 1
    fi
    if [ "${NG_FUZZ_MERGE:-0}" = 1 ]; then
        build-fuzz/tests/fuzz/fuzz_"$t" -merge=1 tests/fuzz/corpus/"$t" \
            "$work" >>build-fuzz/fuzz-"$t".log 2>&1
    fi
}

failed=0
jobs=${NG_FUZZ_JOBS:-1}
pids=()
for t in "${targets[@]}"; do
    if [ "$jobs" -le 1 ]; then
        fuzz_one "$t" || failed=1
    else
        fuzz_one "$t" &
        pids+=($!)
        if [ ${#pids[@]} -ge "$jobs" ]; then
            wait "${pids[0]}" || failed=1
            pids=("${pids[@]:1}")
        fi
    fi
done
for p in "${pids[@]}"; do wait "$p" || failed=1; done
exit $failed
