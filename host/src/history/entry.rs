//! What the store keeps of a run and of an analysis, built from the run's `run.toml` (or a
//! log file) and the analysis result, with the stable keys that make a second import of the
//! same run or the same analysis change nothing.

use std::path::Path;

use crate::analysis::Analysis;
use crate::inspection::Inspection;
use crate::run_dir::RunMeta;

use super::backend::Value;

/// A run as the store keeps it.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct RunEntry {
    /// Stable key: the same run (even copied elsewhere) has the same one.
    pub run_uid: String,
    /// The run directory's or log file's name.
    pub run_name: String,
    /// `run_dir` or `csv_log`.
    pub source: String,
    /// Where it was found, on the host that stored it.
    pub location: String,
    /// That host's name.
    pub host: String,
    /// The magnet's id and stated grade.
    pub magnet_id: Option<String>,
    /// Stated grade.
    pub grade: Option<String>,
    /// Lot, order, supplier, operator.
    pub inspection: Inspection,
    /// When the record started and finished, UTC.
    pub started_utc: Option<String>,
    /// When it finished.
    pub finished_utc: Option<String>,
    /// Why it ended.
    pub end_reason: Option<String>,
    /// Profile name.
    pub profile: Option<String>,
    /// Device board and firmware, port.
    pub board: Option<String>,
    /// Firmware version.
    pub firmware: Option<String>,
    /// Port.
    pub port: Option<String>,
    /// `calibrated`, `virtual_rig` or `uncalibrated`.
    pub calibration_basis: Option<String>,
    /// The oldest dated calibration step used, UTC.
    pub calibration_oldest_utc: Option<String>,
    /// The calibration the record was converted with (JSON of its TOML tables).
    pub calibration_json: Option<String>,
    /// Samples recorded, and missing.
    pub samples: Option<i64>,
    /// Samples missing in gaps.
    pub gap_samples: Option<i64>,
}

/// 64-bit FNV-1a over the parts, each followed by a separator (a stable, documented hash:
/// the same input gives the same key on every host and version).
pub fn fingerprint(parts: &[&str]) -> String {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for p in parts {
        for b in p.bytes().chain(std::iter::once(0x1f)) {
            h ^= u64::from(b);
            h = h.wrapping_mul(0x0000_0100_0000_01b3);
        }
    }
    format!("{h:016x}")
}

/// This host's name, for the location of what it stored.
pub fn host_name() -> String {
    std::env::var("HOSTNAME")
        .ok()
        .or_else(|| std::fs::read_to_string("/etc/hostname").ok())
        .map(|s| s.trim().to_string())
        .filter(|s| !s.is_empty())
        .unwrap_or_else(|| "unknown-host".into())
}

fn basis_word(meta: &RunMeta) -> Option<String> {
    meta.calibration_basis
        .and_then(|b| serde_json::to_value(b).ok())
        .and_then(|v| v.as_str().map(String::from))
}

impl RunEntry {
    /// A recorded run directory.
    pub fn from_run(dir: &Path, meta: &RunMeta) -> RunEntry {
        let board = meta.device.as_ref().map(|d| d.board.clone());
        let firmware = meta.device.as_ref().map(|d| d.firmware.clone());
        let run_uid = fingerprint(&[
            "run",
            &meta.started_utc,
            &meta.port,
            &meta.magnet.id,
            board.as_deref().unwrap_or(""),
            firmware.as_deref().unwrap_or(""),
            &meta.software,
        ]);

        RunEntry {
            run_uid,
            run_name: name_of(dir),
            source: "run_dir".into(),
            location: absolute(dir),
            host: host_name(),
            magnet_id: Some(meta.magnet.id.clone()),
            grade: Some(meta.magnet.grade.clone()),
            inspection: meta.inspection.clone(),
            started_utc: Some(meta.started_utc.clone()),
            finished_utc: meta.finished_utc.clone(),
            end_reason: meta.end_reason.clone(),
            profile: Some(meta.profile.name.clone()),
            board,
            firmware,
            port: Some(meta.port.clone()),
            calibration_basis: basis_word(meta),
            calibration_oldest_utc: meta
                .calibration
                .dates
                .oldest()
                .map(|s| crate::timestamps::format_utc(s.0)),
            calibration_json: serde_json::to_string(&meta.calibration).ok(),
            samples: i64::try_from(meta.counts.samples).ok(),
            gap_samples: i64::try_from(meta.counts.gap_samples).ok(),
        }
    }

    /// A log file from another logger, keyed by its content (`content_key`).
    pub fn from_log(file: &Path, content_key: &str, analysis: &Analysis) -> RunEntry {
        let p = &analysis.provenance;
        RunEntry {
            run_uid: fingerprint(&["log", content_key]),
            run_name: name_of(file),
            source: "csv_log".into(),
            location: absolute(file),
            host: host_name(),
            magnet_id: p.magnet_id.clone(),
            grade: p.grade.clone(),
            inspection: p.inspection.clone(),
            samples: i64::try_from(analysis.input.samples).ok(),
            ..Default::default()
        }
    }

