//! Heating profiles: TOML ramp-and-hold segments and the built-in ones. What a profile may do
//! to a given part (the clamp to its safe peak) is [`crate::test_plan`].

use std::path::Path;

use remanent_protocol::{Profile, Segment, Segments, MAX_SEGMENTS};
use serde::{Deserialize, Serialize};

/// One segment: ramp to a target at a rate, then hold.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct SegmentSpec {
    /// Target, °C.
    #[serde(rename = "target_C")]
    pub target_c: f64,
    /// Ramp rate, °C/min (0: step).
    #[serde(rename = "ramp_C_per_min")]
    pub ramp_c_per_min: f64,
    /// Hold once the target is reached, s.
    pub hold_s: f64,
}

/// A named profile.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ProfileSpec {
    /// Short name.
    pub name: String,
    /// What it is for.
    pub description: String,
    /// The run's temperature limit, °C; the firmware refuses anything above it.
    #[serde(rename = "limit_C")]
    pub limit_c: f64,
    /// The segments, in order.
    #[serde(rename = "segment")]
    pub segments: Vec<SegmentSpec>,
}

/// A profile is unusable.
#[derive(Debug, thiserror::Error)]
pub enum ProfileError {
    /// Could not read it.
    #[error("cannot read profile {path}: {source}")]
    Io {
        /// The file.
        path: String,
        /// Why.
        source: std::io::Error,
    },
    /// Not valid TOML for a profile.
    #[error("profile {path} is not valid: {reason}")]
    Parse {
        /// The file.
        path: String,
        /// Why (unknown keys with their lines, every missing key).
        reason: String,
    },
    /// Not a built-in name and no such file.
    #[error(
        "no built-in profile or file called `{0}` (built in: inspect, rapid, quick-alpha, exposure, curie-sweep)"
    )]
    Unknown(String),
    /// Structurally wrong.
    #[error("profile `{name}`: {problem}")]
    Invalid {
        /// Profile name.
        name: String,
        /// What is wrong.
        problem: String,
    },
    /// Would heat the magnet above its safe test peak.
    #[error(
        "profile `{name}` reaches {max_c:.0} °C, above the safe test peak of {magnet} ({safe_c:.0} °C: {why}): \
         the part is likely to lose flux irreversibly and could not be returned to stock. Pass --allow-over-rating if that is the point of the test"
    )]
    OverRating {
        /// Profile name.
        name: String,
        /// Magnet id.
        magnet: String,
        /// Highest target, °C.
        max_c: f64,
        /// The safe peak, °C.
        safe_c: f64,
        /// What set the safe peak.
        why: String,
    },
}

fn seg(target_c: f64, ramp_c_per_min: f64, hold_s: f64) -> SegmentSpec {
    SegmentSpec {
        target_c,
        ramp_c_per_min,
        hold_s,
    }
}

/// The inspection profile's peak when the part allows more, °C: above it a 15-minute test
/// gains little for α (tables quote 20…100 or 20…150 °C) and the cool-down costs more.
pub const INSPECT_TOP_C: f64 = 120.0;
/// How long the inspection profile holds its return reference at most, s (the record ends
/// sooner once the analysis has what it needs): the whole profile stays within 15 minutes
/// of fixture time, its rest before heating included.
pub const INSPECT_RETURN_HOLD_S: f64 = 180.0;
/// Where the inspection profile takes its return reference, °C: close enough to the first
/// reference for α to bridge them within the loss's ±0.1 %, reached by free cooling.
pub const INSPECT_RETURN_C: f64 = 32.0;

