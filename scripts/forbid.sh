#!/usr/bin/env bash
# Fails on leftover debugging or placeholder macros in the sources.
set -euo pipefail
cd "$(dirname "$0")/.."
if grep -rnE '\b(dbg|todo|unimplemented)!' src tests bench 2>/dev/null; then
  echo "forbid.sh: remove the leftover macros above" >&2
  exit 1
fi
