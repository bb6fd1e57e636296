//! What each calibration step computes from its readings: the new constant, its standard
//! uncertainty, and the words that say so. Pure functions of the readings and the calibration
//! so far, so each can be checked against known truth.

use remanent_physics::shape::dln_bz_per_mm;
use remanent_physics::{adc, boiling, coil, standoff, Shape};

use super::reading::{Raw, Stats};
use crate::analysis::lsq;
use crate::calibration::Calibration;
use crate::event::CalStep;
use crate::phrase;
use crate::units::{span, temp_q, Kind, Phrase, Qty};

/// A coil's dimensions and current, with their standard uncertainties.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Coil {
    /// Turns in each of the pair's coils.
    pub turns: f64,
    /// Radius (and spacing), m, and its standard uncertainty.
    pub radius_m: (f64, f64),
    /// Current, A, and its standard uncertainty.
    pub current_a: (f64, f64),
}

impl Coil {
    /// The field at the pair's centre, mT, and its relative standard uncertainty.
    pub fn field(&self) -> (f64, f64) {
        let b = coil::helmholtz_mt(self.turns, self.radius_m.0, self.current_a.0);
        let u = coil::helmholtz_rel_u(
            self.current_a.1 / self.current_a.0,
            self.radius_m.1 / self.radius_m.0,
        );
        (b, u)
    }
}

/// A step's result: what changed and how well it is known, as words with quantities (shown
/// in the user's display units).
#[derive(Debug, Clone, PartialEq)]
pub struct Found {
    /// The constant, with its value and standard uncertainty.
    pub summary: Phrase,
    /// A check that failed (the boiling point off by more than the wire's tolerance).
    pub warning: Option<Phrase>,
}

/// One LSB of the Hall channel as a standard uncertainty (rectangular), mV.
fn lsb_u_mv(cal: &Calibration) -> f64 {
    adc::mv(1, cal.hall.full_scale_mv) / 12f64.sqrt()
}

/// The probe's zero in the zero-field can: the offset at 25 °C.
pub fn zero(cal: &mut Calibration, w: &[Raw]) -> Found {
    let mv = Stats::of(w.iter().map(|r| r.hall_mv));
    let tp = Stats::of(w.iter().map(|r| r.probe_c)).mean;
    let lsb = lsb_u_mv(cal);
    let h = &mut cal.hall;
    h.sensor.offset_mv = mv.mean - h.sensor.offset_tc_mv_per_c * (tp - 25.0);
    h.offset_u_mv = (mv.u_mean().powi(2) + lsb.powi(2)).sqrt();
    Found {
        summary: phrase!(
            format!("offset {:.4} mV at ", cal.hall.sensor.offset_mv),
            temp_q(25.0, 0),
            format!(" (u = {:.4} mV; read at ", cal.hall.offset_u_mv),
            temp_q(tp, 1),
            ")"
        ),
        warning: None,
    }
}

/// Slope of `y` on `x` and its standard error (inflated ×3 for neighbouring samples that are
/// correlated: a slope from a slow warming is not n independent points).
fn slope(x: &[f64], y: &[f64]) -> Option<(f64, f64)> {
    let f = lsq::polyfit(x, y, 1).ok()?;
    Some((f.coefficients[1], 3.0 * f.covariance[3].max(0.0).sqrt()))
}

/// The offset's drift: the probe warmed alone in the zero-field can.
pub fn offset_drift(cal: &mut Calibration, w: &[Raw]) -> Option<Found> {
    let x: Vec<f64> = w.iter().map(|r| r.probe_c).collect();
    let y: Vec<f64> = w.iter().map(|r| r.hall_mv).collect();
    let (s, u) = slope(&x, &y)?;
    let h = &mut cal.hall;
    // the zero at 25 °C moves with the new slope
    let tp = Stats::of(x.iter().copied()).mean;
    let at_tp = h.sensor.offset_mv + h.sensor.offset_tc_mv_per_c * (tp - 25.0);
    h.sensor.offset_tc_mv_per_c = s;
    h.sensor.offset_mv = at_tp - s * (tp - 25.0);
    h.offset_tc_u_mv_per_c = u;
    Some(Found {
        summary: phrase!(
            format!("offset drift {s:.5} mV/K (u = {u:.5} mV/K) over "),
            Qty::range(
                Kind::Temp,
                x.iter().copied().fold(f64::INFINITY, f64::min),
                x.iter().copied().fold(f64::NEG_INFINITY, f64::max),
                1
            )
        ),
        warning: None,
    })
}

