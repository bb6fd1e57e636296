//! A readable summary of an analysis, for the terminal and the Markdown report.

use std::fmt::Write;

use super::result::Analysis;

/// Lines of text describing the result.
pub fn text(a: &Analysis, title: &str) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "{title}");
    let _ = writeln!(
        s,
        "  α(Br), 20…{:.0} °C:   {:+.4} %/°C  ± {:.4} %/°C (k = 2), fitted {:.1}…{:.1} °C by {}",
        a.fit_range_c[1],
        a.alpha_pct_per_c,
        a.alpha_u95_pct_per_c,
        a.fit_range_c[0],
        a.fit_range_c[1],
        a.fit_method
    );
    let _ = writeln!(
        s,
        "  tangent at 20 °C:     {:+.4} %/°C, quadratic term {:+.6} %/°C², B20 = {:.2} mT",
        a.alpha_at_20c_pct_per_c, a.gamma_pct_per_c2, a.b20_mt
    );
    match a.lag_time_constant_s {
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
    match (a.irreversible_loss_pct, a.irreversible_loss_u95_pct) {
        (Some(l), Some(u)) => {
            let _ = writeln!(
                s,
                "  irreversible loss:    {l:.3} % ± {u:.3} % (k = 2), peak {:.1} °C",
                a.max_magnet_temp_c
            );
        }
        _ => {
            let _ = writeln!(s, "  irreversible loss:    not computed");
        }
    }
    if let Some(b) = a.br {
        if a.br_referred {
            let _ = writeln!(
                s,
                "  Br (reference):       {:.4} T ± {:.4} T (k = 2), referred to the fixture's reference magnet",
                b.br_t, b.br_u95_t
            );
        } else {
            let _ = writeln!(
                s,
                "  Br from geometry:     {:.3} T ± {:.3} T (k = 2); {:+.2} % per +0.1 mm of gap",
                b.br_t, b.br_u95_t, b.pct_per_0_1_mm
            );
        }
    }
    if let Some(tc) = a.curie_estimate_c {
        let _ = writeln!(s, "  Curie collapse:       at about {tc:.0} °C");
    }
    let _ = writeln!(s, "  material family:      {}", a.material_family);
    if a.uncalibrated {
        let _ = writeln!(s, "  UNCALIBRATED BENCH: recorded without a valid calibration; the numbers are not traceable");
    }
    let _ = writeln!(
        s,
        "  verdict:              {}{}{}",
        a.verdict,
        a.grade
            .as_ref()
            .map(|g| format!(" against grade {g}"))
            .unwrap_or_default(),
        if a.heat_damaged {
            "  — HEAT DAMAGE: flux lost in this test"
        } else {
            ""
        }
    );
    for c in &a.checks {
        let _ = writeln!(
            s,
            "    {:<18} {:<13} {}",
            c.what,
            c.outcome.word(),
            c.reason
        );
    }
    for n in &a.notes {
        let _ = writeln!(s, "  note: {n}");
    }
    s
}
