#!/usr/bin/env bash
# Fails on leftover debugging or placeholder macros in the sources, and on retired user-facing
# words coming back into what users read (sources, grammar, circuits, README, docs).
set -euo pipefail
cd "$(dirname "$0")/.."
status=0
if grep -rnE '\b(dbg|todo|unimplemented)!' src tests bench 2>/dev/null; then
  echo "forbid.sh: remove the leftover macros above" >&2
  status=1
fi

# Subcommands write standard output through `out!`/`outln!` or `cli::out::Stdout`, never
# `print!`/`println!` (which panic on a full disk) or a bare `stdout()` (whose errors get lost).
if grep -rnE '(^|[^e[:alnum:]_])(print|println)!\(|io::stdout\(\)' src/cli --include='*.rs' \
  | grep -vE '^src/cli/out\.rs:' | grep -vE ':[0-9]+:\s*//'; then
  echo "forbid.sh: write standard output through out!/outln! or cli::out::Stdout (src/cli/out.rs)" >&2
  status=1
fi

# Retired words and their replacements (see docs/reference.md). Each pattern matches whole
# words, so `depolarizing`, `pauli`, `anti-correlated` or `errors` in prose stay allowed. The
# reader of version 1 sweep stores is the one place that must still name the old store keys.
retired=(
  '\bdepolarizing2\b'                 # -> pair_depolarizing
  '\bpauli2\b'                        # -> pauli (arity from its keys)
  '(?<!anti-)\bcorrelated\b'          # -> joint
  '\bformat[ =]+01\b'                 # -> --format bits
  '\bmax[_-]errors\b'                 # -> until_failures / --until-failures
  '\berrors/shots\b|\berrors_p\{|\berrors: u64\b' # -> failures
  '(?i)\bmechanisms?\b'               # -> edge(s) / hyperedge(s)
  '(?i)\bgraph-?like\b'               # -> matchable / --matching
  '(?i)\b(un)?decompos\w*'            # -> split / unsplit
  '(?i)\bmeasurement records?\b|"record"|\bflip of record\b' # -> result(s)
  '"num_(detectors|observables)"'     # -> the detectors / observables arrays
  '(?i)\bundetectable\b'              # -> silent logical error
  '"\s*[DH]\{|-- D\{'                 # DOT ids -> det0, boundary, edge3
)
exempt='^src/study/sweep/legacy\.rs:'
files=$(git ls-files src grammar circuits README.md docs \
  | grep -E '\.(rs|md|ebnf|slant|toml|txt|sh)$' || true)
for pattern in "${retired[@]}"; do
  # shellcheck disable=SC2086
  hits=$(grep -nP -- "$pattern" $files 2>/dev/null | grep -vE "$exempt" || true)
  if [ -n "$hits" ]; then
    echo "$hits"
    echo "forbid.sh: retired word (pattern $pattern) in the lines above; use slant's own word" >&2
    status=1
  fi
done
exit $status
