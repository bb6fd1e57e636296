//! The whole virtual fixture: thermal network, magnet, probe, converter chips and faults,
//! advanced in time by the caller and read by the simulated peripherals.

use remanent_protocol::thermo_word::ThermoFault;
use remanent_protocol::ThermoWord;
use serde::{Deserialize, Serialize};

use crate::magnet::{Magnet, MagnetState};
use crate::probe::{HallParams, NtcParams, NTC_REFERENCE};
use crate::rng::Rng;
use crate::scene::Scene;
use crate::thermal::{ambient_c, ThermalParams, ThermalState};
use remanent_physics::{adc, standoff, type_k};

/// Everything fixed about a rig.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct RigParams {
    /// Thermal network.
    pub thermal: ThermalParams,
    /// Hall probe.
    pub hall: HallParams,
    /// Probe thermistor.
    pub ntc: NtcParams,
    /// Full scale of the Hall ADC range, mV.
    pub hall_full_scale_mv: f64,
    /// Full scale of the thermistor ADC range, mV.
    pub probe_full_scale_mv: f64,
    /// Cold junction sits this far above ambient (board self-heating), K.
    pub cold_junction_rise_k: f64,
    /// Thermocouple converter noise, °C RMS.
    pub tc_noise_c: f64,
    /// The switch between the heater output and the heater.
    #[serde(default)]
    pub switch: HeaterSwitch,
    /// The thermocouple's own error at its junction (a wire off its table), K.
    #[serde(default)]
    pub tc_offset_c: f64,
}

/// The heater's switch.
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
pub enum HeaterSwitch {
    /// A DC switch (a MOSFET): the power follows the duty.
    #[default]
    Dc,
    /// A zero-crossing relay on the mains: at each zero crossing it conducts for the next
    /// half-cycle if its input is high then, and not otherwise.
    ZeroCross {
        /// One mains half-cycle, s (0.01 at 50 Hz).
        half_cycle_s: f64,
    },
}

/// Where in its period a fast PWM stands at every zero crossing: a PWM whose period divides
/// the mains half-cycle (500 Hz into 50 Hz) meets each crossing at the same phase, so the relay
/// conducts always or never — a power unrelated to the duty. The model takes mid-period.
pub const PWM_PHASE_AT_ZERO_CROSSING: f64 = 0.5;

impl RigParams {
    /// The reference rig.
    pub const REFERENCE: RigParams = RigParams {
        thermal: ThermalParams::REFERENCE,
        hall: HallParams::REFERENCE,
        ntc: NTC_REFERENCE,
        hall_full_scale_mv: 2048.0,
        probe_full_scale_mv: 4096.0,
        cold_junction_rise_k: 3.0,
        tc_noise_c: 0.08,
        switch: HeaterSwitch::Dc,
        tc_offset_c: 0.0,
    };
}

/// Faults a test or a user can inject.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct RigFaults {
    /// The thermocouple reads open from this time on, s.
    pub thermocouple_open_at_s: Option<f64>,
    /// The heater delivers nothing from this time on, s.
    pub heater_detached_at_s: Option<f64>,
    /// The switch fails on from this time on: full power whatever the outputs, s.
    pub switch_stuck_on_at_s: Option<f64>,
    /// The thermocouple slips off the plate at this time: its junction cools toward the air
    /// by the fixture (ambient + [`DETACHED_AIR_RISE_K`]), which warms at
    /// [`DETACHED_AIR_WARMING_K_PER_S`], s.
    pub thermocouple_detached_at_s: Option<f64>,
    /// The converter loses power at this time: its data line reads all zeros, s.
    pub converter_absent_at_s: Option<f64>,
}

/// Air near a hot fixture warming, as a detached thermocouple sees it: 1.5 °C/min.
pub const DETACHED_AIR_WARMING_K_PER_S: f64 = 1.5 / 60.0;
/// That air starts this far above ambient, K.
pub const DETACHED_AIR_RISE_K: f64 = 10.0;
/// A bare junction in still air follows it with this time constant, s.
pub const DETACHED_JUNCTION_TAU_S: f64 = 20.0;

