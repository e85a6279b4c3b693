#!/usr/bin/env bash
# Side-by-side speed of `ringside check --format json` and the numpy/scipy
# reference (scipy_check.py) on the same generated corpora, with a check that
# both agree on every loop's stability and margins. Prints markdown tables.
#
#   bash testdata/perf/compare.sh            # 200 and 2000 loops
#   SIZES="200 2000 20000" bash testdata/perf/compare.sh
#
# Every loop is third order: a PI controller around a second-order discrete
# plant (gen_corpus.py --pi), up to 2,000 loops a file.
#
# Two corpora per size: "gains" (controller gains on `gain` lines, so
# ringside also computes every gain's stable interval and safe value, which
# the scipy side does not) and "literal" (the same numbers written inside the
# blocks: no gain-limit search, so both sides do the same work). Wall-clock
# seconds of the whole process (interpreter or binary start-up included),
# and scipy's own in-process analysis time (imports excluded); best of
# RUNS (default 3) runs below 10,000 loops, one run from 10,000 on, the
# two sides taking turns.
# Ringside's "growth per 10×" uses the process time.
set -euo pipefail
cd "$(dirname "$0")/../.."
PY=${RINGSIDE_PYTHON:-/usr/bin/python3}
SIZES=${SIZES:-"200 2000"}
HERE=testdata/perf
BIN=/tmp/ringside
WORK=$(mktemp -d)
trap 'rm -rf "$WORK"' EXIT

"$PY" -c 'import numpy, scipy' 2>/dev/null || { echo "compare.sh: $PY lacks numpy/scipy (apt-get install python3-scipy)" >&2; exit 2; }
go build -o "$BIN" .

# "WALL CPU" seconds of the best of N runs of a command (wall from the
# shell's microsecond clock; CPU = user + system, from GNU time: less
# disturbed than wall time by other work on a shared machine).
timeit() {
  local runs=$1; shift
  local best= cpu=
  for _ in $(seq "$runs"); do
    local rc=0 t0 t1
    t0=$EPOCHREALTIME
    /usr/bin/time -f '%e %U %S' -o "$WORK/time" "$@" >/dev/null || rc=$?
    t1=$EPOCHREALTIME
    if [ "$rc" -gt 1 ]; then echo "compare.sh: '$*' failed with status $rc" >&2; exit 2; fi
    read -r _ u s < <(tail -1 "$WORK/time")
    # Wall time to the millisecond (GNU time's %e has 10 ms steps, coarse
    # beside a 0.16 s run).
    w=$(awk -v a="$t0" -v b="$t1" 'BEGIN { printf "%.3f", b - a }')
    if [ -z "$best" ] || awk -v a="$w" -v b="$best" 'BEGIN { exit !(a < b) }'; then
      best=$w cpu=$(awk -v u="$u" -v s="$s" 'BEGIN { printf "%.2f", u + s }')
    fi
  done
  echo "$best $cpu"
}

agree_all=0
agreement=()
for variant in gains literal; do
  flag=
  [ "$variant" = literal ] && flag=--literal
  rows=()
  prev_s= prev_r=
  for n in $SIZES; do
    dir="$WORK/$variant-$n"
    "$PY" "$HERE/gen_corpus.py" "$n" "$dir" --pi --per-file 2000 $flag
    runs=${RUNS:-3}
    [ "$n" -ge 10000 ] && runs=1
    # The two sides take turns, run by run, so that a machine whose speed
    # drifts over minutes (a shared host) slows both alike.
    ts= cs= tr= cr=
    for _ in $(seq "$runs"); do
      read -r t c < <(timeit 1 "$PY" "$HERE/scipy_check.py" run "$dir" "$WORK/scipy-$variant-$n.json")
      if [ -z "$ts" ] || awk -v a="$t" -v b="$ts" 'BEGIN { exit !(a < b) }'; then ts=$t cs=$c; fi
      read -r t c < <(cd "$dir" && timeit 1 sh -c "'$BIN' check --format json --root . . > '$WORK/ringside-$variant-$n.json'")
      if [ -z "$tr" ] || awk -v a="$t" -v b="$tr" 'BEGIN { exit !(a < b) }'; then tr=$t cr=$c; fi
    done
    if ! verdict=$("$PY" "$HERE/scipy_check.py" agree "$WORK/scipy-$variant-$n.json" "$WORK/ringside-$variant-$n.json"); then
      agree_all=1
    fi
    agreement+=("- $variant, $n loops: $verdict")
    tin=$(cat "$WORK/scipy-$variant-$n.json.time")
    gs=- gr=-
    [ -n "$prev_s" ] && gs=$(awk -v a="$prev_s" -v b="$ts" 'BEGIN { printf "×%.1f", b / a }')
    [ -n "$prev_r" ] && gr=$(awk -v a="$prev_r" -v b="$tr" 'BEGIN { printf "×%.1f", b / a }')
    ratio=$(awk -v s="$ts" -v r="$tr" 'BEGIN { printf "%.3f (%.1f× faster)", r / s, s / r }')
    ratio_in=$(awk -v s="$tin" -v r="$tr" 'BEGIN { printf "%.2f", r / s }')
    ratio_cpu=$(awk -v s="$cs" -v r="$cr" 'BEGIN { if (r > 0) printf "%.1f×", s / r; else printf "-" }')
    rows+=("| $n | $ts | $tin | $tr | $ratio | $ratio_in | $cs / $cr ($ratio_cpu) | $gs | $gr |")
    prev_s=$ts prev_r=$tr
  done
  echo
  if [ "$variant" = gains ]; then
    echo "Corpus as generated (gains on \`gain\` lines: ringside also searches every gain's stable interval and safe value)"
  else
    echo "Gains written as numbers inside blocks (no gain-limit search: the same work on both sides)"
  fi
  echo
  echo "| loops | scipy s (process) | scipy s (analysis only) | ringside s | ringside / scipy process | ringside / scipy analysis | CPU s scipy / ringside | scipy growth per 10× | ringside growth per 10× |"
  echo "|---:|---:|---:|---:|---:|---:|---:|---:|---:|"
  printf '%s\n' "${rows[@]}"
done
echo
echo "Agreement (stability identical; margins within the tolerances of scipy_check.py):"
printf '%s\n' "${agreement[@]}"
echo
echo "scipy: $("$PY" -c 'import numpy, scipy; print("numpy", numpy.__version__, "scipy", scipy.__version__)'); ringside: $(go version | cut -d' ' -f3); $(nproc) cores"
exit $agree_all
