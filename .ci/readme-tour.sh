#!/usr/bin/env bash
# Runs the README's tour exactly as written (its `$R …` lines, in order), so the docs cannot drift
# from the commands. The one substitution: the example port /dev/pts/7 becomes the path the
# virtual rig printed.
set -euo pipefail
cd "$(dirname "$0")/.."
ROOT=$PWD
R="$ROOT/target/release/remanent"
[ -x "$R" ] || cargo build -q --release -p remanent
WORK=$(mktemp -d)
cd "$WORK"
# the tour's history goes to a store of its own, not the CI user's
export REMANENT_HISTORY="$WORK/history.sqlite"
RIG_PID=""
trap 'for p in $RIG_PID; do kill -INT $p 2>/dev/null; done; true' EXIT
PORT=""
mapfile -t lines < <(awk '/^## A five-minute tour/{t=1} t&&/^```sh/{c=1;next} c&&/^```/{exit} c' "$ROOT/README.md" | grep '^\$R ')
[ ${#lines[@]} -ge 6 ] || { echo "README tour not found"; exit 1; }
for line in "${lines[@]}"; do
  cmd=${line%%#*}
  cmd=${cmd%"${cmd##*[![:space:]]}"}   # trim trailing blanks
  cmd=${cmd/\$R/$R}
  echo "+ ${cmd}"
  if [[ "$cmd" == *" console "*"&"* ]]; then
    # the console prints its page's address first: the page must be served
    ${cmd%&} > console.out 2> console.err &
    RIG_PID="$RIG_PID $!"
    for _ in $(seq 100); do URL=$(head -1 console.out 2>/dev/null || true); [ -n "$URL" ] && break; sleep 0.1; done
    curl -fsS "$URL" | grep -q "Remanent bench console" || { cat console.err; echo "the console served no page at '$URL'"; exit 1; }
    curl -fsS "${URL}api/state" | grep -q '"rigs"' || { echo "the console's state is not served"; exit 1; }
    echo "  console at $URL"
    continue
  fi
  if [[ "$cmd" == *"virtual-rig"*"&"* ]]; then
    rm -f rig.out
    ${cmd%&} > rig.out 2> rig.err &
    RIG_PID="$RIG_PID $!"
    for _ in $(seq 50); do PORT=$(head -1 rig.out 2>/dev/null || true); [ -n "$PORT" ] && break; sleep 0.1; done
    echo "  virtual rig on $PORT"
    continue
  fi
  cmd=$(sed -E "s#/dev/pts/[0-9]+#$PORT#g" <<<"$cmd")
  eval "timeout 300 $cmd" > out.txt 2>&1 || { cat out.txt; echo "README command failed: $line"; exit 1; }
  tail -3 out.txt
done
test -s runs/demo/report.html && test -s runs/n42/report.md && test -s runs/n42/flux_vs_temp.png
test -s runs/n42/certificate.pdf && head -c 5 runs/n42/certificate.pdf | grep -q "%PDF-"
test -s runs/b2/certificate.pdf && grep -q "FAIL" runs/b2/report.md || { echo "the tour's second-lot part did not FAIL"; exit 1; }
grep -qi "coercivity below grade" runs/b2/report.md || { echo "the FAIL does not say why"; exit 1; }
grep -q "PASS" runs/n42/report.md || { echo "the tour's N42 did not PASS"; exit 1; }
test -s runs/lot/lot.csv && test -s runs/oc.png && test -s runs/trend.png
test "$(wc -l < runs/history.csv)" -ge 3 || { cat runs/history.csv; echo "the history lacks the tour's runs"; exit 1; }
grep -q "magnet   3 .*LOW" out.txt || { cat out.txt; echo "the survey did not flag magnet 3"; exit 1; }
echo "README tour ran as written"
