//! The Pico image on the emulated RP2040 (`firmware/pico-emu/harness.mjs`, run by Node), in
//! lockstep with the rig model: each millisecond of emulated time the harness reports the heater
//! output's on-time, the enable pin and what the device sent; the rig model advances with that
//! power and hands back the next ADC codes and thermocouple word. The enable the rig sees is
//! the relay's, as the board's retriggerable monostable makes it from GP15's edges. Everything a scenario judges
//! comes from here: pins, bytes, and the rig's own temperatures.

use std::io::{BufRead, BufReader, Write};
use std::path::PathBuf;
use std::process::{Child, ChildStdin, ChildStdout, Command as Process, Stdio};

use remanent_protocol::device::DEVICE_MSG_VARIANTS;
use remanent_protocol::{Command, DeviceMsg, FrameDecoder, HostMsg, MAX_HOST_FRAME};
use remanent_rig_model::rig::{HeaterSwitch, Rig, RigParams};

/// One emulated millisecond per exchange.
pub const SLICE_US: u64 = 1000;
/// The heater output (GP14) and the enable line (GP15).
pub const HEATER_PIN: u32 = 14;
/// The enable line.
pub const ENABLE_PIN: u32 = 15;
/// The board's retriggerable monostable on the enable line holds the relay this long after
/// each rising edge, µs (hardware-notes/safety.md sizes it against the longest gap).
pub const ENABLE_HOLD_US: u64 = 100_000;

/// The image under test: the build that becomes the UF2 (`REMANENT_PICO_IMAGE`), or another
/// build of the same board crate named by `var`.
pub fn image(var: &str) -> PathBuf {
    PathBuf::from(std::env::var(var).unwrap_or_else(|_| {
        panic!("{var}: a flat Pico image (firmware/ci.sh builds it and sets this)")
    }))
}

/// A running emulated Pico and its rig.
pub struct Emu {
    child: Child,
    stdin: ChildStdin,
    lines: BufReader<ChildStdout>,
    /// The fixture the firmware heats and reads.
    pub rig: Rig,
    /// Emulated time, µs.
    pub t_us: u64,
    pending: Vec<String>,
    decoder: FrameDecoder<DeviceMsg>,
    /// Messages from the device, with the end of the slice they arrived in.
    pub msgs: Vec<(u64, DeviceMsg)>,
    /// Frames that did not decode.
    pub bad_frames: usize,
    /// Heater pin changes: (µs, pin, high).
    pub pins: Vec<(u64, u32, bool)>,
    /// What else the harness reported: resets, USB, injected faults.
    pub events: Vec<(u64, String)>,
    /// The relay's enable now: the board's retriggerable monostable, held by GP15's rising
    /// edges (the harness models it; `pins` carries its changes as pin 15).
    pub enable: bool,
    /// The end of the last slice in which GP15 had a rising edge, µs.
    pub last_enable_edge_us: Option<u64>,
    /// Longest wait between GP15's rising edges while the relay was enabled, µs.
    pub max_enable_gap_us: u64,
    /// Longest wait of a USB buffer for the device's interrupt handler, µs.
    pub max_usb_service_us: u64,
    /// Hottest the heated plate has been, °C.
    pub plate_max_c: f64,
    /// When the host last sent anything, µs.
    pub last_host_us: Option<u64>,
    /// Raw bytes from the device since [`Emu::take_raw`].
    raw: Vec<u8>,
    next_id: u16,
}

impl Emu {
    /// Start `image` on a fresh chip with the reference rig (a zero-crossing relay on 50 Hz, as
    /// the Pico drives it) and the demo part in the fixture.
    pub fn start(image: &std::path::Path) -> Emu {
        let harness =
            PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../firmware/pico-emu/harness.mjs");
        let mut child = Process::new("node")
            .arg(&harness)
            .arg(image)
            .arg(SLICE_US.to_string())
            .env("PICO_EMU_ENABLE_HOLD_US", ENABLE_HOLD_US.to_string())
            .stdin(Stdio::piped())
            .stdout(Stdio::piped())
            .stderr(Stdio::inherit())
            .spawn()
            .expect("node (Debian's nodejs; firmware/ci.sh installs it)");
        let stdin = child.stdin.take().expect("stdin");
        let lines = BufReader::new(child.stdout.take().expect("stdout"));
        let part = remanent_rig_model::catalogue::find("RM-N42SH-D10x5").expect("demo part");
        let params = RigParams {
            switch: HeaterSwitch::ZeroCross { half_cycle_s: 0.01 },
            ..RigParams::REFERENCE
        };
        Emu {
            child,
            stdin,
            lines,
            rig: Rig::new(params, part.magnet, 7),
            t_us: 0,
            pending: Vec::new(),
            decoder: FrameDecoder::new(Some(DEVICE_MSG_VARIANTS)),
            msgs: Vec::new(),
            bad_frames: 0,
            pins: Vec::new(),
            events: Vec::new(),
            enable: false,
            last_enable_edge_us: None,
            max_enable_gap_us: 0,
            max_usb_service_us: 0,
            plate_max_c: f64::MIN,
            last_host_us: None,
            raw: Vec::new(),
            next_id: 1,
        }
    }

    /// A line for the harness before the next slice (`H`, `R`, `C`, `I`, `F`).
    pub fn tell(&mut self, line: impl Into<String>) {
        self.pending.push(line.into());
    }

    /// Bytes from the host, as they are.
    pub fn send_bytes(&mut self, bytes: &[u8]) {
        if bytes.is_empty() {
            return;
        }
        let hex: String = bytes.iter().map(|b| format!("{b:02x}")).collect();
        if std::env::var_os("PICO_EMU_TRACE").is_some() {
            eprintln!("host {} {hex}", self.t_us);
        }
        self.tell(format!("H {hex}"));
        self.last_host_us = Some(self.t_us);
    }

