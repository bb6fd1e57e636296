//! Runs a host-supplied profile: for each segment, ramp the setpoint to its target at its
//! rate, wait for the reading to arrive, then hold for the segment's time.

use remanent_protocol::{Profile, Segment};

/// Where a segment is.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Phase {
    /// Setpoint moving toward the target.
    Ramp,
    /// Setpoint at the target, reading not yet within the soak band; since when.
    Settle {
        /// When the setpoint reached the target, ms.
        since_ms: u32,
    },
    /// Holding; since when.
    Hold {
        /// When the hold began, ms.
        since_ms: u32,
    },
}

/// Profile progress.
#[derive(Debug, Clone)]
pub struct ProfileRunner {
    profile: Profile,
    index: usize,
    phase: Phase,
    ramp_from_tenth_c: i16,
    ramp_start_ms: u32,
    setpoint_tenth_c: i16,
    soak_band_tenth_c: i16,
    soak_wait_max_ms: u32,
}

impl ProfileRunner {
    /// Start at `now_ms` from the present temperature.
    pub fn start(
        profile: Profile,
        now_ms: u32,
        temp_tenth_c: i16,
        soak_band_tenth_c: i16,
        soak_wait_max_ms: u32,
    ) -> Self {
        ProfileRunner {
            profile,
            index: 0,
            phase: Phase::Ramp,
            ramp_from_tenth_c: temp_tenth_c,
            ramp_start_ms: now_ms,
            setpoint_tenth_c: temp_tenth_c,
            soak_band_tenth_c,
            soak_wait_max_ms,
        }
    }

    /// Index of the running segment.
    pub fn segment_index(&self) -> usize {
        self.index
    }

    /// Current phase.
    pub fn phase(&self) -> Phase {
        self.phase
    }

    /// How fast the setpoint moves now, °C/s (negative going down; 0 outside a ramp).
    pub fn ramp_c_per_s(&self) -> f32 {
        match (self.phase, self.segment()) {
            (Phase::Ramp, Some(seg)) if seg.ramp_tenth_c_per_min > 0 => {
                let rate = f32::from(seg.ramp_tenth_c_per_min) / 600.0;
                if seg.target_tenth_c < self.ramp_from_tenth_c {
                    -rate
                } else {
                    rate
                }
            }
            _ => 0.0,
        }
    }

    fn segment(&self) -> Option<Segment> {
        self.profile.segments.0.get(self.index).copied()
    }

    /// Advance to `now_ms` with the present reading; the setpoint, or `None` once finished.
    pub fn update(&mut self, now_ms: u32, temp_tenth_c: i16) -> Option<i16> {
        loop {
            let seg = self.segment()?;
            match self.phase {
                Phase::Ramp => {
                    let elapsed_ms = now_ms.wrapping_sub(self.ramp_start_ms) as i64;
                    let span = i64::from(seg.target_tenth_c) - i64::from(self.ramp_from_tenth_c);
                    let moved = if seg.ramp_tenth_c_per_min == 0 {
                        span.abs()
                    } else {
                        elapsed_ms * i64::from(seg.ramp_tenth_c_per_min) / 60_000
                    };
                    if moved >= span.abs() {
                        self.setpoint_tenth_c = seg.target_tenth_c;
                        self.phase = Phase::Settle { since_ms: now_ms };
                        continue;
                    }
                    self.setpoint_tenth_c =
                        (i64::from(self.ramp_from_tenth_c) + moved * span.signum()) as i16;
                    return Some(self.setpoint_tenth_c);
                }
                Phase::Settle { since_ms } => {
                    let close = (temp_tenth_c - seg.target_tenth_c).abs() <= self.soak_band_tenth_c;
                    let waited = now_ms.wrapping_sub(since_ms) >= self.soak_wait_max_ms;
                    if close || waited {
                        self.phase = Phase::Hold { since_ms: now_ms };
                        continue;
                    }
                    return Some(self.setpoint_tenth_c);
                }
                Phase::Hold { since_ms } => {
                    if now_ms.wrapping_sub(since_ms) >= seg.hold_s.saturating_mul(1000) {
                        self.index += 1;
                        self.phase = Phase::Ramp;
                        self.ramp_from_tenth_c = self.setpoint_tenth_c;
                        self.ramp_start_ms = now_ms;
                        continue;
                    }
                    return Some(self.setpoint_tenth_c);
                }
            }
        }
    }
}
