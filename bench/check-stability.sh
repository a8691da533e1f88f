#!/usr/bin/env bash
# Acceptance loop for `check --time` (README, "Timing protocol, work, modeled time and ties"):
# N consecutive sweeps of the CI suite on unchanged code, each checked against the baseline with time
# checking on, must all pass; a copy of the suite with a deliberately worsened recipe (GMRES restart
# 20 → 5 for gmres-block-jacobi) must fail. Prints "N passed / M failed" and the worsened run's verdict.
#
#   bench/check-stability.sh [N] [BASELINE]      # defaults: 10, matrices/ci/baseline.json
#
# Runs the built CLI (dist/; `npm run build` first). Exit 0 when every unchanged run passed and the
# worsened one failed, else 1. Output folders go to a temporary directory, removed at the end.
set -euo pipefail
cd "$(dirname "$0")/.."
N="${1:-10}"
BASELINE="${2:-matrices/ci/baseline.json}"
CLI="node dist/cli/bin.js"
TMP="$(mktemp -d "${TMPDIR:-/tmp}/slabbench-stability-XXXXXX")"
trap 'rm -rf "$TMP"' EXIT

passed=0
failed=0
for i in $(seq 1 "$N"); do
  $CLI sweep matrices/ci/suite.json --out "$TMP/run-$i" --quiet --no-report
  if $CLI check "$TMP/run-$i/results.json" --baseline "$BASELINE" --time > "$TMP/check-$i.txt" 2>&1; then
    passed=$((passed + 1))
    echo "run $i: pass ($(grep -o 'noise: .*' "$TMP/check-$i.txt" | head -1))"
  else
    failed=$((failed + 1))
    echo "run $i: FAIL"
    grep -E '^FAIL|regressed' "$TMP/check-$i.txt" | sed 's/^/  /'
  fi
done
echo "unchanged code: $passed passed / $failed failed (of $N sweeps + check --time)"

# The worsened copy: same matrices (absolute paths), gmres-block-jacobi with restart 5 instead of 20.
node -e '
const fs = require("fs"), path = require("path");
const src = path.resolve("matrices/ci/suite.json");
const s = JSON.parse(fs.readFileSync(src, "utf8"));
for (const m of s.matrices) for (const k of ["file", "rhs"]) if (m[k]) m[k] = path.resolve(path.dirname(src), m[k]);
const r = s.recipes.find((x) => x.name === "gmres-block-jacobi");
r.restart = 5;
fs.writeFileSync(process.argv[1], JSON.stringify(s, null, 1));
' "$TMP/worse-suite.json"
$CLI sweep "$TMP/worse-suite.json" --out "$TMP/worse" --quiet --no-report
worse_ok=0
if $CLI check "$TMP/worse/results.json" --baseline "$BASELINE" --time > "$TMP/check-worse.txt" 2>&1; then
  echo "worsened recipe (gmres-block-jacobi restart 20 → 5): PASSED — the check did not catch it"
else
  worse_ok=1
  echo "worsened recipe (gmres-block-jacobi restart 20 → 5): failed as it should:"
  grep -E '^FAIL' "$TMP/check-worse.txt" | sed 's/^/  /' | head -8
fi
[ "$failed" -eq 0 ] && [ "$worse_ok" -eq 1 ]
