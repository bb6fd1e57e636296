//! When each part of a rig calibration was last done: one UTC stamp per calibration step,
//! written as RFC 3339 in the calibration file, and the age that decides whether a bench may
//! record with it.

use serde::{Deserialize, Deserializer, Serialize, Serializer};

use crate::timestamps;

/// A moment, seconds since 1970 UTC.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub struct Stamp(pub u64);

impl Stamp {
    /// Now.
    pub fn now() -> Stamp {
        Stamp(
            std::time::SystemTime::now()
                .duration_since(std::time::UNIX_EPOCH)
                .map(|d| d.as_secs())
                .unwrap_or(0),
        )
    }

    /// Days from this stamp to `now`.
    pub fn age_days(self, now: Stamp) -> f64 {
        (now.0 as f64 - self.0 as f64) / 86_400.0
    }
}

impl std::fmt::Display for Stamp {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&timestamps::format_utc(self.0))
    }
}

impl Serialize for Stamp {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(&self.to_string())
    }
}

impl<'de> Deserialize<'de> for Stamp {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Stamp, D::Error> {
        let text = String::deserialize(d)?;
        let mut c = timestamps::Clock::default();
        // a clock gives seconds from its first stamp: measure from the epoch instead
        c.seconds("1970-01-01T00:00:00Z");
        c.seconds(&text)
            .filter(|s| *s >= 0.0)
            .map(|s| Stamp(s as u64))
            .ok_or_else(|| {
                serde::de::Error::custom(format!(
                    "`{text}` is not a UTC time like 2026-12-02T04:30:00Z"
                ))
            })
    }
}

/// The calibration steps and when each was last done.
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
pub struct Dates {
    /// Hall probe zero.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub hall_zero: Option<Stamp>,
    /// Hall probe offset drift.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub offset_drift: Option<Stamp>,
    /// Hall probe sensitivity.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub sensitivity: Option<Stamp>,
    /// The probe's own temperature coefficient.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub probe_tc: Option<Stamp>,
    /// Thermocouple at the ice point.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub ice_point: Option<Stamp>,
    /// Thermocouple in boiling water.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub boiling_point: Option<Stamp>,
    /// Gap and standoff.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub gap: Option<Stamp>,
    /// The fixture's identification.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub fixture: Option<Stamp>,
}

impl Dates {
    /// The steps a bench needs before it records, with their stamps.
    pub fn required(&self) -> [(&'static str, Option<Stamp>); 4] {
        [
            ("zero", self.hall_zero),
            ("sensitivity", self.sensitivity),
            ("ice-point", self.ice_point),
            ("gap", self.gap),
        ]
    }

    /// The oldest dated step's stamp (None: no step dated).
    pub fn oldest(&self) -> Option<Stamp> {
        [
            self.hall_zero,
            self.offset_drift,
            self.sensitivity,
            self.probe_tc,
            self.ice_point,
            self.boiling_point,
            self.gap,
        ]
        .into_iter()
        .flatten()
        .min_by_key(|s| s.0)
    }

    /// Whether no step has a date.
    pub fn is_empty(&self) -> bool {
        *self == Dates::default()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_stamp_survives_its_text() {
        let s = Stamp(1_795_000_000);
        let text = toml::to_string(&Dates {
            gap: Some(s),
            ..Dates::default()
        })
        .unwrap();
        assert!(text.contains("gap = \"2026-"), "{text}");
        let back: Dates = toml::from_str(&text).unwrap();
        assert_eq!(back.gap, Some(s));
        assert!(toml::from_str::<Dates>("gap = \"yesterday\"").is_err());
    }
}
