//! What every report says besides the numbers: the method, the safety notes, the run's facts,
//! and the budget table rows.

use crate::analysis::BudgetLine;
use crate::run_dir::RunMeta;
use crate::units;

/// Method notes shared by both formats.
pub const METHOD_NOTES: [&str; 6] = [
    "Thermocouple: ITS-90 Type K reference and inverse functions (NIST Monograph 175) with cold-junction compensation; the converter chip's linear 41.276 µV/°C approximation is undone.",
    "Flux: Hall code to mT with the rig calibration's offset, sensitivity and the probe's own temperature coefficient (probe temperature from its thermistor, Beta equation); readings are referred to the gap at 20 °C using the standoff's expansion.",
    "Thermal lag: the magnet follows the thermocouple as a first-order system; its time constant is the one that makes the heating and cooling branches coincide.",
    "Fit: B(T) = B20·(1 + α(T − 20) + γ(T − 20)²) by QR least squares on the lag-corrected temperature; α is reported as the mean coefficient between 20 °C and the top of the fitted range (two-point form), with the tangent at 20 °C beside it.",
    "Uncertainty: GUM (JCGM 100:2008) budget combining the fit (type A) with thermocouple gain tolerance, the probe coefficient's uncertainty, the standoff expansion and the lag model (type B), expanded with k = 2.",
    "Irreversible loss: settled readings at room temperature before and after the excursion, corrected to one temperature with the fitted reversible curve. Open-circuit measurement: for ferrite and AlNiCo the working point moves with temperature, so the field's coefficient is not exactly α(Br).",
];

/// Safety notes printed in every report.
pub const SAFETY_NOTES: [&str; 4] = [
    "Let the fixture cool below 50 °C before handling; metal at 65–70 °C burns in about a second. Use non-magnetic tools: a hot magnet still jumps to steel.",
    "Rare-earth magnets pinch, chip and shatter: eye protection; keep them away from pacemakers and implants.",
    "Coatings and adhesives give off fumes above about 120–150 °C: ventilate.",
    "Mains wiring, earthing and the independent thermal cut-off follow IEC 61010-1 / IEC 61010-2-010 and the local wiring code, done by a qualified person.",
];

/// Budget lines as table rows: source, type, standard uncertainty.
pub fn budget_rows(lines: &[BudgetLine]) -> Vec<(String, String, String)> {
    lines
        .iter()
        .map(|l| {
            (
                l.source.clone(),
                l.kind.to_string(),
                crate::units::uncertainty(l.u),
            )
        })
        .collect()
}

/// The run's facts as name–value pairs (a plain CSV log has few).
pub fn facts(meta: Option<&RunMeta>) -> Vec<(String, String)> {
    let Some(m) = meta else {
        return vec![("source".into(), "plain CSV log".into())];
    };
    let mut f = vec![
        ("magnet".into(), format!("{} — {} ({})", m.magnet.id, m.magnet.description, m.magnet.grade)),
        ("rated maximum".into(), format!("{:.0} °C", m.magnet.max_working_c)),
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
            "calibration".into(),
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
                "board {}, firmware {}, protocol {} ({}), ceiling {:.0} °C",
                d.board, d.firmware, d.protocol, d.schema, d.ceiling_c
            ),
        ));
    }
    f
}
