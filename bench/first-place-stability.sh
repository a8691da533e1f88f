#!/usr/bin/env bash
# Stability of the verdict (README, "Timing protocol, work, modeled time and ties"): N consecutive
# default sweeps of a suite (default: the demo suite), then, per matrix, the first-place set of each
# sweep and whether the sets of every two sweeps overlap. Exit 0 when they all overlap.
#
#   bench/first-place-stability.sh [N] [SUITE] [extra sweep options…]    # defaults: 3, matrices/suite.json
set -euo pipefail
cd "$(dirname "$0")/.."
N="${1:-3}"
SUITE="${2:-matrices/suite.json}"
shift $(( $# > 2 ? 2 : $# )) || true
TMP="$(mktemp -d "${TMPDIR:-/tmp}/slabbench-first-place-XXXXXX")"
trap 'rm -rf "$TMP"' EXIT
for i in $(seq 1 "$N"); do
  start=$(date +%s.%N)
  node dist/cli/bin.js sweep "$SUITE" --out "$TMP/run-$i" --json --no-report "$@" > "$TMP/summary-$i.json"
  echo "sweep $i: $(node -e 'console.log((Number(process.argv[2]) - Number(process.argv[1])).toFixed(1))' "$start" "$(date +%s.%N)") s, noise $(node -e 'const s=require(process.argv[1]); console.log(s.noise===null?"-":(s.noise*100).toFixed(0)+"%")' "$TMP/summary-$i.json")"
done
node -e '
const n = Number(process.argv[1]), dir = process.argv[2];
const sums = Array.from({ length: n }, (_, i) => require(`${dir}/summary-${i + 1}.json`));
let ok = true;
for (const w of sums[0].winners) {
  const sets = sums.map((s) => s.winners.find((x) => x.matrix === w.matrix)?.firstPlace ?? []);
  let overlap = true;
  for (let a = 0; a < n; a++) for (let b = a + 1; b < n; b++) if (!sets[a].some((r) => sets[b].includes(r))) overlap = false;
  if (!overlap) ok = false;
  console.log(`${w.matrix}: ${sets.map((s) => `{${s.join(", ")}}`).join("  ")}  ${overlap ? "overlap" : "DO NOT OVERLAP"}`);
}
console.log(ok ? "every matrix: first-place sets overlap" : "some first-place sets do not overlap");
process.exit(ok ? 0 : 1);
' "$N" "$TMP"
