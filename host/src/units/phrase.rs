//! Words with quantities in them: a note or a check's reason keeps each number with its kind
//! (a temperature, a difference, a flux, α…) in SI-based units, and becomes text only when
//! shown, in the reader's units. Serialised (`analysis.json`) it is the SI text.

use std::fmt;

use super::display::DisplayUnits;

/// What a number is, which decides how it converts.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Kind {
    /// A temperature, °C.
    Temp,
    /// A temperature difference, K.
    Span,
    /// A field reading, mT.
    Flux,
    /// A remanence, T.
    Br,
    /// A coefficient per degree (α), %/°C.
    Alpha,
    /// A coefficient per degree squared, %/°C².
    Alpha2,
}

#[derive(Debug, Clone, Copy, PartialEq)]
enum Shape {
    One(f64),
    Range(f64, f64),
    PlusMinus(f64, f64),
}

/// A number (or range, or value ± U) of one kind, with its decimals in SI-based units.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Qty {
    kind: Kind,
    shape: Shape,
    decimals: usize,
    signed: bool,
}

impl Qty {
    fn new(kind: Kind, shape: Shape, decimals: usize) -> Qty {
        Qty {
            kind,
            shape,
            decimals,
            signed: false,
        }
    }

    /// A value of `kind`.
    pub fn one(kind: Kind, v: f64, decimals: usize) -> Qty {
        Qty::new(kind, Shape::One(v), decimals)
    }

    /// A range `lo … hi` of `kind`.
    pub fn range(kind: Kind, lo: f64, hi: f64, decimals: usize) -> Qty {
        Qty::new(kind, Shape::Range(lo, hi), decimals)
    }

    /// `v ± u` of `kind` (`u` converts as a difference).
    pub fn pm(kind: Kind, v: f64, u: f64, decimals: usize) -> Qty {
        Qty::new(kind, Shape::PlusMinus(v, u), decimals)
    }

    /// Written with its sign, `+` included.
    pub fn signed(mut self) -> Qty {
        self.signed = true;
        self
    }

    /// `v` in the units shown (`as_span`: a difference, for a temperature's ± part).
    fn convert(&self, u: &DisplayUnits, v: f64, as_span: bool) -> f64 {
        match self.kind {
            Kind::Temp if as_span => u.temp_span(v),
            Kind::Temp => u.temp(v),
            Kind::Span => u.temp_span(v),
            Kind::Flux => u.flux(v),
            Kind::Br => u.br(v),
            Kind::Alpha => u.per_degree(v),
            Kind::Alpha2 => u.per_degree2(v),
        }
    }

    fn unit_and_decimals(&self, u: &DisplayUnits) -> (String, usize) {
        let d = self.decimals;
        match self.kind {
            Kind::Temp => (u.temp_symbol().into(), d),
            Kind::Span => (u.span_symbol().into(), d),
            Kind::Flux => (u.flux_symbol().into(), u.flux_decimals(d)),
            Kind::Br => (u.br_symbol().into(), u.br_decimals(d)),
            Kind::Alpha => (u.alpha_symbol(), d),
            Kind::Alpha2 => (format!("{}²", u.alpha_symbol()), d),
        }
    }

    /// As text in `u`: `99.8 °C`, `21.3 … 99.8 °C`, `-0.1144 ± 0.0021 %/°C`.
    pub fn render(&self, u: &DisplayUnits) -> String {
        let (unit, d) = self.unit_and_decimals(u);
        let num = |v: f64, as_span: bool| {
            let c = self.convert(u, v, as_span);
            if self.signed
                && format!("{:.d$}", c.abs())
                    .trim_matches(['0', '.'])
                    .is_empty()
            {
                // a value that rounds to zero has no sign (`-0.0 K` once showed)
                format!("{:.d$}", 0.0)
            } else if self.signed {
                format!("{c:+.d$}")
            } else {
                super::unsigned_zero(format!("{c:.d$}"))
            }
        };
        match self.shape {
            Shape::One(v) => format!("{} {unit}", num(v, false)),
            Shape::Range(lo, hi) => format!("{} … {} {unit}", num(lo, false), num(hi, false)),
            Shape::PlusMinus(v, e) => {
                let e = self.convert(u, e, true).abs();
                format!("{} ± {e:.d$} {unit}", num(v, false))
            }
        }
    }
}