/// The sensitivity at 25 °C from the probe at the centre of a coil.
pub fn sensitivity(cal: &mut Calibration, w: &[Raw], coil: &Coil) -> Found {
    let (b, b_rel_u) = coil.field();
    let mv = Stats::of(w.iter().map(|r| r.hall_mv));
    let tp = Stats::of(w.iter().map(|r| r.probe_c)).mean;
    let h = &mut cal.hall;
    let signal = mv.mean - h.sensor.offset_mv - h.sensor.offset_tc_mv_per_c * (tp - 25.0);
    let at_tp = signal / b;
    h.sensor.sensitivity_mv_per_mt =
        at_tp / (1.0 + h.sensor.sensitivity_tc_pct_per_c / 100.0 * (tp - 25.0));
    let lsb = adc::mv(1, h.full_scale_mv) / 12f64.sqrt();
    let signal_rel_u =
        (mv.u_mean().powi(2) + h.offset_u_mv.powi(2) + lsb * lsb).sqrt() / signal.abs();
    h.sensitivity_u_pct = (b_rel_u.powi(2) + signal_rel_u.powi(2)).sqrt() * 100.0;
    Found {
        summary: phrase!(
            format!(
                "sensitivity {:.4} mV/mT at ",
                h.sensor.sensitivity_mv_per_mt
            ),
            temp_q(25.0, 0),
            format!(
                " (u = {:.3} %; coil field {b:.4} mT, u = {:.3} %)",
                h.sensitivity_u_pct,
                b_rel_u * 100.0
            )
        ),
        warning: None,
    }
}

/// The sensitivity's own coefficient: the probe warmed alone at the centre of the coil.
pub fn probe_tc(cal: &mut Calibration, w: &[Raw], coil: &Coil) -> Option<Found> {
    let (b, _) = coil.field();
    let h = &mut cal.hall;
    let x: Vec<f64> = w.iter().map(|r| r.probe_c - 25.0).collect();
    let y: Vec<f64> = w
        .iter()
        .map(|r| r.hall_mv - h.sensor.offset_mv - h.sensor.offset_tc_mv_per_c * (r.probe_c - 25.0))
        .collect();
    let (s, u) = slope(&x, &y)?;
    let per_c = s / (h.sensor.sensitivity_mv_per_mt * b) * 100.0;
    let u_pct = ((u / (h.sensor.sensitivity_mv_per_mt * b) * 100.0).powi(2)
        + (h.offset_tc_u_mv_per_c / (h.sensor.sensitivity_mv_per_mt * b) * 100.0).powi(2))
    .sqrt();
    h.sensor.sensitivity_tc_pct_per_c = per_c;
    h.sensitivity_tc_u_pct_per_c = u_pct;
    Some(Found {
        summary: phrase!(
            "probe coefficient ",
            Qty::one(Kind::Alpha, per_c, 4),
            " (u = ",
            Qty::one(Kind::Alpha, u_pct, 4),
            ")"
        ),
        warning: None,
    })
}

/// A well-made ice point is 0 °C within a few millikelvin (common practice): its standard
/// uncertainty, °C.
pub const ICE_POINT_U_C: f64 = 0.005;
/// The converter's 0.25 °C step as a standard uncertainty (rectangular), °C.
const TC_STEP_U_C: f64 = 0.25 / 3.464_101_615;

/// The thermocouple's offset at the ice point.
pub fn ice_point(cal: &mut Calibration, w: &[Raw]) -> Found {
    let t = Stats::of(w.iter().filter_map(|r| r.tc_c));
    let tc = &mut cal.thermocouple;
    tc.offset_c = t.mean;
    tc.offset_u_c =
        (t.u_mean().powi(2) + ICE_POINT_U_C.powi(2) + (TC_STEP_U_C.powi(2) / t.n as f64)).sqrt();
    Found {
        summary: phrase!(
            "thermocouple offset ",
            span(tc.offset_c, 3).signed(),
            " (u = ",
            span(tc.offset_u_c, 3),
            ")"
        ),
        warning: None,
    }
}

/// The local pressure for the boiling point: measured, or from the altitude.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Pressure {
    /// A barometer's reading and its standard uncertainty, kPa.
    Measured(f64, f64),
    /// The altitude, m (the weather then moves the pressure by [`boiling::WEATHER_KPA`]).
    Altitude(f64),
}

/// The boiling-point check: the thermocouple (offset taken off) against the saturation
/// temperature at the local pressure; a miss beyond the wire's tolerance is a warning.
pub fn boiling_point(cal: &Calibration, w: &[Raw], p: Pressure) -> Found {
    let (p_kpa, p_u) = match p {
        Pressure::Measured(v, u) => (v, u),
        Pressure::Altitude(h) => (boiling::standard_pressure_kpa(h), boiling::WEATHER_KPA),
    };
    let ts = boiling::saturation_c(p_kpa);
    let dts_dp = boiling::saturation_c(p_kpa + 0.5) - boiling::saturation_c(p_kpa - 0.5);
    let t = Stats::of(w.iter().filter_map(|r| r.tc_c));
    let reads = t.mean - cal.thermocouple.offset_c;
    let miss = reads - ts;
    let u =
        ((dts_dp * p_u).powi(2) + t.u_mean().powi(2) + cal.thermocouple.offset_u_c.powi(2)).sqrt();
    let allowed = cal.thermocouple.gain_tolerance_pct / 100.0 * ts + 2.0 * u;
    Found {
        summary: phrase!(
            "boiling point ",
            temp_q(ts, 2),
            format!(" at {p_kpa:.2} kPa; the thermocouple reads "),
            temp_q(reads, 2),
            " (",
            span(miss, 2).signed(),
            ", u = ",
            span(u, 2),
            ")"
        ),
        warning: (miss.abs() > allowed).then(|| {
            phrase!(
                "the thermocouple is ",
                span(miss, 2).signed(),
                format!(
                    " off at the boiling point, more than the wire's ±{} % tolerance and the check's uncertainty allow (",
                    cal.thermocouple.gain_tolerance_pct
                ),
                span(allowed, 2),
                "): a damaged or wrong-type thermocouple"
            )
        }),
    }
}

