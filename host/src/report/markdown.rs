//! The Markdown report of a run.

use std::fmt::Write as _;

use super::notes::{budget_rows, facts, METHOD_NOTES, SAFETY_NOTES};
use crate::analysis::{summary, Analysis};
use crate::run_dir::RunMeta;

/// The Markdown report.
pub fn markdown(a: &Analysis, meta: Option<&RunMeta>, title: &str) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "# Remanent report — {title}\n");
    if a.uncalibrated {
        let _ = writeln!(s, "**UNCALIBRATED BENCH: recorded without a valid calibration; the numbers are not traceable.**\n");
    }
    for (k, v) in facts(meta) {
        let _ = writeln!(s, "- **{k}**: {v}");
    }
    let _ = writeln!(
        s,
        "\n## Results\n\n```text\n{}```\n",
        summary::text(a, title)
    );
    let _ = writeln!(s, "## Uncertainty budget of α (%/°C, standard uncertainties)\n\n| source | type | u |\n|---|---|---|");
    for (src, k, u) in budget_rows(&a.alpha_budget) {
        let _ = writeln!(s, "| {src} | {k} | {u} |");
    }
    if !a.loss_budget.is_empty() {
        let _ = writeln!(s, "\n## Uncertainty budget of the loss (%, standard uncertainties)\n\n| source | type | u |\n|---|---|---|");
        for (src, k, u) in budget_rows(&a.loss_budget) {
            let _ = writeln!(s, "| {src} | {k} | {u} |");
        }
    }
    if !a.br_budget.is_empty() {
        let _ = writeln!(s, "\n## Uncertainty budget of Br (relative %, standard uncertainties)\n\n| source | type | u |\n|---|---|---|");
        for (src, k, u) in budget_rows(&a.br_budget) {
            let _ = writeln!(s, "| {src} | {k} | {u} |");
        }
    }
    let _ = writeln!(s, "\n## Plots\n\n![flux against temperature](flux_vs_temp.png)\n\n![residuals](residuals.png)\n\n![time series](timeline.png)\n");
    let _ = writeln!(s, "## Method\n");
    for n in METHOD_NOTES {
        let _ = writeln!(s, "- {n}");
    }
    let _ = writeln!(s, "\n## Safety\n");
    for n in SAFETY_NOTES {
        let _ = writeln!(s, "- {n}");
    }
    s
}
