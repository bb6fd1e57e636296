//! A readable summary of an analysis, for the terminal and the Markdown report, in the
//! reader's display units.

use std::fmt::Write;

use crate::analysis::result::{Analysis, LossMethod};
use crate::units::{self, temp_q, DisplayUnits, Kind, Qty};

/// Lines of text describing the result, in the display units `u`.
pub fn text(a: &Analysis, title: &str, u: &DisplayUnits) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "{title}");
    let alpha = |v: f64, d: usize| Qty::one(Kind::Alpha, v, d).signed().render(u);
    let t20 = temp_q(20.0, 0).render(u);
    let _ = writeln!(
        s,
        "  α(Br), {}:   {}, fitted {} by {}",
        Qty::range(Kind::Temp, 20.0, a.alpha.range_c[1], 0).render(u),
        units::alpha_with_u95(u, a.alpha.pct_per_c, a.alpha.u95_pct_per_c),
        units::temp_range(u, a.alpha.range_c),
        a.alpha.method
    );
    let _ = writeln!(
        s,
        "  tangent at {t20}:     {}, quadratic term {}, B at {t20} = {}",
        alpha(a.alpha.at_20c_pct_per_c, 4),
        Qty::one(Kind::Alpha2, a.alpha.gamma_pct_per_c2, 6)
            .signed()
            .render(u),
        Qty::one(Kind::Flux, a.alpha.b20_mt, 2).render(u)
    );
    match a.lag.time_constant_s {
        Some(t) => {
            let _ = writeln!(
                s,
                "  thermal lag:          τ = {t:.1} s (magnet behind thermocouple)"
            );
        }
        None => {
            let _ = writeln!(s, "  thermal lag:          not estimated");
        }
    }
    let _ = writeln!(s, "  irreversible loss:    {}", loss_words(a, u));
    if let Some(p) = &a.judgement.safe_peak {
        let _ = writeln!(s, "  {}", p.explain().render(u));
    }
    if let Some(b) = a.remanence.estimate {
        if a.remanence.referred {
            let _ = writeln!(
                s,
                "  Br (reference):       {} (k = 2), referred to the fixture's reference magnet",
                Qty::pm(Kind::Br, b.br_t, b.br_u95_t, 4).render(u)
            );
        } else {
            let _ = writeln!(
                s,
                "  Br from geometry:     {} (k = 2); {:+.2} % per +0.1 mm of gap",
                Qty::pm(Kind::Br, b.br_t, b.br_u95_t, 3).render(u),
                b.pct_per_0_1_mm
            );
        }
    }
    if let Some(tc) = a.lag.curie_estimate_c {
        let _ = writeln!(
            s,
            "  Curie collapse:       at about {}",
            temp_q(tc, 0).render(u)
        );
    }
    let _ = writeln!(s, "  material family:      {}", a.judgement.material_family);
    if a.input.uncalibrated {
        let _ = writeln!(s, "  UNCALIBRATED BENCH: recorded without a valid calibration; the numbers are not traceable");
    }
    let _ = writeln!(
        s,
        "  verdict:              {}{}{}",
        a.judgement.verdict,
        a.judgement
            .grade
            .as_ref()
            .map(|g| format!(" against grade {g}"))
            .unwrap_or_default(),
        if a.judgement.heat_damaged {
            "  — FLUX LOST in this test, within its safe test peak"
        } else {
            ""
        }
    );
    for c in &a.judgement.checks {
        let _ = writeln!(
            s,
            "    {:<18} {:<13} {}",
            c.what,
            c.outcome.word(),
            c.reason.render(u)
        );
    }
    if let Some(q) = &a.judgement.quarantine {
        let _ = writeln!(s, "  {}", q.render(u));
    }
    for n in &a.notes {
        let _ = writeln!(s, "  note: {}", n.render(u));
    }
    s
}

/// The loss in words, with the temperatures its references were taken at (the same words in
/// every format).
pub fn loss_words(a: &Analysis, u: &DisplayUnits) -> String {
    match (a.loss.pct, a.loss.u95_pct) {
        (Some(l), Some(lu)) => {
            let at = match a.loss.reference_c {
                Some([t0, t1]) if a.loss.method_code == Some(LossMethod::References) => format!(
                    " between the references at {} and {}, each referred to {} with the fitted curve,",
                    units::temp(u, t0),
                    units::temp(u, t1),
                    units::temp(u, 20.0)
                ),
                _ if a.loss.method_code == Some(LossMethod::Cycles) => format!(
                    " in total over {} heat cycles, from the first reference to the last ({}),",
                    a.cycles.len(),
                    a.cycles
                        .iter()
                        .enumerate()
                        .map(|(k, c)| format!(
                            "cycle {} to {}: {}",
                            k + 1,
                            units::temp(u, c.peak_c),
                            c.irreversible_loss_pct
                                .zip(c.irreversible_loss_u95_pct)
                                .map_or("—".into(), |(l, lu)| units::loss_with_u95(l, lu))
                        ))
                        .collect::<Vec<_>>()
                        .join("; ")
                ),
                _ => " from the heating and cooling branches,".into(),
            };
            format!(
                "{}{at} after a peak of {}",
                units::loss_with_u95(l, lu),
                units::temp(u, a.lag.max_magnet_temp_c)
            )
        }
        _ => "not computed (the notes say why)".into(),
    }
}
