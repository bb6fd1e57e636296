#!/usr/bin/env bash
# One-time set-up for building the firmware images on a Debian machine (run as root, or with
# sudo for the package step): Debian's Rust with its library sources, the linker and the
# size tool, then a rustup toolchain `remanent-debian` that the board crates name in their
# rust-toolchain.toml, so a plain `cargo build --release` / `cargo run --release` in
# firmware/boards/pico works. Safe to run again.
set -euo pipefail
cd "$(dirname "$0")"
need=()
[ -x /usr/bin/rustc ] && [ -d /usr/lib/rustlib/src/rust ] || need+=(rustc-web cargo-web rust-web-src rust-web-llvm)
[ -x /usr/bin/ld.lld-22 ] || need+=(lld-22)
command -v llvm-size-22 >/dev/null || need+=(llvm-22)
[ -x /usr/bin/cargo-clippy ] || need+=(rust-web-clippy)
[ -x /usr/bin/rustfmt ] || need+=(rustfmt-web)
if [ ${#need[@]} -gt 0 ]; then
  echo "-- installing ${need[*]}"
  apt-get update -qq && apt-get install -y -qq --no-install-recommends "${need[@]}" >/dev/null
fi
# the linked toolchain: Debian's tools behind wrappers that allow `build-std`
dir="${REMANENT_TOOLCHAIN_DIR:-$HOME/.local/share/remanent-debian-toolchain}"
mkdir -p "$dir/bin"
ln -sfn /usr/lib "$dir/lib"
for tool in cargo rustc cargo-clippy clippy-driver rustfmt cargo-fmt rustdoc; do
  printf '#!/bin/sh\nRUSTC_BOOTSTRAP=1 exec /usr/bin/%s "$@"\n' "$tool" > "$dir/bin/$tool"
  chmod +x "$dir/bin/$tool"
done
rustup toolchain link remanent-debian "$dir" >/dev/null
echo "-- toolchain remanent-debian: $(cd boards/pico && cargo --version)"
