//! The Markdown report of a run.

use std::fmt::Write as _;

use super::notes::{budget_rows, facts, safety_notes, METHOD_NOTES};
use super::summary;
use crate::analysis::Analysis;
use crate::run_dir::RunMeta;
use crate::units::DisplayUnits;

/// The Markdown report, in the display units `u`.
pub fn markdown(a: &Analysis, meta: Option<&RunMeta>, title: &str, u: &DisplayUnits) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "# Remanent report — {title}\n");
    if a.input.uncalibrated {
        let _ = writeln!(s, "**UNCALIBRATED BENCH: recorded without a valid calibration; the numbers are not traceable.**\n");
    }
    if let Some(note) = u.shown_note() {
        let _ = writeln!(s, "_{note}_\n");
    }
    for (k, v) in facts(meta, u) {
        let _ = writeln!(s, "- **{k}**: {v}");
    }
    let _ = writeln!(
        s,
        "\n## Results\n\n```text\n{}```\n",
        summary::text(a, title, u)
    );
    let _ = writeln!(s, "## Uncertainty budget of α ({}, standard uncertainties)\n\n| source | type | u |\n|---|---|---|", u.alpha_symbol());
    for (src, k, v) in budget_rows(&a.alpha.budget, u.per_degree(1.0)) {
        let _ = writeln!(s, "| {src} | {k} | {v} |");
    }
    if !a.loss.budget.is_empty() {
        let _ = writeln!(s, "\n## Uncertainty budget of the loss (%, standard uncertainties)\n\n| source | type | u |\n|---|---|---|");
        for (src, k, v) in budget_rows(&a.loss.budget, 1.0) {
            let _ = writeln!(s, "| {src} | {k} | {v} |");
        }
    }
    if !a.remanence.budget.is_empty() {
        let _ = writeln!(s, "\n## Uncertainty budget of Br (relative %, standard uncertainties)\n\n| source | type | u |\n|---|---|---|");
        for (src, k, v) in budget_rows(&a.remanence.budget, 1.0) {
            let _ = writeln!(s, "| {src} | {k} | {v} |");
        }
    }
    let _ = writeln!(s, "\n## Plots\n\n![flux against temperature](flux_vs_temp.png)\n\n![residuals](residuals.png)\n\n![time series](timeline.png)\n");
    let _ = writeln!(s, "## Method\n");
    for n in METHOD_NOTES {
        let _ = writeln!(s, "- {n}");
    }
    let _ = writeln!(s, "\n## Safety\n");
    for n in safety_notes(u) {
        let _ = writeln!(s, "- {n}");
    }
    s
}
