#!/usr/bin/env bash
# The bench console in a real browser: Debian's Chromium (installed if missing), driven headless
# by npm's playwright-core (pinned in tests/console/package-lock.json), against the virtual rig
# and the release build of `remanent`.
set -euo pipefail
cd "$(dirname "$0")/.."
export DEBIAN_FRONTEND=noninteractive
if ! command -v chromium >/dev/null; then
  apt-get update -qq && apt-get install -y -qq --no-install-recommends chromium >/dev/null
fi
if ! command -v node >/dev/null || ! command -v npm >/dev/null; then
  apt-get update -qq && apt-get install -y -qq --no-install-recommends nodejs npm >/dev/null
fi
command -v pdftotext >/dev/null || apt-get install -y -qq poppler-utils >/dev/null
[ -x target/release/remanent ] || cargo build -q --release -p remanent
(cd tests/console && npm ci --no-audit --no-fund --silent)
REMANENT_BIN="$PWD/target/release/remanent" timeout 900 node tests/console/console.test.mjs