    /// A command from the host; its id.
    pub fn send(&mut self, command: Command) -> u16 {
        let id = self.next_id;
        self.next_id += 1;
        let mut buf = [0u8; MAX_HOST_FRAME];
        let frame = remanent_protocol::encode(&HostMsg { id, command }, &mut buf)
            .expect("a host message fits its frame")
            .to_vec();
        self.send_bytes(&frame);
        id
    }

    /// Run one slice.
    pub fn step(&mut self) {
        let word = self.rig.thermo_word().0;
        let (hall, probe) = (self.rig.hall_code(), self.rig.probe_code());
        let mut text = format!("V {hall} {probe} {word}\n");
        for l in self.pending.drain(..) {
            text.push_str(&l);
            text.push('\n');
        }
        text.push_str("G\n");
        self.stdin
            .write_all(text.as_bytes())
            .and_then(|_| self.stdin.flush())
            .expect("the harness is running");
        let on_us = loop {
            let mut line = String::new();
            let n = self.lines.read_line(&mut line).expect("harness output");
            assert!(n > 0, "the harness ended at {} µs", self.t_us);
            if let Some(on) = self.take_line(line.trim_end()) {
                break on;
            }
        };
        self.rig.duty = (on_us as f64 / SLICE_US as f64).clamp(0.0, 1.0);
        self.rig.enabled = self.enable;
        self.rig.advance(SLICE_US as f64 * 1e-6);
        self.plate_max_c = self.plate_max_c.max(self.rig.thermal.plate_c);
    }

    /// One line of the harness; the heater's on-time when it ends the slice.
    fn take_line(&mut self, line: &str) -> Option<u64> {
        let mut f = line.split(' ');
        let num = |s: Option<&str>| -> u64 { s.and_then(|x| x.parse().ok()).unwrap_or(0) };
        match f.next() {
            Some("U") => {
                let hex = f.next().unwrap_or("");
                let bytes: Vec<u8> = (0..hex.len() / 2)
                    .map(|i| u8::from_str_radix(&hex[2 * i..2 * i + 2], 16).expect("hex"))
                    .collect();
                self.raw.extend_from_slice(&bytes);
                let (t, msgs, bad) = (self.t_us + SLICE_US, &mut self.msgs, &mut self.bad_frames);
                self.decoder.feed(&bytes, |m| match m {
                    Ok(m) => msgs.push((t, m)),
                    Err(_) => *bad += 1,
                });
            }
            Some("P") => {
                let (t, pin, high) = (num(f.next()), num(f.next()) as u32, num(f.next()) == 1);
                self.pins.push((t, pin, high));
            }
            Some("E") => {
                let words: Vec<&str> = f.collect();
                self.events.push((self.t_us, words.join(" ")));
            }
            Some("S") => {
                self.t_us = num(f.next());
                let on = num(f.next());
                self.enable = num(f.next()) == 1;
                self.max_usb_service_us = self.max_usb_service_us.max(num(f.next()));
                self.max_enable_gap_us = num(f.next());
                if num(f.next()) > 0 {
                    self.last_enable_edge_us = Some(self.t_us);
                }
                return Some(on);
            }
            _ => panic!("harness: unexpected line `{line}`"),
        }
        None
    }

    /// Run `ms` of emulated time.
    pub fn run_ms(&mut self, ms: u64) {
        for _ in 0..ms * 1000 / SLICE_US {
            self.step();
        }
    }

    /// Run until `done` holds or `ms` have passed; whether it held.
    pub fn run_until(&mut self, ms: u64, mut done: impl FnMut(&Emu) -> bool) -> bool {
        let end = self.t_us + ms * 1000;
        while self.t_us < end {
            if done(self) {
                return true;
            }
            self.step();
        }
        done(self)
    }

    /// Run `ms`, sending a heartbeat every `every_ms`.
    pub fn run_alive(&mut self, ms: u64, every_ms: u64) {
        let end = self.t_us + ms * 1000;
        while self.t_us < end {
            self.send(Command::Heartbeat);
            let stop = (self.t_us + every_ms * 1000).min(end);
            while self.t_us < stop {
                self.step();
            }
        }
    }

    /// Bytes the device sent since the last call.
    pub fn take_raw(&mut self) -> Vec<u8> {
        std::mem::take(&mut self.raw)
    }

    /// The first message since `from_us` that `pick` accepts.
    pub fn find<T>(
        &self,
        from_us: u64,
        pick: impl Fn(&DeviceMsg) -> Option<T>,
    ) -> Option<(u64, T)> {
        self.msgs
            .iter()
            .filter(|(t, _)| *t >= from_us)
            .find_map(|(t, m)| pick(m).map(|v| (*t, v)))
    }

    /// When `pin` last went to `high` at or after `from_us`.
    pub fn pin_went(&self, pin: u32, high: bool, from_us: u64) -> Option<u64> {
        self.pins
            .iter()
            .find(|(t, p, h)| *t >= from_us && *p == pin && *h == high)
            .map(|x| x.0)
    }

    /// Whether `pin` was ever high at or after `from_us`.
    pub fn pin_high_since(&self, pin: u32, from_us: u64) -> bool {
        self.pin_went(pin, true, from_us).is_some()
    }

    /// The harness's events containing `text`, with their times.
    pub fn events_with(&self, text: &str) -> Vec<u64> {
        self.events
            .iter()
            .filter(|(_, e)| e.contains(text))
            .map(|(t, _)| *t)
            .collect()
    }
}

impl Drop for Emu {
    fn drop(&mut self) {
        let _ = self.stdin.write_all(b"Q\n");
        let _ = self.stdin.flush();
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}
