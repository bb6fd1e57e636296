// A USB host for the emulated Pico's device controller: resets the bus, enumerates the
// CDC-ACM device with an 8-byte control endpoint (control transfers split into packets, status
// stages answered), then moves bulk packets both ways. A host that stops reading is modelled
// by holding the device's IN buffers (a real host would NAK them) until reading resumes.

const EP0 = 0;
const AVAILABLE = 1 << 10;
const EP0_IN_BUFFER_CONTROL = 0x80;
const BUFF_STATUS = 0x58;
// between control requests, as a host leaves at least a frame's worth
const REQUEST_GAP_NS = 100_000;

function setup(requestType, request, value, index, length) {
  return new Uint8Array([
    requestType, request, value & 0xff, value >> 8, index & 0xff, index >> 8,
    length & 0xff, length >> 8,
  ]);
}

/** Bulk endpoints of the CDC data interface (class 0x0a) in a configuration descriptor. */
function cdcEndpoints(d) {
  const out = { in: -1, out: -1, comm: 0 };
  let data = false;
  for (let i = 0; i + 1 < d.length && d[i] >= 2; i += d[i]) {
    if (d[i + 1] === 4) {
      data = d[i + 5] === 0x0a;
      if (d[i + 5] === 0x02) out.comm = d[i + 2];
    }
    if (data && d[i + 1] === 5 && (d[i + 3] & 3) === 2) {
      if (d[i + 2] & 0x80) out.in = d[i + 2] & 0x0f;
      else out.out = d[i + 2] & 0x0f;
    }
  }
  return out;
}

export class UsbHost {
  /** `onData(bytes)` gets what the device sends; `nowNs()` is emulated time. */
  constructor(mcu, nowNs, onData, onEvent) {
    this.usb = mcu.usbCtrl;
    this.nowNs = nowNs;
    this.onData = onData;
    this.onEvent = onEvent;
    this.toDevice = [];
    this.reading = true;
    this.held = [];
    this.armed = new Map();
    this.ep = null;
    this.configured = false;
    this.transfers = [];
    this.current = null;
    this.pendingStatusOut = false;
    this.maxServiceNs = 0;
    this.raisedAt = new Map();
    // the next request waits until the device has taken the last status stage
    this.nextAlarm = mcu.clock.createAlarm(() => this.next());
    this.hook();
  }

  hook() {
    const usb = this.usb;
    const trace = process.env.PICO_EMU_TRACE ? (m) => process.stderr.write(`usb ${Math.round(this.nowNs() / 1000)} ${m}\n`) : () => {};
    this.trace = trace;
    usb.onUSBEnabled = () => {
      trace('enabled');
      usb.resetDevice();
    };
    usb.onResetReceived = () => {
      trace('reset');
      this.enumerate();
    };
    usb.onEndpointWrite = (ep, buf) => {
      trace(`in ep${ep} ${Buffer.from(buf).toString('hex')}`);
      this.deviceSent(ep, buf);
    };
    usb.onEndpointRead = (ep, size) => {
      trace(`armed out ep${ep} ${size}`);
      this.deviceWantsData(ep, size);
    };
    const indicate = usb.indicateBufferReady.bind(usb);
    usb.indicateBufferReady = (ep, out) => {
      const bit = 1 << (ep * 2 + (out ? 1 : 0));
      if (!this.raisedAt.has(bit)) this.raisedAt.set(bit, this.nowNs());
      indicate(ep, out);
    };
    const write = usb.writeUint32.bind(usb);
    usb.writeUint32 = (offset, value) => {
      write(offset, value);
      // write-one-to-clear: the bits written, whichever alias wrote them
      if (offset === BUFF_STATUS) this.serviced(usb.rawWriteValue);
    };
    const dpram = usb.DPRAMUpdated.bind(usb);
    this.dpram = dpram;
    usb.DPRAMUpdated = (offset, value) => {
      const inControl = this.ep && offset === EP0_IN_BUFFER_CONTROL + this.ep.in * 8;
      if (inControl && value & AVAILABLE && (!this.reading || this.held.length > 0)) {
        this.held.push([offset, value]);
        return;
      }
      dpram(offset, value);
    };
  }

