// Runs the flat Pico image (the build that becomes the UF2) on an emulated RP2040, in lockstep
// with a driver on stdin/stdout, one slice of emulated time at a time. No boot ROM: the image
// starts at its second-stage loader in flash; the few flash routines it calls for its fault
// log come from a stand-in (rom.mjs). The flash keeps what was written across resets and
// power cycles.
//
//   node harness.mjs IMAGE.bin [SLICE_US]
//
// After each slice the harness writes what happened, then waits for the driver's lines up to
// `G` (go) before running the next slice:
//   out  U <hex>               bytes the device sent to the host (CDC data)
//        P <t_us> <pin> <0|1>  the heater output (GP14) changed, or the relay's enable did
//                              (pin 15: the board's retriggerable monostable on GP15's rising
//                              edges, which holds the relay for ENABLE_HOLD_US after each)
//        E <words>             an event: the chip reset (and why), USB configured, a fault
//        S <t_us> <heater_on_us> <enable> <max_usb_service_us> <max_enable_gap_us> <rising_edges>
//                              end of the slice: the relay's enable now, the longest wait
//                              between GP15's rising edges while it held, and its rising edges
//                              in this slice
//   in   V <hall> <probe> <thermo_word>   sensor codes from now on
//        H <hex>               bytes from the host to the device
//        R <0|1>               the host reads (1) or stops reading (0)
//        C <0|1>               the thermocouple converter is on the bus or not
//        I <0|1>               the I2C bus is stuck (1): a wedged device holds it
//        F                     a hard fault now (as a corrupted instruction would raise)
//        O                     the power goes off and on: a fresh chip with nothing kept but
//                              the flash
//        G                     run the next slice;  Q  quit

import { readFileSync, readSync, writeSync } from 'node:fs';
import { GPIOPinState, Simulator } from 'rp2040js';

import { attachAdc, attachConverter, World } from './bus.mjs';
import { romImage, serveBreak } from './rom.mjs';
import { UsbHost } from './usb-host.mjs';

const FLASH_START = 0x10000000;
const SRAM_END = 0x20042000;
const HEATER_PIN = 14;
const ENABLE_PIN = 15;
const EXC_HARDFAULT = 3;
const CYCLE_NS = 8; // 125 MHz
// the enable path's retriggerable monostable: its hold after each rising edge of GP15
// (hardware-notes/safety.md sizes it)
const ENABLE_HOLD_NS = Number(process.env.PICO_EMU_ENABLE_HOLD_US ?? 100_000) * 1000;

const [imagePath, sliceArg] = process.argv.slice(2);
const image = readFileSync(imagePath);
const sliceNs = Number(sliceArg ?? 1000) * 1000;
const world = new World();
const pending = [];
const out = (line) => pending.push(line);

let chip = null;
let clock = null;
let host = null;
let offsetNs = 0; // emulated time before the chip's last reset
const scratch = new Uint32Array(8);
const rom = romImage();
let flash = null; // the flash's contents, carried from one chip to the next
const pins = { [HEATER_PIN]: false, [ENABLE_PIN]: false };
let heaterSince = 0;
let heaterOnNs = 0;
let maxServiceNs = 0;
// the enable path: GP15's last rising edge, the monostable's output, edges this slice
let lastRiseNs = -Infinity;
let relayEnabled = false;
let maxEnableGapNs = 0;
let risingEdges = 0;

const nowNs = () => offsetNs + (clock ? clock.nanos : 0);

function pinChanged(pin, high) {
  if (pins[pin] === high) return;
  const t = nowNs();
  pins[pin] = high;
  if (pin === ENABLE_PIN) {
    enableEdge(t, high);
    return;
  }
  if (high) heaterSince = t;
  else heaterOnNs += t - heaterSince;
  out(`P ${Math.round(t / 1000)} ${pin} ${high ? 1 : 0}`);
}

/** The monostable drops once its hold after the last rising edge has passed. */
function enableLapse(t) {
  if (relayEnabled && t - lastRiseNs > ENABLE_HOLD_NS) {
    relayEnabled = false;
    out(`P ${Math.round((lastRiseNs + ENABLE_HOLD_NS) / 1000)} ${ENABLE_PIN} 0`);
  }
}

/** GP15 changed at `t`: a rising edge retriggers the monostable. */
function enableEdge(t, high) {
  enableLapse(t);
  if (!high) return;
  risingEdges += 1;
  if (relayEnabled) maxEnableGapNs = Math.max(maxEnableGapNs, t - lastRiseNs);
  lastRiseNs = t;
  if (!relayEnabled) {
    relayEnabled = true;
    out(`P ${Math.round(t / 1000)} ${ENABLE_PIN} 1`);
  }
}