/// The inspection profile with its peak at `peak_c` (at most [`INSPECT_TOP_C`]): 20 s reference
/// at 25 °C, a 25 °C/min ramp, 90 s hold, heater off down to the return reference — at
/// [`INSPECT_RETURN_C`], or lower for a low peak, so the return stays low in the range
/// of the excursion (a fifth of it above 25 °C), where the analysis takes it as the return.
pub fn inspect(peak_c: f64) -> ProfileSpec {
    let peak_c = peak_c.min(INSPECT_TOP_C);
    let back_c = INSPECT_RETURN_C
        .min(25.0 + 0.2 * (peak_c - 25.0))
        .max(25.0)
        .floor();
    ProfileSpec {
        name: "inspect".into(),
        description: format!("non-destructive inspection, α and loss in about 15 minutes: 20 s reference at 25 °C, ramp at 25 °C/min to the part's safe test peak (here {peak_c:.0} °C; at most {INSPECT_TOP_C:.0} °C), 90 s hold, heater off until {back_c:.0} °C, up to {INSPECT_RETURN_HOLD_S:.0} s of return reference there (the record ends as soon as the analysis has what it needs)"),
        limit_c: peak_c + 15.0,
        segments: vec![seg(25.0, 0.0, 20.0), seg(peak_c, 25.0, 90.0), seg(back_c, 0.0, INSPECT_RETURN_HOLD_S)],
    }
}

/// The built-in profiles (each at its own peak; a part's safe peak clamps them).
pub fn builtin(name: &str) -> Option<ProfileSpec> {
    Some(match name {
        "inspect" => inspect(INSPECT_TOP_C),
        "quick-alpha" => ProfileSpec {
            name: "quick-alpha".into(),
            description: "reversible coefficient: reference at 25 °C, ramp to 100 °C and back at 5 °C/min, reference again".into(),
            limit_c: 115.0,
            segments: vec![seg(25.0, 0.0, 300.0), seg(100.0, 5.0, 240.0), seg(25.0, 5.0, 300.0)],
        },
        "rapid" => ProfileSpec {
            name: "rapid".into(),
            description: "α and loss in 11–15 minutes: 20 s reference at 25 °C, ramp to 100 °C at 25 °C/min, 90 s hold, heater off until 38 °C, up to 5 min of return reference there (the record ends as soon as the analysis has what it needs)".into(),
            limit_c: 115.0,
            segments: vec![seg(25.0, 0.0, 20.0), seg(100.0, 25.0, 90.0), seg(38.0, 0.0, 300.0)],
        },
        "exposure" => ProfileSpec {
            name: "exposure".into(),
            description: "irreversible loss: reference at 25 °C, 30 min at 150 °C, back to 25 °C, reference again".into(),
            limit_c: 165.0,
            segments: vec![seg(25.0, 0.0, 300.0), seg(150.0, 10.0, 1800.0), seg(25.0, 10.0, 300.0)],
        },
        "curie-sweep" => ProfileSpec {
            name: "curie-sweep".into(),
            description: "slow ramp to 340 °C to find where the field collapses (destroys NdFeB and ferrite)".into(),
            limit_c: 350.0,
            segments: vec![seg(25.0, 0.0, 120.0), seg(340.0, 5.0, 60.0), seg(25.0, 20.0, 60.0)],
        },
        _ => return None,
    })
}

/// The reference fixture's natural cooling time constant toward room temperature, s (from the
/// virtual rig's `rapid` runs in the throughput benchmark): what a step down costs.
pub const FREE_COOLING_TAU_S: f64 = 133.0;

/// A profile file of one's own, as `remanent profiles` shows it (every key required; the limit
/// is the run's, which the firmware enforces).
pub const EXAMPLE_FILE: &str = r#"name = "warm-check"
description = "reference at 25 °C, 10 min at 60 °C, back to 25 °C"
limit_C = 70

[[segment]]
target_C = 25
ramp_C_per_min = 0      # 0: a step
hold_s = 120

[[segment]]
target_C = 60
ramp_C_per_min = 10
hold_s = 600

[[segment]]
target_C = 25
ramp_C_per_min = 5
hold_s = 300
"#;

/// Names of the built-in profiles.
pub const BUILTIN_NAMES: [&str; 5] = ["inspect", "rapid", "quick-alpha", "exposure", "curie-sweep"];

