#!/usr/bin/env bash
# Peak memory and growth of `ringside check --format json`, whole process:
#   - 20 files of 2,000 third-order loops each (gains on `gain` lines): peak
#     RSS (GNU time's maximum resident set size);
#   - growth: wall and CPU time (user + system: less disturbed by other work
#     on a shared machine) for 2,000 loops (best of three) and for 20,000
#     (the same generator and seed: the 2,000 are the first of the 20,000
#     files), and their ratios.
#
#   bash testdata/perf/memory.sh
set -euo pipefail
cd "$(dirname "$0")/../.."
PY=${RINGSIDE_PYTHON:-/usr/bin/python3}
HERE=testdata/perf
BIN=/tmp/ringside-mem
WORK=$(mktemp -d)
trap 'rm -rf "$WORK"' EXIT
"$PY" -c 'import numpy, scipy' 2>/dev/null || { echo "memory.sh: $PY lacks numpy/scipy (apt-get install python3-scipy)" >&2; exit 2; }
[ -x /usr/bin/time ] || { echo "memory.sh: needs GNU time (/usr/bin/time)" >&2; exit 2; }
go build -o "$BIN" .

"$PY" "$HERE/gen_corpus.py" 40000 "$WORK/big" --pi --per-file 2000
"$PY" "$HERE/gen_corpus.py" 2000 "$WORK/small" --pi --per-file 2000
"$PY" "$HERE/gen_corpus.py" 20000 "$WORK/large" --pi --per-file 2000

run() { # DIR → "wall_s cpu_s maxrss_kB" (CPU = user + system)
  (cd "$1" && /usr/bin/time -f '%e %U %S %M' "$BIN" check --format json --root . . 2>&1 >/dev/null | tail -1 |
    awk '{ printf "%s %.2f %s\n", $1, $2 + $3, $4 }') || true
}
# Best of three for the 2,000-loop file: it is the divisor of the growth.
best2() {
  local bw= bc= br=
  for _ in 1 2 3; do
    read -r w c r < <(run "$WORK/small")
    if [ -z "$bc" ] || awk -v a="$c" -v b="$bc" 'BEGIN { exit !(a < b) }'; then bw=$w bc=$c br=$r; fi
  done
  echo "$bw $bc $br"
}
read -r t40 c40 rss40 < <(run "$WORK/big")
read -r t2 c2 rss2 < <(best2)
read -r t20 c20 rss20 < <(run "$WORK/large")
echo "| corpus | loops | wall s | CPU s | peak RSS MB |"
echo "|---|---:|---:|---:|---:|"
awk -v t="$t2" -v c="$c2" -v m="$rss2" 'BEGIN { printf "| 1 file | 2,000 | %.2f | %.2f | %.0f |\n", t, c, m / 1024 }'
awk -v t="$t20" -v c="$c20" -v m="$rss20" 'BEGIN { printf "| 10 files | 20,000 | %.2f | %.2f | %.0f |\n", t, c, m / 1024 }'
awk -v t="$t40" -v c="$c40" -v m="$rss40" 'BEGIN { printf "| 20 files | 40,000 | %.2f | %.2f | %.0f |\n", t, c, m / 1024 }'
awk -v a="$t2" -v b="$t20" -v ca="$c2" -v cb="$c20" 'BEGIN { printf "\nGrowth: 10× the loops (2,000 → 20,000) took ×%.1f the wall time, ×%.1f the CPU time.\n", b / a, cb / ca }'