/// The virtual fixture with a magnet in it.
#[derive(Debug, Clone)]
pub struct Rig {
    /// Fixed parameters.
    pub params: RigParams,
    /// The magnet.
    pub magnet: Magnet,
    /// What has happened to the magnet.
    pub magnet_state: MagnetState,
    /// Temperatures.
    pub thermal: ThermalState,
    /// Injected faults.
    pub faults: RigFaults,
    /// Heater PWM duty, 0..=1.
    pub duty: f64,
    /// Heater enable pin.
    pub enabled: bool,
    /// Whether a magnet is in the fixture (a survey takes them in and out).
    pub present: bool,
    /// Where the sensors are (a calibration step moves them).
    pub scene: Scene,
    /// A zero-crossing relay is conducting this half-cycle.
    relay_on: bool,
    /// Plate temperature when the thermocouple came off, °C.
    detached_from_c: Option<f64>,
    time_s: f64,
    rng: Rng,
}

impl Rig {
    /// A rig at ambient with `magnet` in it.
    pub fn new(params: RigParams, magnet: Magnet, seed: u64) -> Self {
        let t0 = ambient_c(&params.thermal, 0.0);
        Rig {
            params,
            magnet,
            magnet_state: MagnetState::new(t0),
            thermal: ThermalState::uniform(t0),
            faults: RigFaults::default(),
            duty: 0.0,
            enabled: false,
            present: true,
            scene: Scene::Fixture,
            relay_on: false,
            detached_from_c: None,
            time_s: 0.0,
            rng: Rng::new(seed),
        }
    }

    /// Simulated time, s.
    pub fn time_s(&self) -> f64 {
        self.time_s
    }

    /// Simulated time, ms (the device clock).
    pub fn time_ms(&self) -> u32 {
        (self.time_s * 1000.0) as u64 as u32
    }

    /// Ambient now, °C.
    pub fn ambient_c(&self) -> f64 {
        ambient_c(&self.params.thermal, self.time_s)
    }

    fn fault_active(&self, at_s: Option<f64>) -> bool {
        at_s.is_some_and(|t| self.time_s >= t)
    }

    /// Heater power now, W.
    pub fn heater_power_w(&self) -> f64 {
        let full = self.params.thermal.heater_w;
        if self.fault_active(self.faults.switch_stuck_on_at_s) {
            return full;
        }
        if !self.enabled || self.fault_active(self.faults.heater_detached_at_s) {
            return 0.0;
        }
        match self.params.switch {
            HeaterSwitch::Dc => self.duty.clamp(0.0, 1.0) * full,
            HeaterSwitch::ZeroCross { .. } => {
                if self.relay_on {
                    full
                } else {
                    0.0
                }
            }
        }
    }

    /// The relay's input level at a zero crossing: a fully-on or fully-off output as it is,
    /// a fast PWM at the phase it always meets the crossing with.
    fn relay_input_high(&self) -> bool {
        self.duty >= 1.0 || self.duty > PWM_PHASE_AT_ZERO_CROSSING
    }

    /// Time to the next zero crossing, s (infinite for a DC switch).
    fn to_next_crossing_s(&self) -> f64 {
        match self.params.switch {
            HeaterSwitch::Dc => f64::INFINITY,
            HeaterSwitch::ZeroCross { half_cycle_s } => {
                let into = self.time_s % half_cycle_s;
                let left = half_cycle_s - into;
                if left < 1e-9 {
                    half_cycle_s
                } else {
                    left
                }
            }
        }
    }

    /// Advance by `dt_s`, in steps of at most 50 ms, switching a zero-crossing relay at each
    /// crossing.
    pub fn advance(&mut self, dt_s: f64) {
        let mut left = dt_s;
        while left > 1e-12 {
            let to_crossing = self.to_next_crossing_s();
            if to_crossing >= self.params.switch_half_cycle_s() - 1e-9 {
                self.relay_on = self.relay_input_high();
            }
            let h = left.min(0.05).min(to_crossing);
            let amb = self.ambient_c();
            let power = self.heater_power_w();
            self.thermal.advance(&self.params.thermal, amb, power, h);
            self.magnet_state
                .advance(&self.magnet, self.thermal.magnet_c, h);
            if let Some(p) = self.scene.probe_after(self.thermal.probe_c, h) {
                self.thermal.probe_c = p;
            }
            self.time_s += h;
            left -= h;
        }
    }