  /** The device's interrupt handler acknowledged these buffers: how long they waited. */
  serviced(bits) {
    for (const [bit, at] of this.raisedAt) {
      if (bits & bit) {
        this.maxServiceNs = Math.max(this.maxServiceNs, this.nowNs() - at);
        this.raisedAt.delete(bit);
      }
    }
  }

  enumerate() {
    this.configured = false;
    this.ep = null;
    this.held = [];
    this.armed = new Map();
    this.transfers = [
      { setup: setup(0x00, 5, 1, 0, 0) }, // SET_ADDRESS 1
      { setup: setup(0x80, 6, 0x0100, 0, 18) }, // device descriptor
      { setup: setup(0x80, 6, 0x0200, 0, 9), then: (d) => this.fullConfig(d) },
    ];
    this.next();
  }

  fullConfig(d) {
    const total = d[2] | (d[3] << 8);
    this.transfers.unshift({
      setup: setup(0x80, 6, 0x0200, 0, total),
      then: (all) => {
        this.ep = cdcEndpoints(all);
        const coding = new Uint8Array([0x00, 0xc2, 0x01, 0x00, 0, 0, 8]); // 115200 8N1
        this.transfers.push(
          { setup: setup(0x00, 9, 1, 0, 0) }, // SET_CONFIGURATION 1
          { setup: setup(0x21, 0x20, 0, this.ep.comm, 7), data: coding }, // SET_LINE_CODING
          { setup: setup(0x21, 0x22, 3, this.ep.comm, 0), then: () => this.ready() }, // DTR, RTS
        );
      },
    });
  }

  ready() {
    this.configured = true;
    this.onEvent(`usb configured in ${this.ep.in} out ${this.ep.out}`);
  }

  next() {
    this.current = this.transfers.shift() ?? null;
    if (!this.current) return;
    this.current.got = [];
    this.pendingStatusOut = false;
    this.trace(`setup ${Buffer.from(this.current.setup).toString('hex')}`);
    this.usb.sendSetupPacket(this.current.setup);
  }

  finish() {
    const t = this.current;
    this.current = null;
    if (t.then) t.then(new Uint8Array(t.got));
    this.nextAlarm.schedule(REQUEST_GAP_NS);
  }

  deviceSent(ep, buf) {
    if (ep === EP0 && this.current) {
      const t = this.current;
      const wantsIn = t.setup[0] & 0x80;
      if (!wantsIn) {
        this.finish(); // the zero-length status of a host-to-device request
        return;
      }
      t.got.push(...buf);
      const length = t.setup[6] | (t.setup[7] << 8);
      if (t.got.length >= length || buf.length < 8) {
        t.inDone = true;
        if (this.pendingStatusOut) this.statusOut();
      }
      return;
    }
    if (this.ep && ep === this.ep.in) this.onData(buf);
  }

  statusOut() {
    this.pendingStatusOut = false;
    this.usb.endpointReadDone(EP0, new Uint8Array(0));
    this.finish();
  }

  deviceWantsData(ep, size) {
    if (ep === EP0) {
      const t = this.current;
      if (t && t.data && !t.sentData) {
        t.sentData = true;
        this.usb.endpointReadDone(EP0, t.data);
      } else if (t && t.setup[0] & 0x80) {
        if (t.inDone) this.statusOut();
        else this.pendingStatusOut = true;
      }
      return;
    }
    // an OUT endpoint may be armed before the host has read which one is the data endpoint
    this.armed.set(ep, size);
    this.feed();
  }

  /** Bytes for the device, sent as it asks for them. */
  send(bytes) {
    this.toDevice.push(...bytes);
    this.feed();
  }

  feed() {
    if (!this.configured || this.toDevice.length === 0) return;
    const size = this.armed.get(this.ep.out) ?? 0;
    if (size === 0) return;
    const chunk = this.toDevice.splice(0, Math.min(size, 64));
    this.armed.set(this.ep.out, 0);
    this.usb.endpointReadDone(this.ep.out, new Uint8Array(chunk));
  }

  /** Whether the host reads what the device sends; held packets go on when it reads again. */
  setReading(on) {
    this.reading = on;
    while (this.reading && this.held.length > 0) {
      const [offset, value] = this.held.shift();
      this.dpram(offset, value);
    }
  }
}
