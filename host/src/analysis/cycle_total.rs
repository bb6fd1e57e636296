//! A record of several heat cycles: its headline loss is the total from the first reference to
//! the last, each cycle's loss compounding, and the verdict judges that total and the cycle
//! that lost most (a first-cycle loss is not hidden behind a stable last cycle).

use super::result::{Analysis, BudgetLine};
use super::verdict;
use super::verdict::CheckKind;

/// The record's headline loss over several cycles: the total from the first reference to the
/// last (each cycle's loss compounds), judged on the total and on the cycle that lost most.
/// With a cycle whose loss was not computed, the total is not either (the note says why).
pub fn judge_total(a: &mut Analysis) {
    let per: Option<Vec<(f64, f64, f64)>> = a
        .cycles
        .iter()
        .map(|c| {
            c.irreversible_loss_pct
                .zip(c.irreversible_loss_u95_pct)
                .map(|(l, u)| (l, u, c.peak_c))
        })
        .collect();
    let exposure_c = a
        .cycles
        .iter()
        .map(|c| c.peak_c)
        .fold(f64::NEG_INFINITY, f64::max);
    let Some(per) = per else {
        a.loss.pct = None;
        a.loss.u95_pct = None;
        a.loss.method_code = None;
        a.loss.budget.clear();
        a.notes.push("a cycle's loss could not be computed, so neither can the total over the record: irreversible loss not computed".into());
        return;
    };
    let kept: f64 = per.iter().map(|(l, _, _)| 1.0 - l / 100.0).product();
    let total = (1.0 - kept) * 100.0;
    let u95 = per.iter().map(|(_, u, _)| u * u).sum::<f64>().sqrt();
    let causing_c = per
        .iter()
        .max_by(|x, y| x.0.total_cmp(&y.0))
        .map_or(exposure_c, |c| c.2);
    a.loss.pct = Some(total);
    a.loss.u95_pct = Some(u95);
    a.loss.method_code = Some(super::result::LossMethod::Cycles);
    a.loss.reference_c = None;
    a.loss.budget = per
        .iter()
        .enumerate()
        .map(|(k, (_, u, _))| {
            BudgetLine::b(format!("cycle {}: its loss's own budget", k + 1), u / 2.0)
        })
        .collect();
    a.judgement
        .checks
        .retain(|c| !matches!(c.what, CheckKind::Coercivity | CheckKind::Loss));
    let lv = super::loss_verdict::judge_loss(
        Some((total, u95)),
        causing_c,
        exposure_c,
        a.judgement.safe_peak.as_ref(),
    );
    a.judgement.checks.extend(lv.check);
    a.judgement.heat_damaged = lv.heat_damaged;
    a.judgement.quarantine = lv.quarantine;
    a.judgement.verdict = verdict::overall(&a.judgement.checks);
}