/// A reference magnet: its Br with a standard uncertainty, and its shape.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Reference {
    /// Br at 20 °C, T, and its standard uncertainty.
    pub br_t: (f64, f64),
    /// Its shape.
    pub shape: Shape,
    /// Its α, %/°C, to refer the reading to 20 °C.
    pub alpha_pct_per_c: f64,
    /// The standoff's length, mm, and expansion coefficient, 1/K, as measured (None: keep the
    /// calibration's).
    pub standoff: Option<(f64, f64)>,
}

/// The gap: the field of a reference magnet of known Br in the fixture, read with the
/// calibrated probe, and the distance at which its shape gives that field.
pub fn gap(cal: &mut Calibration, w: &[Raw], r: &Reference) -> Option<Found> {
    if let Some((len, cte)) = r.standoff {
        cal.gap.standoff.standoff_mm = len;
        cal.gap.standoff.standoff_cte_per_k = cte;
    }
    let h = cal.hall;
    let b: Vec<f64> = w
        .iter()
        .map(|x| h.sensor.field_mt(x.hall_mv, x.probe_c))
        .collect();
    let bs = Stats::of(b.iter().copied());
    let t = Stats::of(w.iter().filter_map(|x| x.tc_c)).mean - cal.thermocouple.offset_c;
    let b20 = remanent_physics::reversible::refer_to_20c(bs.mean, t, r.alpha_pct_per_c);
    let want = b20 / 1000.0 / r.br_t.0;
    // the field falls with distance: bisect
    let (mut lo, mut hi) = (0.0f64, 50.0f64);
    if !(r.shape.bz_per_br(hi) < want && want < r.shape.bz_per_br(lo)) {
        return None;
    }
    for _ in 0..60 {
        let mid = 0.5 * (lo + hi);
        if r.shape.bz_per_br(mid) > want {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    // the gap at the standoff's temperature now, referred to the calibration's 20 °C
    let tp = Stats::of(w.iter().map(|x| x.probe_c)).mean;
    let so = &cal.gap.standoff;
    let g_now = 0.5 * (lo + hi);
    let g = g_now
        - so.standoff_mm
            * so.standoff_cte_per_k
            * (standoff::standoff_c(t, tp) - standoff::REFERENCE_C);
    let rel = ((r.br_t.1 / r.br_t.0).powi(2)
        + (bs.u_mean() / bs.mean).powi(2)
        + (h.sensitivity_u_pct / 100.0).powi(2))
    .sqrt();
    let u = rel / dln_bz_per_mm(&r.shape, g_now).abs();
    cal.gap.standoff.gap_mm = g;
    cal.gap.gap_u_mm = u;
    Some(Found {
        summary: phrase!(
            format!("gap {g:.3} mm (u = {u:.3} mm) from the reference's "),
            crate::units::flux(b20, 2),
            " at ",
            temp_q(20.0, 0)
        ),
        warning: None,
    })
}

/// One calibration step.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Step {
    /// The probe's zero in a zero-field can.
    Zero,
    /// The zero's drift: the probe warmed alone in the can.
    OffsetDrift,
    /// The sensitivity at the centre of a coil.
    Sensitivity(Coil),
    /// The sensitivity's coefficient: the probe warmed alone in the coil.
    ProbeTc(Coil),
    /// The thermocouple at the ice point.
    IcePoint,
    /// The thermocouple in boiling water at a pressure.
    BoilingPoint(Pressure),
    /// The gap, from a reference magnet in the fixture.
    Gap(Reference),
}

impl Step {
    /// What it calibrates (its words come from [`crate::event::words`]).
    pub fn kind(&self) -> CalStep {
        match self {
            Step::Zero => CalStep::Zero,
            Step::OffsetDrift => CalStep::OffsetDrift,
            Step::Sensitivity(_) => CalStep::Sensitivity,
            Step::ProbeTc(_) => CalStep::ProbeTc,
            Step::IcePoint => CalStep::IcePoint,
            Step::BoilingPoint(_) => CalStep::BoilingPoint,
            Step::Gap(_) => CalStep::Gap,
        }
    }

    /// Whether the step reads over a warming rather than a still window.
    pub fn warming(&self) -> bool {
        matches!(self, Step::OffsetDrift | Step::ProbeTc(_))
    }
}
