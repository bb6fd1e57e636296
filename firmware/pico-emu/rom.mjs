// A stand-in for the RP2040 boot ROM's lookup table and the flash routines the Pico image calls
// (through rp2040-hal's `rom_data`), so the fault log in flash runs on the emulated chip. Each
// routine is a breakpoint stub (`bkpt #n; bx lr`) that the harness serves in JavaScript on the
// emulated flash, with a NOR flash's rules: an erase sets whole 4 KiB sectors to 0xff,
// programming whole 256-byte pages only clears bits. No byte of the real ROM is used; the
// magic at 0x10 is left out, so the image still sees "no boot ROM" where it asks.

const FUNC_TABLE = 0x100;
const DATA_TABLE = 0x180;
const LOOKUP = 0x40;
const STUBS = 0x200;
const LOOKUP_BREAK = 0xf0;
const BKPT = 0xbe00;
const BX_LR = 0x4770;
const SECTOR = 4096;
const PAGE = 256;

const tag = (s) => s.charCodeAt(0) | (s.charCodeAt(1) << 8);

/** The routines, by their two-letter code, each given the chip and its argument registers. */
const ROUTINES = {
  IF: () => {}, // connect_internal_flash
  EX: () => {}, // flash_exit_xip
  FC: () => {}, // flash_flush_cache
  CX: () => {}, // flash_enter_cmd_xip
  RE: (chip, [addr, count]) => {
    // flash_range_erase(addr, count, block_size, block_cmd)
    if (addr % SECTOR || count % SECTOR) throw new Error(`rom: erase ${addr}+${count} not sector-aligned`);
    chip.flash.fill(0xff, addr, addr + count);
  },
  RP: (chip, [addr, data, count]) => {
    // flash_range_program(addr, data, count)
    if (addr % PAGE || count % PAGE) throw new Error(`rom: program ${addr}+${count} not page-aligned`);
    for (let i = 0; i < count; i++) chip.flash[addr + i] &= chip.readUint8(data + i);
  },
  C4: (chip, [dest, src, n]) => {
    // memcpy44(dest, src, n): word-aligned copy; returns dest
    for (let i = 0; i < n; i += 4) chip.writeUint32(dest + i, chip.readUint32(src + i));
    return dest;
  },
};
const CODES = Object.keys(ROUTINES);

/** The ROM image: the table pointers at 0x14–0x19, the lookup stub and one stub a routine. */
export function romImage() {
  const rom = new Uint8Array(4096);
  const view = new DataView(rom.buffer);
  view.setUint16(0x14, FUNC_TABLE, true);
  view.setUint16(0x16, DATA_TABLE, true);
  view.setUint16(0x18, LOOKUP | 1, true);
  view.setUint16(LOOKUP, BKPT | LOOKUP_BREAK, true);
  view.setUint16(LOOKUP + 2, BX_LR, true);
  CODES.forEach((code, i) => {
    const stub = STUBS + 4 * i;
    view.setUint16(stub, BKPT | (i + 1), true);
    view.setUint16(stub + 2, BX_LR, true);
    view.setUint16(FUNC_TABLE + 4 * i, tag(code), true);
    view.setUint16(FUNC_TABLE + 4 * i + 2, stub | 1, true);
  });
  // both tables end with a zero code (the data table is empty)
  return new Uint32Array(rom.buffer);
}

/** Serve breakpoint `code` if it is one of the ROM's; false otherwise. */
export function serveBreak(chip, code) {
  const r = chip.core.registers;
  if (code === LOOKUP_BREAK) {
    // rom_table_lookup(table, code): the entry's routine, or 0
    let found = 0;
    for (let at = r[0]; ; at += 4) {
      const entry = chip.readUint16(at);
      if (entry === 0) break;
      if (entry === r[1]) {
        found = chip.readUint16(at + 2);
        break;
      }
    }
    r[0] = found;
    return true;
  }
  const name = CODES[code - 1];
  if (!name) return false;
  const result = ROUTINES[name](chip, [r[0] >>> 0, r[1] >>> 0, r[2] >>> 0, r[3] >>> 0]);
  if (result !== undefined) r[0] = result;
  return true;
}
