//! The printable inspection certificate (PDF, A4 or Letter): a header naming the magnet, lot,
//! order, supplier, operator, rig and calibration; the verdict block, never split across
//! pages; the results; the B–T plot; the uncertainty budgets; notes; signature lines.

use super::notes::budget_rows;
use super::pdf_flow::Flow;
use super::seal::Seal;
use super::Look;
use crate::analysis::{Analysis, BudgetLine};
use crate::run_dir::RunMeta;
use crate::units::{self, DisplayUnits, Kind, Qty};

/// The certificate's file name.
pub const CERTIFICATE_FILE: &str = "certificate.pdf";

fn dash(v: &Option<String>) -> String {
    v.clone().unwrap_or_else(|| "—".into())
}

/// The header's name–value pairs.
fn header(a: &Analysis, meta: Option<&RunMeta>) -> Vec<(&'static str, String)> {
    let p = &a.provenance;
    let i = &p.inspection;
    let magnet = match meta {
        Some(m) => format!("{} — {}", m.magnet.id, m.magnet.description),
        None => dash(&p.magnet_id),
    };
    let rig = meta
        .map(|m| match &m.device {
            Some(d) => format!("{} (firmware {}), port {}", d.board, d.firmware, m.port),
            None => m.port.clone(),
        })
        .unwrap_or_else(|| "a logger's CSV file".into());
    let calibration = meta
        .map(|m| {
            let oldest = m.calibration.dates.oldest().map(|s| s.0);
            let basis = match m.calibration_basis {
                Some(crate::calibration::policy::Basis::VirtualRig) => {
                    "the virtual rig's constants"
                }
                Some(crate::calibration::policy::Basis::Uncalibrated) => "UNCALIBRATED bench",
                _ => "rig calibration",
            };
            match oldest {
                Some(s) => format!(
                    "{basis}, oldest step {}",
                    &crate::timestamps::format_utc(s)[..10]
                ),
                None => basis.to_string(),
            }
        })
        .unwrap_or_else(|| "as given with the log".into());
    vec![
        ("Magnet", magnet),
        ("Stated grade", dash(&p.grade)),
        ("Lot", dash(&i.lot)),
        ("Purchase order", dash(&i.purchase_order)),
        ("Supplier", dash(&i.supplier)),
        ("Operator", dash(&i.operator)),
        ("Rig", rig),
        ("Calibration", calibration),
        (
            "Run",
            format!("{} (started {})", p.run, dash(&p.started_utc)),
        ),
    ]
}

fn results(a: &Analysis, u: &DisplayUnits) -> Vec<(&'static str, String)> {
    let mut r = vec![
        (
            "α(Br)",
            format!(
                "{} over {}",
                units::alpha_with_u95(u, a.alpha.pct_per_c, a.alpha.u95_pct_per_c),
                units::temp_range(u, a.alpha.range_c)
            ),
        ),
        (
            "Irreversible loss",
            crate::report::summary::loss_words(a, u),
        ),
    ];
    if let Some(p) = &a.judgement.safe_peak {
        r.push(("Safe test peak", p.explain().render(u)));
    }
    if let Some(b) = &a.remanence.estimate {
        let how = if a.remanence.referred {
            "referred to the fixture's reference magnet"
        } else {
            "from geometry at the calibrated gap"
        };
        r.push((
            "Br",
            format!(
                "{} (k = 2), {how}",
                Qty::pm(Kind::Br, b.br_t, b.br_u95_t, 4).render(u)
            ),
        ));
    }
    r.push(("Material family", a.judgement.material_family.clone()));
    r
}

/// Two-column rows: a bold name and a wrapped value.
fn rows(f: &mut Flow, rows: &[(&str, String)], size: f32) {
    let value_x = 42.0;
    for (k, v) in rows {
        let lines = Flow::wrap(v, f.width_mm() - value_x, size);
        f.keep_together(Flow::lines_mm(lines.len(), size));
        f.text_at(0.0, size, true, k);
        for l in lines {
            f.text_at(value_x, size, false, &l);
            f.skip(Flow::lines_mm(1, size));
        }
    }
}

