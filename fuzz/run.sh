#!/bin/sh
# Run every fuzz target for SECONDS seconds each (default 60), one after the other.
#
#   fuzz/run.sh 600
#
# Needs cargo-fuzz (`cargo install cargo-fuzz`). cargo-fuzz passes nightly-only compiler flags; on a
# stable toolchain RUSTC_BOOTSTRAP=1 allows them. The sanitizer is off (`-s none`): the crate has no
# unsafe code of its own, and the run looks for panics, overflows (debug assertions are on) and
# hangs. The committed seed corpus is in fuzz/corpus/TARGET; new inputs found go to a scratch
# folder, crashes to fuzz/artifacts/TARGET. Not part of .ci/run.
set -eu
seconds="${1:-60}"
here="$(cd "$(dirname "$0")" && pwd)"
cd "$here/.."
export RUSTC_BOOTSTRAP=1
for target in sample_csv spike_json estimators; do
    scratch="$(mktemp -d)"
    echo "== $target, ${seconds}s"
    cargo fuzz run -s none "$target" "$scratch" "fuzz/corpus/$target" -- \
        -max_total_time="$seconds" -timeout=20 -rss_limit_mb=2048 -print_final_stats=1
    rm -rf "$scratch"
done
