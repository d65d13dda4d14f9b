#!/bin/sh
# Runs the fuzz target on a fresh machine: installs what it needs, seeds the corpus with the
# samples, the templates, the broken-scheme corpus and the fuzz regressions, then fuzzes.
#
#   fuzz/run.sh [SECONDS] [extra cargo-fuzz options, e.g. --sanitizer none]
#
# Needs: a Rust toolchain (rustup or the distribution's cargo), a C++ compiler (libFuzzer is
# built from C++; Debian/Ubuntu: `apt-get install build-essential`), network for the first
# `cargo install`.
set -eu
cd "$(dirname "$0")/.."
seconds="${1:-1200}"
[ $# -gt 0 ] && shift

if ! command -v c++ >/dev/null 2>&1; then
    echo "fuzz/run.sh: a C++ compiler is needed to build libFuzzer (Debian/Ubuntu: apt-get install build-essential)" >&2
    exit 2
fi
if ! cargo fuzz --version >/dev/null 2>&1; then
    cargo install cargo-fuzz --locked
fi

corpus=fuzz/corpus/load_and_simulate
mkdir -p "$corpus"
cp samples/*.yaml templates/*.yaml "$corpus"/
for f in tests/data/broken/*.yaml tests/data/fuzz-regressions/*.yaml; do
    cp "$f" "$corpus/seed-$(basename "$f")"
done

# cargo-fuzz uses nightly-only flags; RUSTC_BOOTSTRAP=1 lets a stable toolchain accept them
RUSTC_BOOTSTRAP=1 cargo fuzz run "$@" load_and_simulate "$corpus" -- \
    -max_total_time="$seconds" -rss_limit_mb=2048 -timeout=10 -print_final_stats=1