/// A temperature, °C.
pub fn temp(c: f64, decimals: usize) -> Qty {
    Qty::one(Kind::Temp, c, decimals)
}

/// A temperature difference, K.
pub fn span(k: f64, decimals: usize) -> Qty {
    Qty::one(Kind::Span, k, decimals)
}

/// A field reading, mT.
pub fn flux(mt: f64, decimals: usize) -> Qty {
    Qty::one(Kind::Flux, mt, decimals)
}

/// α, %/°C.
pub fn alpha(pct_per_c: f64, decimals: usize) -> Qty {
    Qty::one(Kind::Alpha, pct_per_c, decimals)
}

/// One piece of a phrase.
#[derive(Debug, Clone, PartialEq)]
pub enum Part {
    /// Words.
    Text(String),
    /// A quantity.
    Qty(Qty),
}

impl From<&str> for Part {
    fn from(s: &str) -> Part {
        Part::Text(s.into())
    }
}

impl From<String> for Part {
    fn from(s: String) -> Part {
        Part::Text(s)
    }
}

impl From<Qty> for Part {
    fn from(q: Qty) -> Part {
        Part::Qty(q)
    }
}

/// Words with quantities, shown in any display units.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Phrase(Vec<Part>);

/// A phrase from pieces: words (`&str`, `String`) and quantities ([`Qty`]).
#[macro_export]
macro_rules! phrase {
    ($($part:expr),* $(,)?) => {
        $crate::units::Phrase::from_parts(vec![$($crate::units::Part::from($part)),*])
    };
}

impl Phrase {
    /// From its pieces.
    pub fn from_parts(parts: Vec<Part>) -> Phrase {
        Phrase(parts)
    }

    /// Append a piece.
    pub fn push(&mut self, part: impl Into<Part>) {
        self.0.push(part.into());
    }

    /// Append another phrase.
    pub fn extend(&mut self, other: Phrase) {
        self.0.extend(other.0);
    }

    /// As text in `u`.
    pub fn render(&self, u: &DisplayUnits) -> String {
        self.0
            .iter()
            .map(|p| match p {
                Part::Text(t) => t.clone(),
                Part::Qty(q) => q.render(u),
            })
            .collect()
    }
}

impl From<&str> for Phrase {
    fn from(s: &str) -> Phrase {
        Phrase(vec![s.into()])
    }
}

impl From<String> for Phrase {
    fn from(s: String) -> Phrase {
        Phrase(vec![s.into()])
    }
}

/// The SI text, as files carry it.
impl fmt::Display for Phrase {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.render(&DisplayUnits::SI))
    }
}

impl serde::Serialize for Phrase {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(&self.to_string())
    }
}

#[cfg(test)]
mod tests {
    use super::super::display::{FluxUnit, TempUnit};
    use super::*;

    #[test]
    fn a_phrase_is_its_si_text_in_files_and_converts_when_shown() {
        let p = crate::phrase![
            "exposure after ",
            temp(100.0, 0),
            ", drift ",
            Qty::pm(Kind::Temp, 25.0, 0.5, 1),
            ", α ",
            Qty::range(Kind::Alpha, -0.13, -0.09, 3),
            ", field ",
            flux(123.45, 2),
            ", Br ",
            Qty::pm(Kind::Br, 1.3, 0.02, 3),
        ];
        assert_eq!(
            serde_json::to_string(&p).unwrap(),
            "\"exposure after 100 °C, drift 25.0 ± 0.5 °C, α -0.130 … -0.090 %/°C, field 123.45 mT, Br 1.300 ± 0.020 T\""
        );
        // °F = 1.8 °C + 32 and 1 K = 1.8 °F (NIST SP 811 §B.9); 1 G = 0.1 mT (SI Brochure)
        let us = DisplayUnits {
            flux: FluxUnit::Gauss,
            temp: TempUnit::Fahrenheit,
        };
        assert_eq!(
            p.render(&us),
            "exposure after 212 °F, drift 77.0 ± 0.9 °F, α -0.072 … -0.050 %/°F, field 1234.5 G, Br 13000 ± 200 G"
        );
        assert_eq!(
            alpha(0.0123, 4).signed().render(&DisplayUnits::SI),
            "+0.0123 %/°C"
        );
        assert_eq!(span(10.0, 0).render(&us), "18 °F");
    }
}