impl ProfileSpec {
    /// A built-in name, or a TOML file.
    pub fn resolve(name_or_path: &str) -> Result<ProfileSpec, ProfileError> {
        if let Some(p) = builtin(name_or_path) {
            return Ok(p);
        }
        let path = Path::new(name_or_path);
        if !path.exists() {
            return Err(ProfileError::Unknown(name_or_path.into()));
        }
        let p = path.display().to_string();
        let text = std::fs::read_to_string(path).map_err(|source| ProfileError::Io {
            path: p.clone(),
            source,
        })?;
        let parse = |reason: String| ProfileError::Parse {
            path: p.clone(),
            reason,
        };
        crate::formats::check(crate::formats::Kind::Profile, &text).map_err(parse)?;
        let spec: ProfileSpec =
            toml::from_str(&text).map_err(|e| parse(crate::formats::bounded(&e.to_string())))?;
        spec.validate()?;
        Ok(spec)
    }

    /// Highest target, °C.
    pub fn max_target_c(&self) -> f64 {
        self.segments
            .iter()
            .map(|s| s.target_c)
            .fold(f64::NEG_INFINITY, f64::max)
    }

    /// Structural checks.
    pub fn validate(&self) -> Result<(), ProfileError> {
        let bad = |problem: String| {
            Err(ProfileError::Invalid {
                name: self.name.clone(),
                problem,
            })
        };
        if self.segments.is_empty() {
            return bad("it has no segments".into());
        }
        if self.segments.len() > MAX_SEGMENTS {
            return bad(format!(
                "{} segments; the firmware takes at most {MAX_SEGMENTS}",
                self.segments.len()
            ));
        }
        for (i, s) in self.segments.iter().enumerate() {
            if !(-50.0..=400.0).contains(&s.target_c) || s.ramp_c_per_min < 0.0 || s.hold_s < 0.0 {
                return bad(format!(
                    "segment {} has a target, rate or hold out of range",
                    i + 1
                ));
            }
            if s.target_c > self.limit_c {
                return bad(format!(
                    "segment {} targets {:.1} °C, above the profile's limit of {:.1} °C",
                    i + 1,
                    s.target_c,
                    self.limit_c
                ));
            }
        }
        Ok(())
    }

    /// Every target lowered to at most `peak_c`, the limit to 15 K above it; `None` when
    /// nothing had to change.
    pub fn clamped(&self, peak_c: f64) -> Option<ProfileSpec> {
        if self.max_target_c() <= peak_c {
            return None;
        }
        let mut p = self.clone();
        for s in &mut p.segments {
            s.target_c = s.target_c.min(peak_c);
        }
        p.limit_c = p.limit_c.min(peak_c + 15.0);
        Some(p)
    }

    /// The shortest the device can take over the profile, s: every hold, and every ramp at its
    /// rate from the previous target (the first ramp's start is unknown: not counted).
    pub fn shortest_duration_s(&self) -> f64 {
        let mut t = 0.0;
        let mut from: Option<f64> = None;
        for s in &self.segments {
            if let (Some(f), true) = (from, s.ramp_c_per_min > 0.0) {
                t += (s.target_c - f).abs() / s.ramp_c_per_min * 60.0;
            }
            t += s.hold_s;
            from = Some(s.target_c);
        }
        t
    }

    /// Rough duration, s, assuming ramps are followed (cooling near ambient takes longer).
    pub fn nominal_duration_s(&self, start_c: f64) -> f64 {
        let mut t = 0.0;
        let mut from = start_c;
        for s in &self.segments {
            if s.ramp_c_per_min > 0.0 {
                t += (s.target_c - from).abs() / s.ramp_c_per_min * 60.0;
            } else if s.target_c < from - 1.0 && s.target_c + 1.0 > start_c {
                // a step down: the fixture cools on its own to within a degree of the target
                t += FREE_COOLING_TAU_S * ((from - start_c) / (s.target_c + 1.0 - start_c)).ln();
            }
            t += s.hold_s;
            from = s.target_c;
        }
        t
    }

    /// The wire form.
    pub fn to_wire(&self) -> Profile {
        let mut segments = Segments::default();
        for s in &self.segments {
            let _ = segments.0.push(Segment {
                target_tenth_c: remanent_physics::wire::tenths_from_c(s.target_c),
                ramp_tenth_c_per_min: (s.ramp_c_per_min * 10.0).round() as u16,
                hold_s: s.hold_s.round() as u32,
            });
        }
        Profile {
            limit_tenth_c: remanent_physics::wire::tenths_from_c(self.limit_c),
            segments,
        }
    }
}
