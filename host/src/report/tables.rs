//! The tables a command writes as CSV, rendered in memory: a lot's per-magnet table, the lot
//! against its master sample, and a survey's ranking. Numbers at the precision the measurement
//! supports, SI-based units named in every header.

use serde::Serialize;

use crate::lot::LotSummary;
use crate::master::AgainstMaster;
use crate::survey_rank::Ranked;

/// The per-magnet table as CSV (quoted where a field needs it).
pub fn lot_csv(s: &LotSummary) -> String {
    let mut w = csv::Writer::from_writer(Vec::new());
    for r in &s.rows {
        let row = LotCsvRow {
            id: &r.id,
            grade: &r.grade,
            alpha: format!("{:.5}", r.alpha),
            alpha_u95: format!("{:.5}", r.alpha_u95),
            loss_pct: opt(r.loss_pct, 4),
            loss_u95_pct: opt(r.loss_u95_pct, 4),
            b20: format!("{:.3}", r.b20_mt),
            verdict: r.verdict.word(),
            outlier: super::lot::outliers_text(&r.outlier),
        };
        // writing into memory cannot fail
        let _ = w.serialize(row);
    }
    String::from_utf8(w.into_inner().unwrap_or_default()).unwrap_or_default()
}

fn opt(v: Option<f64>, p: usize) -> String {
    v.map(|x| crate::units::fixed(x, p)).unwrap_or_default()
}

/// One row of `lot.csv`: numbers at the precision the measurement supports.
#[derive(Debug, Serialize)]
struct LotCsvRow<'a> {
    id: &'a str,
    grade: &'a str,
    #[serde(rename = "alpha_pct_per_C")]
    alpha: String,
    #[serde(rename = "alpha_u95_pct_per_C")]
    alpha_u95: String,
    loss_pct: String,
    loss_u95_pct: String,
    #[serde(rename = "b20_mT")]
    b20: String,
    verdict: &'static str,
    outlier: String,
}

/// The comparison as CSV.
pub fn master_csv(rows: &[AgainstMaster]) -> String {
    let mut w = csv::Writer::from_writer(Vec::new());
    for r in rows {
        let _ = w.serialize(MasterRow {
            id: &r.id,
            b20_vs_master_pct: format!("{:.3}", r.b20_vs_master_pct),
            b20_u95_pct: format!("{:.3}", r.b20_u95_pct),
            alpha_vs_master: format!("{:.5}", r.alpha_diff),
            alpha_u95: format!("{:.5}", r.alpha_u95),
            outcome: r.outcome.word(),
        });
    }
    String::from_utf8(w.into_inner().unwrap_or_default()).unwrap_or_default()
}

/// One row of `master.csv`.
#[derive(Serialize)]
struct MasterRow<'a> {
    id: &'a str,
    b20_vs_master_pct: String,
    b20_u95_pct: String,
    #[serde(rename = "alpha_vs_master_pct_per_C")]
    alpha_vs_master: String,
    #[serde(rename = "alpha_u95_pct_per_C")]
    alpha_u95: String,
    outcome: &'static str,
}

/// The ranked table as CSV.
pub fn survey_csv(ranked: &[Ranked]) -> String {
    let mut w = csv::Writer::from_writer(Vec::new());
    for (i, r) in ranked.iter().enumerate() {
        // writing into memory cannot fail
        let _ = w.serialize(SurveyRow {
            rank: i + 1,
            magnet: r.reading.index,
            flux: format!("{:.3}", r.reading.flux_mt),
            deviation_pct: format!("{:+.3}", r.deviation_pct),
            modified_z: format!("{:+.2}", r.z),
            temp: format!("{:.2}", r.reading.temp_c),
            rel_sd: format!("{:.6}", r.reading.rel_sd),
            low: u8::from(r.low),
            uncalibrated: u8::from(r.reading.uncalibrated),
        });
    }
    String::from_utf8(w.into_inner().unwrap_or_default()).unwrap_or_default()
}

/// One row of the survey's CSV.
#[derive(Serialize)]
struct SurveyRow {
    rank: usize,
    magnet: usize,
    #[serde(rename = "flux_mT")]
    flux: String,
    deviation_pct: String,
    modified_z: String,
    #[serde(rename = "temp_C")]
    temp: String,
    rel_sd: String,
    low: u8,
    uncalibrated: u8,
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_comma_in_an_id_stays_in_its_field() {
        let row = crate::lot::LotRow {
            id: "RM,7".into(),
            grade: "N42".into(),
            alpha: -0.11,
            alpha_u95: 0.002,
            loss_pct: None,
            loss_u95_pct: None,
            b20_mt: 200.0,
            br_t: None,
            verdict: crate::analysis::verdict::Outcome::Pass,
            heat_damaged: false,
            outlier: vec![
                crate::lot::Outlier {
                    quantity: crate::lot::OutlierIn::RoomFlux,
                    m: -4.2,
                },
                crate::lot::Outlier {
                    quantity: crate::lot::OutlierIn::Alpha,
                    m: 3.9,
                },
            ],
        };
        let csv = lot_csv(&crate::lot::summarise(vec![row]));
        let mut r = csv::Reader::from_reader(csv.as_bytes());
        let rec = r.records().next().unwrap().unwrap();
        assert_eq!(&rec[0], "RM,7");
        // the outliers in words, in the order found
        assert_eq!(&rec[8], "room-temperature flux (M = -4.2); α (M = +3.9)");
        assert_eq!(rec.len(), 9);
    }
}
