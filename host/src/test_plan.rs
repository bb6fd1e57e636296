//! What a test may do to the part in the fixture: its safe peak ([`crate::safe_peak`]) and the
//! profile held to it. A built-in profile is clamped to the safe peak; a profile file that goes
//! beyond it is refused; `--allow-over-rating` lets either go past it, and the test is then
//! marked: the part must be quarantined afterwards.

use crate::magnets::MagnetInfo;
use crate::profiles::{builtin, ProfileError, ProfileSpec};
use crate::safe_peak::{self, SafePeak};
use crate::specs::SpecTable;
use crate::units::{temp_q, Phrase};

/// A profile fitted to a part.
#[derive(Debug, Clone)]
pub struct TestPlan {
    /// The profile to run.
    pub profile: ProfileSpec,
    /// The part's safe peak.
    pub safe: SafePeak,
    /// A built-in profile's own peak, when the clamp lowered it, °C.
    pub clamped_from_c: Option<f64>,
    /// The profile goes beyond the safe peak (allowed on purpose).
    pub over_safe: bool,
}

/// Fit `name_or_path` to `magnet` by its grade in `specs`.
pub fn plan(
    name_or_path: &str,
    magnet: &MagnetInfo,
    specs: &SpecTable,
    allow_over: bool,
) -> Result<TestPlan, ProfileError> {
    let safe = safe_peak::for_part(magnet, specs.find(&magnet.grade));
    let is_builtin = builtin(name_or_path).is_some();
    let mut profile = ProfileSpec::resolve(name_or_path)?;
    let mut clamped_from_c = None;
    if name_or_path == "inspect" {
        // the inspection profile is made for the part: its peak is the safe peak
        profile = crate::profiles::inspect(safe.peak_c);
    } else if is_builtin && !allow_over {
        if let Some(c) = profile.clamped(safe.peak_c) {
            clamped_from_c = Some(profile.max_target_c());
            profile = c;
        }
    }
    let over_safe = profile.max_target_c() > safe.peak_c;
    if over_safe && !allow_over {
        return Err(ProfileError::OverRating {
            name: profile.name.clone(),
            magnet: magnet.id.clone(),
            max_c: profile.max_target_c(),
            safe_c: safe.peak_c,
            why: safe.explain().to_string(),
        });
    }
    Ok(TestPlan {
        profile,
        safe,
        clamped_from_c,
        over_safe,
    })
}

impl TestPlan {
    /// What the user reads before the record starts: the safe peak and why, the clamp, and
    /// the warning when the test goes beyond it.
    pub fn announce(&self, magnet_id: &str) -> Vec<Phrase> {
        let mut first = Phrase::from(format!("{magnet_id}: "));
        first.extend(self.safe.explain());
        let mut lines = vec![first];
        let peak = self.profile.max_target_c();
        if let Some(from) = self.clamped_from_c {
            lines.push(crate::phrase![
                format!("profile `{}` held to the safe peak: ", self.profile.name),
                temp_q(from, 0),
                " → ",
                temp_q(peak, 0),
            ]);
        }
        if self.over_safe {
            lines.push(crate::phrase![
                "WARNING: this test heats the part to ",
                temp_q(peak, 0),
                ", beyond its safe test peak of ",
                temp_q(self.safe.peak_c, 0),
                " (--allow-over-rating): it may lose flux for good — quarantine it afterwards, do not return it to stock",
            ]);
        }
        lines
    }
}
