#!/usr/bin/env bash
# Runs one fuzz target for a while: seeds its corpus from the examples and
# test fixtures, then runs libFuzzer through cargo-fuzz on the stable
# toolchain (RUSTC_BOOTSTRAP lets it use the sanitizer flags).
#
#   fuzz/run.sh TARGET SECONDS        e.g. fuzz/run.sh check 600
set -euo pipefail
cd "$(dirname "$0")"
target="$1"
seconds="${2:-60}"
corpus="corpus/$target"
mkdir -p "$corpus" artifacts
if [ "$target" = "server_messages" ]; then
    printf 'Content-Length: 52\r\n\r\n{"jsonrpc":"2.0","id":1,"method":"initialize","params":{}}' > "$corpus/seed-initialize"
    printf 'Content-Length: 5\r\n\r\n{ bad' > "$corpus/seed-bad-json"
    printf 'X: 1\r\n\r\nContent-Length: 2\r\n\r\n{}' > "$corpus/seed-no-length"
else
    find ../examples ../tests/fixtures -name '*.guard' | while read -r f; do
        cp "$f" "$corpus/seed-$(echo "$f" | tr '/.' '__')"
    done
fi
RUSTC_BOOTSTRAP=1 cargo fuzz run "$target" "$corpus" -- \
    -max_total_time="$seconds" -timeout=10 -rss_limit_mb=2048 -print_final_stats=1