/** A fresh chip: power-on, or a reset that keeps only the watchdog's scratch and reason. */
function startChip(reason) {
  if (clock) offsetNs += clock.nanos;
  if (chip) flash = chip.flash.slice();
  if (host) maxServiceNs = Math.max(maxServiceNs, host.maxServiceNs);
  // a simulator only for its chip and clock: the loop below runs the chip
  const sim = new Simulator();
  clock = sim.clock;
  chip = sim.rp2040;
  chip.logger = { debug() {}, info() {}, warn() {}, error() {} };
  chip.loadBootrom(rom);
  if (flash) chip.flash.set(flash);
  else chip.flash.set(image, 0);
  const wd = chip.peripherals[0x40058];
  wd.scratchData.set(scratch);
  wd.reason = reason;
  wd.onWatchdogTrigger = () => {
    if (pendingReset !== null) return;
    // this chip is done: its watchdog stops, and the next step starts a fresh one
    wd.alarm.enable = false;
    wd.timer.enable = false;
    scratch.set(wd.scratchData);
    const why = wd.reason === 1 ? 'timer' : 'forced';
    out(`E reset watchdog ${why} pc ${chip.core.PC.toString(16)}`);
    pendingReset = wd.reason;
    dumpProfile();
  };
  chip.onBreak = (code) => {
    if (!serveBreak(chip, code)) chip.core.exceptionEntry(EXC_HARDFAULT);
  };
  for (const pin of [HEATER_PIN, ENABLE_PIN]) {
    chip.gpio[pin].addListener((state) => pinChanged(pin, state === GPIOPinState.High));
    pinChanged(pin, false); // every pin is an input after a reset: the pull-downs hold it low
  }
  attachAdc(chip, world, nowNs);
  attachConverter(chip, world);
  host = new UsbHost(chip, nowNs, (bytes) => out(`U ${Buffer.from(bytes).toString('hex')}`), (e) =>
    out(`E ${e}`),
  );
  // what the boot ROM would leave: the stack at the top of SRAM, then its jump to flash
  chip.core.SP = SRAM_END;
  chip.core.PC = FLASH_START;
}

let pendingReset = null;
// PICO_EMU_PROFILE: where the core spends its time, printed at each reset (a debugging aid)
const profile = process.env.PICO_EMU_PROFILE ? new Map() : null;
function dumpProfile() {
  if (!profile) return;
  const top = [...profile.entries()].sort((a, b) => b[1] - a[1]).slice(0, 12);
  process.stderr.write(`profile ${top.map(([pc, n]) => `${pc.toString(16)}:${n}`).join(' ')}\n`);
  profile.clear();
}

// far more steps than a slice of a 125 MHz core takes: time has stopped moving
const MAX_STEPS_PER_SLICE = 2_000_000;

function runSlice(endNs) {
  let steps = 0;
  while (nowNs() < endNs) {
    if (++steps > MAX_STEPS_PER_SLICE) {
      const pc = chip.core.PC.toString(16);
      const last = pending.slice(-3).join(' | ');
      throw new Error(`emulated time stopped at ${nowNs()} ns (pc ${pc}; last output: ${last})`);
    }
    if (pendingReset !== null) {
      const reason = pendingReset;
      pendingReset = null;
      startChip(reason);
    }
    const core = chip.core;
    if (profile && (steps & 255) === 0) profile.set(core.PC, (profile.get(core.PC) ?? 0) + 1);
    if (core.waiting) {
      const step = Math.min(clock.nanosToNextAlarm, endNs - nowNs());
      clock.tick(Math.max(step, CYCLE_NS));
    } else {
      clock.tick(core.executeInstruction() * CYCLE_NS);
    }
  }
}

/** Lines from the driver up to `G`; false on `Q` or the end of input. */
const inBuf = Buffer.alloc(65536);
let carry = '';
function readLine() {
  for (;;) {
    const nl = carry.indexOf('\n');
    if (nl >= 0) {
      const line = carry.slice(0, nl);
      carry = carry.slice(nl + 1);
      return line;
    }
    let n;
    try {
      n = readSync(0, inBuf, 0, inBuf.length, null);
    } catch (e) {
      if (e.code === 'EAGAIN') continue;
      throw e;
    }
    if (n === 0) return null;
    carry += inBuf.toString('latin1', 0, n);
  }
}

function obey() {
  for (;;) {
    const line = readLine();
    if (line === null) return false;
    const [op, ...args] = line.trim().split(/\s+/);
    switch (op) {
      case 'G':
        return true;
      case 'Q':
        return false;
      case 'V':
        world.hallCode = Number(args[0]);
        world.probeCode = Number(args[1]);
        world.thermoWord = Number(args[2]) >>> 0;
        break;
      case 'H':
        host.send(Buffer.from(args[0] ?? '', 'hex'));
        break;
      case 'R':
        host.setReading(args[0] === '1');
        break;
      case 'C':
        world.converterPresent = args[0] === '1';
        break;
      case 'I':
        world.i2cStuck = args[0] === '1';
        break;
      case 'F':
        out('E injected hard fault');
        chip.core.exceptionEntry(EXC_HARDFAULT);
        break;
      case 'O':
        out('E power cycled');
        scratch.fill(0);
        pendingReset = 0;
        break;
      default:
        process.stderr.write(`harness: unknown line \`${line}\`\n`);
    }
  }
}

startChip(0);
let sliceEnd = 0;
while (obey()) {
  sliceEnd += sliceNs;
  heaterOnNs = 0;
  risingEdges = 0;
  heaterSince = Math.max(heaterSince, sliceEnd - sliceNs);
  runSlice(sliceEnd);
  enableLapse(sliceEnd);
  let on = heaterOnNs;
  if (pins[HEATER_PIN]) on += sliceEnd - Math.max(heaterSince, sliceEnd - sliceNs);
  const service = Math.max(maxServiceNs, host.maxServiceNs);
  out(
    `S ${Math.round(sliceEnd / 1000)} ${Math.round(on / 1000)} ${relayEnabled ? 1 : 0} ${Math.round(service / 1000)} ${Math.round(maxEnableGapNs / 1000)} ${risingEdges}`,
  );
  writeSync(1, pending.join('\n') + '\n');
  pending.length = 0;
}