    /// Br now, T.
    pub fn br_t(&self) -> f64 {
        self.magnet_state.br_t(&self.magnet, self.thermal.magnet_c)
    }

    /// Standoff temperature (mean of its two ends), °C.
    pub fn standoff_c(&self) -> f64 {
        standoff::standoff_c(self.thermal.plate_c, self.thermal.probe_c)
    }

    /// Put another magnet in the fixture, at the fixture's temperature, with an earlier
    /// irreversible loss (a fraction); `None` empties the fixture.
    pub fn swap(&mut self, magnet: Option<(Magnet, f64)>) {
        match magnet {
            Some((m, loss)) => {
                self.magnet = m;
                self.magnet_state = MagnetState {
                    max_c: self.thermal.plate_c,
                    irreversible: loss,
                };
                self.thermal.magnet_c = self.thermal.plate_c;
                self.present = true;
            }
            None => self.present = false,
        }
    }

    /// True field at the sensing element, mT.
    pub fn field_mt(&self) -> f64 {
        let fixture = if self.present {
            let gap = self.params.hall.standoff.gap_at_mm(self.standoff_c());
            self.br_t() * 1000.0 * self.magnet.shape.bz_per_br(gap)
        } else {
            0.0
        };
        self.scene.field_mt(fixture)
    }

    /// One Hall conversion, with noise.
    pub fn hall_code(&mut self) -> i16 {
        let mv = self
            .params
            .hall
            .sensor
            .output_mv(self.field_mt(), self.thermal.probe_c)
            + self.params.hall.noise_mv * self.rng.gauss();
        adc::code(mv, self.params.hall_full_scale_mv)
    }

    /// One thermistor conversion.
    pub fn probe_code(&mut self) -> i16 {
        let mv = self.params.ntc.divider_mv(self.thermal.probe_c) + 0.05 * self.rng.gauss();
        adc::code(mv, self.params.probe_full_scale_mv)
    }

    /// Cold-junction temperature, °C.
    pub fn cold_junction_c(&self) -> f64 {
        self.ambient_c() + self.params.cold_junction_rise_k
    }

    /// The thermocouple converter's word: its linear approximation, quantized, with faults.
    pub fn thermo_word(&mut self) -> ThermoWord {
        if self.fault_active(self.faults.converter_absent_at_s) {
            return ThermoWord(0);
        }
        let cj = self.cold_junction_c() + 0.03 * self.rng.gauss();
        let open = self
            .faults
            .thermocouple_open_at_s
            .is_some_and(|t| self.time_s >= t);
        let cj_counts = libm::round(cj * 16.0) as i16;
        if open {
            return ThermoWord::from_parts(0, cj_counts, Some(ThermoFault::Open));
        }
        let junction_c = self.thermocouple_junction_c() + self.params.tc_offset_c;
        let reported =
            type_k::chip_reading_c(junction_c, cj) + self.params.tc_noise_c * self.rng.gauss();
        ThermoWord::from_parts(libm::round(reported * 4.0) as i16, cj_counts, None)
    }

    /// Where the thermocouple's junction is: on the plate, or in the air once detached.
    fn thermocouple_junction_c(&mut self) -> f64 {
        if let Some(t) = self.scene.junction_c() {
            return t;
        }
        let Some(at_s) = self.faults.thermocouple_detached_at_s else {
            return self.thermal.junction_c;
        };
        if self.time_s < at_s {
            return self.thermal.junction_c;
        }
        let from_c = *self.detached_from_c.get_or_insert(self.thermal.plate_c);
        let since_s = self.time_s - at_s;
        let air_c = self.ambient_c() + DETACHED_AIR_RISE_K + DETACHED_AIR_WARMING_K_PER_S * since_s;
        air_c + (from_c - air_c) * libm::exp(-since_s / DETACHED_JUNCTION_TAU_S)
    }
}

impl RigParams {
    /// The switch's mains half-cycle, s (infinite for a DC switch).
    pub fn switch_half_cycle_s(&self) -> f64 {
        match self.switch {
            HeaterSwitch::Dc => f64::INFINITY,
            HeaterSwitch::ZeroCross { half_cycle_s } => half_cycle_s,
        }
    }
}
