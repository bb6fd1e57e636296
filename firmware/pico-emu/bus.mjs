// The Pico's world at the bus level: the four-channel ADC on I2C0 (Hall probe on AIN0–AIN1,
// probe thermistor on AIN2) and the thermocouple converter on SPI0 with its chip select on
// GP17. Both answer with the codes the driver last handed over (from the rig model); each can
// be taken off the bus, and the I2C bus can be held stuck, as a wedged device would hold it.

import { GPIOPinState } from 'rp2040js';

const ADC_ADDRESS = 0x48;
const REG_CONVERSION = 0x00;
const REG_CONFIG = 0x01;
const OS = 0x8000;
const MUX_SHIFT = 12;
const MUX_AIN0_AIN1 = 0b000;
const MUX_AIN2_GND = 0b110;
// one conversion at 860 samples/s, as the chip's data sheet gives it
const CONVERSION_NS = 1_163_000;
const TC_CS_PIN = 17;
const TC_MISO_PIN = 16;

/** Shared between the driver's lines and the two chips. */
export class World {
  constructor() {
    this.hallCode = 0;
    this.probeCode = 0;
    this.thermoWord = 0;
    this.adcPresent = true;
    this.converterPresent = true;
    this.i2cStuck = false;
  }
}

/** A 16-bit signed code as its two bytes, most significant first. */
function be16(code) {
  const v = code & 0xffff;
  return [v >> 8, v & 0xff];
}

export function attachAdc(mcu, world, nowNs) {
  const i2c = mcu.i2c[0];
  let pointer = 0;
  let config = 0x8583; // the chip's power-on value
  let conversion = 0;
  let readyAtNs = 0;
  let written = [];
  let reading = 0;
  i2c.onStart = () => {
    if (!world.i2cStuck) i2c.completeStart();
  };
  i2c.onConnect = (address, _mode) => {
    written = [];
    reading = 0;
    i2c.completeConnect(world.adcPresent && address === ADC_ADDRESS);
  };
  i2c.onWriteByte = (value) => {
    written.push(value);
    if (written.length === 1) {
      pointer = value;
    } else if (written.length === 3 && pointer === REG_CONFIG) {
      config = (written[1] << 8) | written[2];
      if (config & OS) {
        const mux = (config >> MUX_SHIFT) & 0b111;
        conversion =
          mux === MUX_AIN0_AIN1 ? world.hallCode : mux === MUX_AIN2_GND ? world.probeCode : 0;
        readyAtNs = nowNs() + CONVERSION_NS;
      }
    }
    i2c.completeWrite(true);
  };
  i2c.onReadByte = (_ack) => {
    let value;
    if (pointer === REG_CONVERSION) {
      value = conversion;
    } else {
      value = (config & ~OS) | (nowNs() >= readyAtNs ? OS : 0);
    }
    const bytes = be16(value);
    i2c.completeRead(bytes[Math.min(reading, 1)]);
    reading += 1;
  };
  i2c.onStop = () => i2c.completeStop();
}

export function attachConverter(mcu, world) {
  const spi = mcu.spi[0];
  let word = 0;
  let index = 0;
  mcu.gpio[TC_CS_PIN].addListener((state) => {
    if (state === GPIOPinState.Low) {
      // chip select falls: the converter latches its last result
      word = world.thermoWord >>> 0;
      index = 0;
    }
  });
  spi.onTransmit = (_value) => {
    let byte;
    if (world.converterPresent) {
      byte = (word >>> (24 - 8 * Math.min(index, 3))) & 0xff;
    } else {
      // nothing drives the data line: it reads as the pad's pull
      byte = mcu.gpio[TC_MISO_PIN].pullupEnabled ? 0xff : 0x00;
    }
    index += 1;
    spi.completeTransmit(byte);
  };
}