fn verdict_block(f: &mut Flow, a: &Analysis, u: &DisplayUnits) {
    let size = 9.5;
    // the reasons start clear of the widest outcome word (INDETERMINATE is the longest)
    let outcome_x = 36.0;
    let widest = a
        .judgement
        .checks
        .iter()
        .map(|c| Flow::bold_caps_width_mm(&c.outcome.to_string(), size))
        .fold(0.0f32, f32::max);
    let reason_x = (outcome_x + widest + 3.0).max(58.0);
    let wrapped: Vec<Vec<String>> = a
        .judgement
        .checks
        .iter()
        .map(|c| Flow::wrap(&c.reason.render(u), f.width_mm() - reason_x, size))
        .collect();
    // the outcome lines, then the decision rule's paragraph (four lines at most)
    let height =
        30.0 + if a.judgement.quarantine.is_some() {
            14.0
        } else {
            0.0
        } + wrapped
            .iter()
            .map(|w| Flow::lines_mm(w.len(), size) + 1.0)
            .sum::<f32>();
    f.keep_together(height);
    let grade = a
        .judgement
        .grade
        .as_deref()
        .map(|g| format!(" against grade {g}"))
        .unwrap_or_default();
    f.text_at(
        0.0,
        15.0,
        true,
        &format!("Verdict: {}{grade}", a.judgement.verdict),
    );
    f.skip(9.0);
    for (c, lines) in a.judgement.checks.iter().zip(wrapped) {
        f.text_at(0.0, size, true, c.what.name());
        f.text_at(outcome_x, size, true, &c.outcome.to_string());
        for l in lines {
            f.text_at(reason_x, size, false, &l);
            f.skip(Flow::lines_mm(1, size));
        }
        f.skip(1.0);
    }
    if let Some(q) = &a.judgement.quarantine {
        f.paragraph(0.0, size, true, &q.render(u));
        f.skip(2.0);
    }
    f.paragraph(0.0, 8.0, false, crate::analysis::verdict::DECISION_RULE);
    f.rule(0.0, f.width_mm());
    f.skip(3.0);
}

/// A budget table; `scale` takes its terms to the displayed unit.
fn budget(f: &mut Flow, heading: &str, lines: &[BudgetLine], unit: &str, scale: f64) {
    if lines.is_empty() {
        return;
    }
    let size = 8.5;
    f.keep_together(8.0 + Flow::lines_mm(lines.len() + 2, size));
    f.text_at(0.0, 10.0, true, heading);
    f.skip(6.0);
    for (src, kind, u) in budget_rows(lines, scale) {
        let wrapped = Flow::wrap(&src, f.width_mm() - 50.0, size);
        f.text_at(
            f.width_mm() - 40.0,
            size,
            false,
            &format!("{kind}   {u} {unit}"),
        );
        for l in wrapped {
            f.text_at(0.0, size, false, &l);
            f.skip(Flow::lines_mm(1, size));
        }
    }
    let expanded = BudgetLine::expanded(lines) * scale;
    f.text_at(
        0.0,
        size,
        true,
        &format!(
            "expanded (95 % coverage): {} {unit}",
            units::uncertainty(expanded)
        ),
    );
    f.skip(Flow::lines_mm(1, size) + 3.0);
}

/// The certificate's number and who issued it, under the title.
fn identity(f: &mut Flow, seal: Option<&Seal>, look: &Look) {
    let number = seal.map_or("— (no raw record to fingerprint)".into(), |s| {
        s.number.clone()
    });
    let issuer = look
        .issuer
        .clone()
        .unwrap_or_else(|| "— (name the lab in the config file's [lab] name and address)".into());
    f.text_at(0.0, 10.0, true, &format!("Certificate {number}"));
    f.skip(5.0);
    f.paragraph(0.0, 8.5, false, &format!("Issued by {issuer}"));
    f.skip(2.0);
}

/// What the certificate states, fingerprinted: `remanent verify` checks the record against it.
fn fingerprint(f: &mut Flow, seal: Option<&Seal>) {
    let Some(s) = seal else { return };
    f.keep_together(26.0);
    f.text_at(0.0, 10.0, true, "Fingerprint (SHA-256)");
    f.skip(6.0);
    for (file, sha) in [
        (&s.raw_file, &s.raw_sha256),
        (&s.analysis_file, &s.analysis_sha256),
    ] {
        f.paragraph(0.0, 7.5, false, &format!("{}: {sha}", file.display()));
    }
    f.paragraph(
        0.0,
        7.5,
        false,
        "`remanent verify` on the run's folder recomputes both and says whether the record still matches what this certificate states.",
    );
    f.skip(2.0);
}

