//! What every report says besides the numbers: the method, the safety notes, the run's facts,
//! and the budget table rows.

use crate::analysis::BudgetLine;
use crate::run_dir::RunMeta;
use crate::units::{self, temp_q, DisplayUnits, Kind, Qty};

/// Method notes shared by both formats (the decision rule last).
pub const METHOD_NOTES: [&str; 7] = [
    "Thermocouple: ITS-90 Type K reference and inverse functions (NIST Monograph 175) with cold-junction compensation; the converter chip's linear 41.276 µV/°C approximation is undone.",
    "Flux: Hall code to mT with the rig calibration's offset, sensitivity and the probe's own temperature coefficient (probe temperature from its thermistor, Beta equation); readings are referred to the gap at 20 °C using the standoff's expansion.",
    "Thermal lag: the magnet follows the thermocouple as a first-order system; its time constant is the one that makes the heating and cooling branches coincide.",
    "Fit: B(T) = B20·(1 + α(T − 20) + γ(T − 20)²) by QR least squares on the lag-corrected temperature; α is reported as the mean coefficient between 20 °C and the top of the fitted range (two-point form), with the tangent at 20 °C beside it.",
    "Uncertainty: GUM (JCGM 100:2008) budget combining the fit (type A) with thermocouple gain tolerance, the probe coefficient's uncertainty, the standoff expansion and the lag model (type B); the expanded uncertainty U95 is the half-width of the budget's 95.45 % coverage interval (JCGM 101:2008 §5.3): k = 2 when every term is normal, less when a rectangular term (the thermocouple's gain tolerance, the lag band) rules it. Coverage is checked by simulation in the test suite.",
    "Irreversible loss: settled readings before and after the excursion (at the temperatures the results state), each referred to 20 °C with the fitted reversible curve; the step between the two temperatures is in the budget. Safe test peak: the load line of the part's shape at the centre of a pole face against the knee of its grade's worst-case intrinsic curve (0.9·HcJ), less 5 K, never above the rating; a loss at or below it means a coercivity below grade. Open-circuit measurement: for ferrite and AlNiCo the working point moves with temperature, so the field's coefficient is not exactly α(Br).",
    crate::analysis::verdict::DECISION_RULE,
];

/// Safety notes printed in every report, their temperatures in the display units `u`.
pub fn safety_notes(u: &DisplayUnits) -> [String; 4] {
    let t = |c: f64| temp_q(c, 0).render(u);
    let r = |lo: f64, hi: f64| Qty::range(Kind::Temp, lo, hi, 0).render(u);
    [
        format!("Let the fixture cool below {} before handling; metal at {} burns in about a second. Use non-magnetic tools: a hot magnet still jumps to steel.", t(50.0), r(65.0, 70.0)),
        "Rare-earth magnets pinch, chip and shatter: eye protection; keep them away from pacemakers and implants.".into(),
        format!("Coatings and adhesives give off fumes above about {}: ventilate.", r(120.0, 150.0)),
        "Mains wiring, earthing and the independent thermal cut-off follow IEC 61010-1 / IEC 61010-2-010 and the local wiring code, done by a qualified person.".into(),
    ]
}

/// Budget lines as table rows: source, type, standard uncertainty (times `scale`, which
/// takes a budget of α to the displayed degree).
pub fn budget_rows(lines: &[BudgetLine], scale: f64) -> Vec<(String, String, String)> {
    lines
        .iter()
        .map(|l| {
            (
                l.source.clone(),
                l.kind.to_string(),
                crate::units::uncertainty(l.u * scale),
            )
        })
        .collect()
}

/// The run's facts as name–value pairs (a plain CSV log has few); the calibration as its file
/// states it (SI-based), every other temperature in the display units `u`.
pub fn facts(meta: Option<&RunMeta>, u: &DisplayUnits) -> Vec<(String, String)> {
    let Some(m) = meta else {
        return vec![("source".into(), "plain CSV log".into())];
    };
    let mut f = vec![
        ("magnet".into(), format!("{} — {} ({})", m.magnet.id, m.magnet.description, m.magnet.grade)),
        ("rated maximum".into(), temp_q(m.magnet.max_working_c, 0).render(u)),
        ("profile".into(), format!("{}: {}", m.profile.name, m.profile.description)),
        ("recorded".into(), format!("{} … {}", m.started_utc, m.finished_utc.clone().unwrap_or_else(|| "unfinished".into()))),
        ("port".into(), m.port.clone()),
        ("end".into(), m.end_reason.clone().unwrap_or_default()),
        (
            "counts".into(),
            {
                let c = &m.counts;
                let rejected = c.frames_bad_crc + c.frames_bad_cobs + c.frames_other;
                format!(
                    "{}, {} ({} missing), {}",
                    units::count(c.samples, "sample", "samples"),
                    units::count(c.gaps, "gap", "gaps"),
                    c.gap_samples,
                    units::count(rejected, "rejected frame", "rejected frames")
                )
            },
        ),
        (
            "calibration (as its file states it)".into(),
            format!(
                "Hall {:.3} mV/mT, {:+.3} %/°C (u {:.3}); gap {:.2} mm (u {:.2}); thermocouple gain ±{} %",
                m.calibration.hall.sensor.sensitivity_mv_per_mt,
                m.calibration.hall.sensor.sensitivity_tc_pct_per_c,
                m.calibration.hall.sensitivity_tc_u_pct_per_c,
                m.calibration.gap.standoff.gap_mm,
                m.calibration.gap.gap_u_mm,
                m.calibration.thermocouple.gain_tolerance_pct
            ),
        ),
        ("software".into(), m.software.clone()),
    ];
    if let Some(d) = &m.device {
        f.push((
            "device".into(),
            format!(
                "board {}, firmware {}, protocol {} ({}), ceiling {}",
                d.board,
                d.firmware,
                d.protocol,
                d.schema,
                temp_q(d.ceiling_c, 0).render(u)
            ),
        ));
    }
    f
}
