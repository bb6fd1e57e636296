//! Messages from the host to the device.

use heapless::Vec;
use postcard::experimental::max_size::MaxSize;
use serde::{Deserialize, Serialize};

use crate::handshake::Version;

/// A command with the id the device echoes in its acknowledgement or refusal.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize, MaxSize)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct HostMsg {
    /// Chosen by the host; echoed back.
    pub id: u16,
    /// What to do.
    pub command: Command,
}

/// Number of [`Command`] variants.
pub const COMMAND_VARIANTS: u8 = 11;

/// Host commands. Every command also counts as a heartbeat.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize, MaxSize)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Command {
    /// Start of the handshake, with the host's version.
    Hello(Version),
    /// Run a heating profile.
    Start(Profile),
    /// Heater off, back to idle.
    Stop,
    /// Hold one temperature until stopped.
    Manual {
        /// Setpoint, 0.1 °C.
        setpoint_tenth_c: i16,
        /// The run's limit, 0.1 °C (at most the compiled-in ceiling).
        limit_tenth_c: i16,
    },
    /// Nothing to do: keeps the link alive.
    Heartbeat,
    /// Change the sampling period and oversampling.
    Configure(SamplingConfig),
    /// Clear a latched fault (refused while its cause persists).
    ClearFault,
    /// Trip an emergency stop as if an interlock had fired (drills and tests).
    InjectFault,
    /// Make the firmware fail as a bug would, to prove the safe state (test builds only).
    Drill(Drill),
    /// The fixture as its identification found it (`remanent calibrate fixture`): the
    /// interlocks judge the heating against it. Sent at every connection; refused out of
    /// bounds or during a run.
    Fixture(FixtureModel),
    /// Drive the heater at a fixed duty until stopped or the limit is reached (the
    /// identification's steps); capped like any heating, and by the model-free cap while the
    /// fixture is not identified.
    Duty {
        /// Duty, % of full power.
        duty_pct: u8,
        /// The run's limit, 0.1 °C.
        limit_tenth_c: i16,
    },
}

/// A fixture's identified thermal behaviour, in the terms a temperature record determines.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, MaxSize)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct FixtureModel {
    /// The block's heating rate at full duty and nominal mains, mK/s.
    pub rate_mk_per_s: u32,
    /// Its cooling time constant toward ambient, s.
    pub cooling_tau_s: u32,
    /// How far the thermocouple lags the block, ms.
    pub lag_ms: u32,
    /// How the heating rate falls as the block warms: its fraction lost per kelvin above
    /// 20 °C, parts per million (a heater's resistance rising, the block's heat capacity too).
    pub rate_fall_ppm_per_k: u32,
}

/// A failure of the firmware itself, for drills on test builds.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, MaxSize)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Drill {
    /// Panic in the main loop.
    Panic,
    /// Stop completing control periods (a hung loop).
    Hang,
    /// Recurse until the stack overflows into its guard.
    StackOverflow,
}

/// Sampling settings.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, MaxSize)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SamplingConfig {
    /// Period, ms (10..=250).
    pub period_ms: u16,
    /// Conversions averaged per sample (1..=16).
    pub oversample: u8,
}

/// Most segments in one profile.
pub const MAX_SEGMENTS: usize = 16;

/// A heating profile: ramp-and-hold segments, run in order, then the heater turns off.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize, MaxSize)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Profile {
    /// The run's own temperature limit, 0.1 °C; at most the firmware's ceiling.
    pub limit_tenth_c: i16,
    /// The segments.
    pub segments: Segments,
}

/// Up to [`MAX_SEGMENTS`] segments.
#[derive(Debug, Clone, PartialEq, Eq, Default, Serialize, Deserialize)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Segments(pub Vec<Segment, MAX_SEGMENTS>);

impl MaxSize for Segments {
    // one varint length byte (MAX_SEGMENTS < 128) and the elements
    const POSTCARD_MAX_SIZE: usize = 1 + MAX_SEGMENTS * Segment::POSTCARD_MAX_SIZE;
}

/// Ramp from wherever the previous segment ended to `target` at `ramp` per minute, then hold.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, MaxSize)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Segment {
    /// Target temperature, 0.1 °C.
    pub target_tenth_c: i16,
    /// Ramp rate, 0.1 °C per minute (0: step straight to the target).
    pub ramp_tenth_c_per_min: u16,
    /// Hold at the target once reached, s.
    pub hold_s: u32,
}