fn signatures(f: &mut Flow) {
    f.keep_together(48.0);
    f.skip(4.0);
    f.text_at(0.0, 10.0, true, "Signatures");
    f.skip(10.0);
    for who in ["Tested by", "Reviewed and released by"] {
        f.skip(9.0);
        let w = f.width_mm();
        f.rule(0.0, w * 0.45);
        f.rule(w * 0.5, w * 0.25);
        f.rule(w * 0.8, w * 0.2);
        f.skip(1.5);
        f.text_at(0.0, 8.0, false, &format!("{who}: name and signature"));
        f.text_at(w * 0.5, 8.0, false, "role");
        f.text_at(w * 0.8, 8.0, false, "date");
        f.skip(6.0);
    }
}

/// When the certificate's record ended (or began), seconds since 1970; a certificate of a
/// logger's file, which names no time, is dated when it is made.
fn issue_time_s(meta: Option<&RunMeta>) -> i64 {
    meta.and_then(|m| m.finished_utc.as_deref().or(Some(m.started_utc.as_str())))
        .and_then(crate::timestamps::parse_utc)
        .map(|s| s as i64)
        .unwrap_or_else(|| {
            std::time::SystemTime::now()
                .duration_since(std::time::UNIX_EPOCH)
                .map_or(0, |d| d.as_secs() as i64)
        })
}

/// The certificate of `a` as PDF bytes, on `look`'s paper in its units; `plot_png` is the
/// B–T plot.
pub fn certificate(
    a: &Analysis,
    meta: Option<&RunMeta>,
    seal: Option<&Seal>,
    plot_png: &[u8],
    look: &Look,
) -> Result<Vec<u8>, String> {
    let u = &look.units;
    let mut f = Flow::new(
        "Remanent inspection certificate",
        look.paper,
        issue_time_s(meta),
    )?;
    f.text_at(
        0.0,
        14.0,
        true,
        "Inspection certificate: permanent magnet temperature test",
    );
    f.skip(8.0);
    f.text_at(
        0.0,
        8.5,
        false,
        &format!(
            "{} · analysed {} UTC",
            crate::history::software(),
            a.provenance.analysed_utc
        ),
    );
    f.skip(5.0);
    identity(&mut f, seal, look);
    if a.input.uncalibrated {
        f.paragraph(
            0.0,
            10.0,
            true,
            "UNCALIBRATED BENCH: measured without a valid calibration; not for acceptance.",
        );
    }
    if let Some(note) = u.shown_note() {
        f.paragraph(0.0, 8.5, false, &note);
        f.skip(1.0);
    }
    rows(&mut f, &header(a, meta), 9.5);
    f.skip(2.0);
    f.rule(0.0, f.width_mm());
    f.skip(4.0);
    verdict_block(&mut f, a, u);
    rows(&mut f, &results(a, u), 9.5);
    f.skip(3.0);
    f.image_png(plot_png, f.width_mm())?;
    f.skip(4.0);
    budget(
        &mut f,
        "Uncertainty budget of α (standard uncertainties)",
        &a.alpha.budget,
        &u.alpha_symbol(),
        u.per_degree(1.0),
    );
    budget(
        &mut f,
        "Uncertainty budget of the loss",
        &a.loss.budget,
        "%",
        1.0,
    );
    budget(
        &mut f,
        "Uncertainty budget of Br (relative)",
        &a.remanence.budget,
        "%",
        1.0,
    );
    if !a.notes.is_empty() {
        f.keep_together(20.0);
        f.text_at(0.0, 10.0, true, "Notes");
        f.skip(6.0);
        for n in &a.notes {
            f.paragraph(3.0, 8.5, false, &format!("• {}", n.render(u)));
        }
        f.skip(2.0);
    }
    fingerprint(&mut f, seal);
    signatures(&mut f);
    let footer = format!(
        "{} · {} · Remanent certificate",
        a.provenance.magnet_id.as_deref().unwrap_or("magnet"),
        a.provenance.run
    );
    Ok(f.finish(&footer))
}
