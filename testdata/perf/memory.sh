#!/usr/bin/env bash
# Peak memory and growth of `ringside check --format json`, whole process:
#   - 20 files of 2,000 third-order loops each (gains on `gain` lines): peak
#     RSS (GNU time's maximum resident set size);
#   - growth: wall time for 2,000 and for 20,000 loops (the same kind of
#     loops, 2,000 a file), and their ratio.
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

run() { # DIR → "seconds maxrss_kB"
  (cd "$1" && /usr/bin/time -f '%e %M' "$BIN" check --format json --root . . 2>&1 >/dev/null | tail -1) || true
}
read -r t40 rss40 < <(run "$WORK/big")
read -r t2 rss2 < <(run "$WORK/small")
read -r t20 rss20 < <(run "$WORK/large")
echo "| corpus | loops | wall s | peak RSS MB |"
echo "|---|---:|---:|---:|"
awk -v t="$t2" -v m="$rss2" 'BEGIN { printf "| 1 file | 2,000 | %.2f | %.0f |\n", t, m / 1024 }'
awk -v t="$t20" -v m="$rss20" 'BEGIN { printf "| 10 files | 20,000 | %.2f | %.0f |\n", t, m / 1024 }'
awk -v t="$t40" -v m="$rss40" 'BEGIN { printf "| 20 files | 40,000 | %.2f | %.0f |\n", t, m / 1024 }'
awk -v a="$t2" -v b="$t20" 'BEGIN { printf "\nGrowth: 10× the loops (2,000 → 20,000) took ×%.1f the time.\n", b / a }'
