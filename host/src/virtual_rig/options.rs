//! How a virtual rig runs (its magnet, faults, speed, link damage, survey set), what it knows
//! that the host can only estimate, the firmware settings of the virtual board, and the
//! calibration it hands over: its own true constants.

use remanent_firmware::FirmwareConfig;
use remanent_rig_model::rng::Rng;
use remanent_rig_model::{Magnet, RigFaults, RigParams};

use crate::calibration::{
    Calibration, GapCalibration, HallCalibration, NtcCalibration, ThermocoupleCalibration,
};

/// Simulated time per step, s.
pub(super) const STEP_S: f64 = 0.01;

/// How to run a virtual rig.
#[derive(Debug, Clone)]
pub struct VirtualRigOptions {
    /// The magnet in the fixture.
    pub magnet: Magnet,
    /// Rig parameters.
    pub params: RigParams,
    /// Noise seed.
    pub seed: u64,
    /// Simulated seconds per wall-clock second.
    pub speed: f64,
    /// Injected faults (times in simulated seconds).
    pub faults: RigFaults,
    /// Probability that a byte sent to the host has one bit flipped.
    pub link_flip_probability: f64,
    /// Probability that a byte sent to the host is lost.
    pub link_drop_probability: f64,
    /// Every byte to the host is lost between these device times, s (an outage).
    pub link_outage_s: Option<(f64, f64)>,
    /// Keep every sample the device sends, numbered, as the truth a test compares with.
    pub keep_sent: bool,
    /// A room-temperature survey: magnets (with an earlier irreversible loss, a fraction)
    /// placed in the fixture one after another, as a user would.
    pub survey: Vec<(Magnet, f64)>,
    /// How long each survey magnet stays in the fixture, s (an empty fixture for 8 s between).
    pub survey_dwell_s: f64,
    /// Whether the virtual board knows its fixture (the reference fixture is identified; a
    /// builder's own from `--fixture` is not, until the host sends the identification).
    pub identified: bool,
}

impl VirtualRigOptions {
    /// Defaults for `magnet`: reference rig, 60× speed, no faults.
    pub fn new(magnet: Magnet) -> Self {
        VirtualRigOptions {
            magnet,
            params: RigParams::REFERENCE,
            seed: 1,
            speed: 60.0,
            faults: RigFaults::default(),
            link_flip_probability: 0.0,
            link_drop_probability: 0.0,
            link_outage_s: None,
            keep_sent: false,
            survey: Vec::new(),
            survey_dwell_s: 20.0,
            identified: true,
        }
    }
}

/// What the rig knows that the host can only estimate (for tests and the demo's summary).
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct RigTruth {
    /// Simulated time, s.
    pub time_s: f64,
    /// Magnet temperature, °C.
    pub magnet_c: f64,
    /// Plate temperature, °C.
    pub plate_c: f64,
    /// Highest magnet temperature so far, °C.
    pub max_magnet_c: f64,
    /// Irreversible loss so far, fraction.
    pub irreversible: f64,
    /// Heater power, W.
    pub heater_w: f64,
    /// Bytes corrupted or dropped on the way to the host.
    pub bytes_damaged: u64,
}

/// A set of `n` copies of `magnet` with a realistic ±0.3 % spread in Br, where the 1-based
/// indices in `damaged` have lost `loss` (a fraction) of their flux.
pub fn survey_set(
    magnet: Magnet,
    n: usize,
    damaged: &[usize],
    loss: f64,
    seed: u64,
) -> Vec<(Magnet, f64)> {
    let mut rng = Rng::new(seed ^ 0xa5a5);
    (1..=n)
        .map(|i| {
            let mut m = magnet;
            m.br_20_t *= 1.0 + 0.003 * rng.gauss();
            (m, if damaged.contains(&i) { loss } else { 0.0 })
        })
        .collect()
}

/// The firmware settings the virtual board runs with.
pub fn virtual_config(speed: f64) -> FirmwareConfig {
    let mut cfg = FirmwareConfig::REFERENCE;
    let stretched = (1000.0 * speed).clamp(2000.0, 65_000.0) as u16;
    cfg.limits.heartbeat_timeout_ms = cfg.limits.heartbeat_timeout_ms.max(stretched);
    cfg
}

impl Calibration {
    /// The calibration of the built-in virtual rig: its model's true constants, with the
    /// uncertainties a careful calibration of a real rig would reach.
    pub fn virtual_rig(params: &RigParams) -> Calibration {
        Calibration {
            hall: HallCalibration {
                sensor: params.hall.sensor,
                sensitivity_tc_u_pct_per_c: 0.002,
                offset_tc_u_mv_per_c: 0.001,
                full_scale_mv: params.hall_full_scale_mv,
                offset_u_mv: 0.0,
                sensitivity_u_pct: 0.0,
            },
            gap: GapCalibration {
                standoff: params.hall.standoff,
                gap_u_mm: 0.05,
                standoff_cte_u_per_k: 1.0e-6,
            },
            ntc: NtcCalibration {
                thermistor: params.ntc,
                full_scale_mv: params.probe_full_scale_mv,
            },
            thermocouple: ThermocoupleCalibration {
                offset_c: 0.0,
                gain_tolerance_pct: 0.4,
                offset_u_c: 0.0,
            },
            fixture: None,
            dates: Default::default(),
        }
    }
}
