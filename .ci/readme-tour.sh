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
RIG_PID=""
trap '[ -n "$RIG_PID" ] && kill -INT $RIG_PID 2>/dev/null; true' EXIT
PORT=""
mapfile -t lines < <(awk '/^## A five-minute tour/{t=1} t&&/^```sh/{c=1;next} c&&/^```/{exit} c' "$ROOT/README.md" | grep '^\$R ')
[ ${#lines[@]} -ge 6 ] || { echo "README tour not found"; exit 1; }
for line in "${lines[@]}"; do
  cmd=${line%%#*}
  cmd=${cmd%"${cmd##*[![:space:]]}"}   # trim trailing blanks
  cmd=${cmd/\$R/$R}
  echo "+ ${cmd}"
  if [[ "$cmd" == *"virtual-rig"*"&"* ]]; then
    ${cmd%&} > rig.out 2> rig.err &
    RIG_PID=$!
    for _ in $(seq 50); do PORT=$(head -1 rig.out 2>/dev/null || true); [ -n "$PORT" ] && break; sleep 0.1; done
    echo "  virtual rig on $PORT"
    continue
  fi
  cmd=${cmd//\/dev\/pts\/7/$PORT}
  eval "timeout 300 $cmd" > out.txt 2>&1 || { cat out.txt; echo "README command failed: $line"; exit 1; }
  tail -3 out.txt
done
test -s runs/demo/report.html && test -s runs/n42/report.md && test -s runs/n42/flux_vs_temp.png
echo "README tour ran as written"
