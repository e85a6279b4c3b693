#!/usr/bin/env bash
# Reproduces the README's performance figures in one non-interactive command:
# the Go benchmarks of ./analysis/ (and ./server/ when its latency benchmarks
# compile), summarised by benchstat when it can be fetched through the Go
# module proxy (raw output otherwise), then the ringside-vs-scipy table of
# compare.sh and the memory and growth table of memory.sh.
#
#   bash testdata/perf/bench.sh                 # COUNT=3, SIZES="10 100 1000"
#   COUNT=1 SIZES="10 100" bash testdata/perf/bench.sh
set -uo pipefail
cd "$(dirname "$0")/../.."
COUNT=${COUNT:-3}
OUT=$(mktemp -d)
trap 'rm -rf "$OUT"' EXIT

pkgs=(./analysis/)
if go test -c -o /dev/null ./server/ >/dev/null 2>&1 && grep -qs '^func Benchmark' server/*_test.go; then
  pkgs+=(./server/)
fi
echo "## Go benchmarks (${pkgs[*]}, -count $COUNT)"
echo
status=0
go test -run '^$' -bench . -benchmem -count "$COUNT" "${pkgs[@]}" </dev/null >"$OUT/bench.txt" 2>&1 || status=$?
if [ "$status" -ne 0 ]; then
  cat "$OUT/bench.txt"
  echo "bench.sh: go test -bench failed (status $status)" >&2
  exit "$status"
fi
# benchstat runs from a temporary folder so that it never touches go.mod.
if (cd "$OUT" && GOFLAGS=-mod=mod go run golang.org/x/perf/cmd/benchstat@latest bench.txt) >"$OUT/stat.txt" 2>"$OUT/stat.err"; then
  echo '```'
  cat "$OUT/stat.txt"
  echo '```'
else
  echo "(benchstat unavailable: $(tail -1 "$OUT/stat.err"); raw output)"
  echo '```'
  cat "$OUT/bench.txt"
  echo '```'
fi
echo
echo "## ringside check vs numpy/scipy"
bash testdata/perf/compare.sh
echo
echo "## ringside check: peak memory and growth"
bash testdata/perf/memory.sh