    /// The columns, in the order of [`RUN_COLUMNS`].
    pub fn values(&self, stored_utc: &str) -> Vec<Value> {
        let i = &self.inspection;
        vec![
            self.run_uid.as_str().into(),
            self.run_name.as_str().into(),
            self.source.as_str().into(),
            self.location.as_str().into(),
            self.host.as_str().into(),
            self.magnet_id.clone().into(),
            self.grade.clone().into(),
            i.lot.clone().into(),
            i.purchase_order.clone().into(),
            i.supplier.clone().into(),
            i.operator.clone().into(),
            // a log has no start of its own: when it was stored stands in (every run sorts)
            self.started_utc.as_deref().unwrap_or(stored_utc).into(),
            self.finished_utc.clone().into(),
            self.end_reason.clone().into(),
            self.profile.clone().into(),
            self.board.clone().into(),
            self.firmware.clone().into(),
            self.port.clone().into(),
            self.calibration_basis.clone().into(),
            self.calibration_oldest_utc.clone().into(),
            self.calibration_json.clone().into(),
            self.samples.map_or(Value::Null, Value::Int),
            self.gap_samples.map_or(Value::Null, Value::Int),
            stored_utc.into(),
            super::error::software().into(),
        ]
    }
}

/// The run columns a [`RunEntry`] fills, in order.
pub const RUN_COLUMNS: &str = "run_uid, run_name, source, location, host, magnet_id, grade, \
    lot, purchase_order, supplier, operator, started_utc, finished_utc, end_reason, profile, \
    board, firmware, port, calibration_basis, calibration_oldest_utc, calibration_json, samples, \
    gap_samples, \
    stored_utc, software";

fn name_of(p: &Path) -> String {
    p.file_name()
        .map(|f| f.to_string_lossy().into_owned())
        .unwrap_or_default()
}

fn absolute(p: &Path) -> String {
    std::fs::canonicalize(p)
        .unwrap_or_else(|_| p.to_path_buf())
        .display()
        .to_string()
}

/// The analysis columns, in the order of [`analysis_row`].
pub const ANALYSIS_COLUMNS: &str = "analysis_uid, run_uid, analysed_utc, software, verdict, \
    grade, material_family, alpha_pct_per_C, alpha_u95_pct_per_C, b20_mT, b20_u_mT, br_T, \
    br_u95_T, loss_pct, loss_u95_pct, fit_min_C, fit_max_C, max_magnet_temp_C, \
    fit_method_code, heat_damaged, uncalibrated, analysis_json";

/// An analysis as the store keeps it: its columns, and the figures kept beside its run as the
/// run's latest (verdict, α, Br, loss).
pub struct AnalysisRow {
    /// The columns, in the order of [`ANALYSIS_COLUMNS`]; the first is the key.
    pub values: Vec<Value>,
    /// Verdict, α, Br and loss, as in `values`.
    pub latest: [Value; 4],
}

/// An analysis's key and columns. The key covers the run and everything the analysis found,
/// but not its provenance (when it was made, the lot or operator given with it: those describe
/// the run), so the same analysis stored twice is one row.
pub fn analysis_row(run_uid: &str, a: &Analysis) -> AnalysisRow {
    // one serialisation (the per-sample traces are not part of it)
    let json = serde_json::to_value(a).expect("an analysis serializes");
    filed_row(run_uid, &json).expect("an analysis has its own fields")
}

/// The row of an analysis as it was filed (a run's `analysis.json`, read back as JSON): the same
/// key and columns [`analysis_row`] gives the analysis it was written from. `None` when the
/// JSON is not an analysis (no provenance, verdict or fit method).
pub fn filed_row(run_uid: &str, a: &serde_json::Value) -> Option<AnalysisRow> {
    use serde_json::Value as J;
    let obj = a.as_object()?;
    // the text is the compact serialisation in the analysis's own field order (serde_json keeps
    // it), and the key the same text with the provenance taken out, exactly as written into it
    let json = a.to_string();
    let provenance = obj.get("provenance")?;
    let key_json = json.replacen(&format!("\"provenance\":{provenance}"), "", 1);
    let uid = fingerprint(&["analysis", run_uid, &key_json]);
    let field = |k: &str| obj.get(k).unwrap_or(&J::Null);
    let num = |v: &J| {
        v.as_f64()
            .filter(|x| x.is_finite())
            .map_or(Value::Null, Value::Real)
    };
    let text = |v: &J| v.as_str().map_or(Value::Null, |s| Value::Text(s.into()));
    let flag = |k: &str| Value::Int(field(k).as_bool().unwrap_or(false).into());
    let br = |k: &str| num(field("br").get(k).unwrap_or(&J::Null));
    let range = |i: usize| num(field("fit_range_C").get(i).unwrap_or(&J::Null));
    let verdict = Value::Text(field("verdict").as_str()?.into());
    let method = Value::Text(field("fit_method_code").as_str()?.into());
    let (alpha, loss) = (
        num(field("alpha_pct_per_C")),
        num(field("irreversible_loss_pct")),
    );
    let latest = [verdict.clone(), alpha.clone(), br("br_t"), loss.clone()];
    let values = vec![
        uid.into(),
        run_uid.into(),
        Value::Text(provenance.get("analysed_utc")?.as_str()?.into()),
        super::error::software().into(),
        verdict,
        text(field("grade")),
        Value::Text(field("material_family").as_str()?.into()),
        alpha,
        num(field("alpha_u95_pct_per_C")),
        num(field("b20_mT")),
        num(field("b20_u_mT")),
        br("br_t"),
        br("br_u95_t"),
        loss,
        num(field("irreversible_loss_u95_pct")),
        range(0),
        range(1),
        num(field("max_magnet_temp_C")),
        method,
        flag("heat_damaged"),
        flag("uncalibrated"),
        json.into(),
    ];
    Some(AnalysisRow { values, latest })
}
