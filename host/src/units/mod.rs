//! The one place quantities become text: how many decimals each quantity gets and how its
//! unit and uncertainty are written. Reports, summaries and tables call these, so another
//! display unit or precision is a change here alone. Numbers are held in SI-based units
//! everywhere else; [`DisplayUnits`] converts them as they are shown, and a [`Phrase`] carries
//! quantities inside words (notes, check reasons) until then.

mod config;
mod display;
mod phrase;

pub use config::{choose, config_path, issuer, load, ConfigError, CONFIG_ENV};
pub use display::{DisplayUnits, FluxUnit, TempUnit, UnknownUnit};
pub use phrase::{alpha, flux, span, temp as temp_q, Kind, Part, Phrase, Qty};

/// α with its expanded uncertainty: `-0.1144 ± 0.0021 %/°C (95 %)`.
pub fn alpha_with_u95(u: &DisplayUnits, alpha_pct_per_c: f64, u95: f64) -> String {
    let q = Qty::pm(Kind::Alpha, alpha_pct_per_c, u95, 4).signed();
    format!("{} (95 %)", q.render(u))
}

/// Irreversible loss with its expanded uncertainty: `0.123 ± 0.010 % (95 %)`.
pub fn loss_with_u95(loss_pct: f64, u95: f64) -> String {
    format!("{} ± {u95:.3} % (95 %)", fixed(loss_pct, 3))
}

/// `v` to `d` decimals, a value that rounds to zero shown without a sign (`0.000`, never
/// `-0.000`).
pub fn fixed(v: f64, d: usize) -> String {
    unsigned_zero(format!("{v:.d$}"))
}

/// A number's text without the minus of a value that rounds to zero.
pub fn unsigned_zero(s: String) -> String {
    match s.strip_prefix('-') {
        Some(rest) if rest.chars().all(|c| c == '0' || c == '.') => rest.to_string(),
        _ => s,
    }
}

/// A temperature range: `21.3 … 99.8 °C`.
pub fn temp_range(u: &DisplayUnits, r: [f64; 2]) -> String {
    Qty::range(Kind::Temp, r[0], r[1], 1).render(u)
}

/// A temperature: `99.8 °C`.
pub fn temp(u: &DisplayUnits, c: f64) -> String {
    phrase::temp(c, 1).render(u)
}

/// A standard uncertainty in a budget table (in the budget's own unit), to two significant
/// digits: a small term reads `0.00016`, not `0.00000`; a negligible one `< 1e-6`.
pub fn uncertainty(u: f64) -> String {
    if !u.is_finite() {
        return format!("{u}");
    }
    if u == 0.0 {
        return "0".into();
    }
    if u.abs() < 1e-6 {
        return "< 1e-6".into();
    }
    let decimals = (1.0 - u.abs().log10().floor()).clamp(0.0, 7.0) as usize;
    format!("{u:.decimals$}")
}

/// Words of `text` in lines of at most about `width` characters (a longer word has a line of
/// its own).
pub fn wrap_words(text: &str, width: usize) -> Vec<String> {
    let mut lines = vec![String::new()];
    for word in text.split_whitespace() {
        let last = lines.last_mut().expect("one line at least");
        if !last.is_empty() && last.chars().count() + 1 + word.chars().count() > width {
            lines.push(word.to_string());
        } else {
            if !last.is_empty() {
                last.push(' ');
            }
            last.push_str(word);
        }
    }
    lines
}

/// A count with its noun, singular or plural: `1 gap`, `3 gaps`.
pub fn count(n: u64, singular: &str, plural: &str) -> String {
    format!("{n} {}", if n == 1 { singular } else { plural })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn quantities_carry_their_units_and_counts_agree_with_their_nouns() {
        let si = DisplayUnits::SI;
        assert_eq!(
            alpha_with_u95(&si, -0.11436, 0.0021),
            "-0.1144 ± 0.0021 %/°C (95 %)"
        );
        assert_eq!(temp_range(&si, [21.26, 99.84]), "21.3 … 99.8 °C");
        assert_eq!(count(1, "gap", "gaps"), "1 gap");
        assert_eq!(count(0, "gap", "gaps"), "0 gaps");
        // a value that rounds to zero has no sign
        assert_eq!(fixed(-0.0001, 3), "0.000");
        assert_eq!(fixed(-0.0006, 3), "-0.001");
        assert_eq!(loss_with_u95(-0.0004, 0.02), "0.000 ± 0.020 % (95 %)");
        assert_eq!(Qty::one(Kind::Span, -0.01, 1).signed().render(&si), "0.0 K");
        assert_eq!(
            Qty::one(Kind::Span, -0.06, 1).signed().render(&si),
            "-0.1 K"
        );
        // budget terms keep two significant digits however small
        assert_eq!(uncertainty(0.000163), "0.00016");
        assert_eq!(uncertainty(0.2), "0.20");
        assert_eq!(uncertainty(0.0244), "0.024");
        assert_eq!(uncertainty(1.5), "1.5");
        assert_eq!(uncertainty(3e-9), "< 1e-6");
    }
}
