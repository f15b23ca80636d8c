#!/usr/bin/env bash
# Rewrites the generated circuits listed in circuits/generated.txt with the current `slant new`.
# Usage: circuits/refresh.sh [path/to/slant]   (default: builds and uses target/release/slant)
set -euo pipefail
cd "$(dirname "$0")/.."
slant="${1:-}"
if [ -z "$slant" ]; then
    cargo build --release --quiet
    slant="${CARGO_TARGET_DIR:-target}/release/slant"
fi
grep -v '^#' circuits/generated.txt | while read -r file args; do
    [ -z "$file" ] && continue
    # shellcheck disable=SC2086 # the arguments are meant to split
    "$slant" new $args -o "circuits/$file"
    "$slant" check "circuits/$file" >/dev/null
    echo "wrote circuits/$file"
done
