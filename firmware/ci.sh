#!/usr/bin/env bash
# Firmware checks (.ci/run calls it):
#  1. firmware/setup.sh: Debian's Rust with its library sources, the linker, clippy, rustfmt
#     and the `remanent-debian` toolchain the board crates name; QEMU if missing;
#  2. format and lint the board crates;
#  3. cross-build the Pico (thumbv6m) and emulated (thumbv7m) images with `build-std`;
#  4. print flash and RAM use and check the Pico image against 64 KiB flash / 16 KiB RAM;
#  5. make the Pico's UF2 file;
#  6. boot the emulated board under QEMU with its UART on a pseudo-terminal, record a short heat
#     cycle from it with `remanent record`, check the record, run `remanent self-test` (an
#     injected fault must drive the heater off within one control period), then the fault
#     drills: a panic, a hung loop and a stack overflow must each reset the board, which comes
#     back latched with the heater off and says why;
#  7. run the Pico image itself (the very bytes of the UF2) on an emulated RP2040 (npm's
#     rp2040js, pinned in firmware/pico-emu/package-lock.json; Node from Debian), its sensors
#     and heater simulated at the bus level from the rig model: tests/tests/pico.
set -euo pipefail
cd "$(dirname "$0")/.."
ROOT=$PWD
mkdir -p target

bash firmware/setup.sh
if ! command -v qemu-system-arm >/dev/null; then
  echo "-- installing qemu-system-arm (bookworm-backports)"
  if [ ! -f /etc/apt/sources.list.d/remanent-backports.sources ] && ! grep -rqs bookworm-backports /etc/apt/sources.list.d/; then
    printf 'Types: deb\nURIs: http://deb.debian.org/debian\nSuites: bookworm-backports\nComponents: main\nSigned-By: /usr/share/keyrings/debian-archive-keyring.gpg\n' \
      > /etc/apt/sources.list.d/remanent-backports.sources
  fi
  apt-get update -qq && apt-get install -y -qq --no-install-recommends -t bookworm-backports qemu-system-arm >/dev/null
fi

echo "-- formatting and lints of the board crates"
for b in support pico emulated; do
  (cd "firmware/boards/$b" && cargo fmt --check && cargo clippy -q --release -- -D warnings)
done
echo "-- the Pico board for 60 Hz mains (the bench's mains are a build option)"
(cd firmware/boards/pico && cargo clippy -q --release --features mains-60hz -- -D warnings)

echo "-- building the emulated board (thumbv7m-none-eabi)"
(cd firmware/boards/emulated && cargo build --release -q)
EMU=firmware/boards/emulated/target/thumbv7m-none-eabi/release/remanent-board-emulated
echo "-- building the Pico board (thumbv6m-none-eabi), the image users flash"
(cd firmware/boards/pico && cargo build --release -q)
PICO=target/remanent-pico.elf
cp firmware/boards/pico/target/thumbv6m-none-eabi/release/remanent-board-pico "$PICO"

echo "-- the Pico board with its fault drills (a test build: panic and hung loop on command)"
# the same target folder: only the crates the feature reaches are built again (disk and time)
(cd firmware/boards/pico && cargo build --release -q --features drills)
PICO_DRILLS=target/remanent-pico-drills.elf
cp firmware/boards/pico/target/thumbv6m-none-eabi/release/remanent-board-pico "$PICO_DRILLS"

echo "-- image sizes"
llvm-size-22 "$EMU" "$PICO"
read -r text data bss _ < <(llvm-size-22 "$PICO" | tail -1)
flash=$((text + data)); ram=$((data + bss))
echo "pico: flash $flash of 65536 bytes, static RAM $ram of 16384 bytes"
[ "$flash" -le 65536 ] || { echo "pico image exceeds the 64 KiB flash budget"; exit 1; }
[ "$ram" -le 16384 ] || { echo "pico image exceeds the 16 KiB RAM budget"; exit 1; }

echo "-- UF2 for drag-and-drop flashing"
llvm-objcopy-22 -O binary "$PICO" target/remanent-pico.bin
cargo run -q --release -p remanent-uf2 -- target/remanent-pico.bin 10000000 target/remanent-pico.uf2

echo "-- emulated board under QEMU, recorded through the real serial path"
cargo build -q --release -p remanent
LINK=/tmp/remanent-qemu-$$
RUN=$(mktemp -d)/run
rm -f "$LINK"
qemu-system-arm -machine lm3s6965evb -display none -monitor none \
  -chardev pty,id=uart0,path="$LINK" -serial chardev:uart0 -kernel "$EMU" >/tmp/remanent-qemu.log 2>&1 &
QEMU=$!
trap 'kill $QEMU 2>/dev/null || true; rm -f "$LINK"' EXIT
for _ in $(seq 50); do [ -e "$LINK" ] && break; sleep 0.1; done
timeout 300 target/release/remanent record --port "$LINK" --profile firmware/ci/short-cycle.toml \
  --magnet RM-N42SH-D10x5 --out "$RUN"
REMANENT_CI_RUN="$RUN" cargo test -q -p remanent-tests --test suite ci_record_from_the_emulated_board -- --ignored
timeout 120 target/release/remanent self-test --port "$LINK"
for drill in panic hang stack-overflow; do
  echo "-- fault drill: $drill"
  timeout 120 target/release/remanent self-test --port "$LINK" --drill "$drill"
done
echo "-- the Pico image on an emulated RP2040"
if ! command -v node >/dev/null || ! command -v npm >/dev/null; then
  apt-get update -qq && apt-get install -y -qq --no-install-recommends nodejs npm >/dev/null
fi
(cd firmware/pico-emu && npm ci --no-audit --no-fund --silent)
llvm-objcopy-22 -O binary "$PICO_DRILLS" target/remanent-pico-drills.bin
REMANENT_PICO_IMAGE="$ROOT/target/remanent-pico.bin" \
REMANENT_PICO_DRILLS_IMAGE="$ROOT/target/remanent-pico-drills.bin" \
REMANENT_BIN="$ROOT/target/release/remanent" \
  timeout 1500 cargo test -q --release -p remanent-tests --test pico -- --ignored --test-threads 2 --nocapture
echo "-- firmware checks passed"
