#!/usr/bin/env bash
# Run one fuzz target for a fixed time, starting from the committed seeds.
#   fuzz/run.sh TARGET [SECONDS]      targets: edge_list, matrix_market, store_open
# Needs cargo-fuzz (`cargo install cargo-fuzz`). RUSTC_BOOTSTRAP lets the stable toolchain
# accept the sanitizer flags cargo-fuzz passes; no nightly toolchain is needed.
set -euo pipefail
cd "$(dirname "$0")/.."
target=$1
secs=${2:-60}
max_len=${3:-4096}
mkdir -p "fuzz/corpus/$target"
RUSTC_BOOTSTRAP=1 cargo fuzz run -O "$target" "fuzz/corpus/$target" "fuzz/seeds/$target" -- \
    -max_total_time="$secs" -max_len="$max_len" -rss_limit_mb=2048 -timeout=10 -print_final_stats=1
