//! The user's display units: flux density in mT, G or T and temperature in °C or °F. Every
//! quantity is held in SI-based units (mT, T, °C, K, %/°C); these convert only at the moment
//! a number becomes text or a plot axis. JSON and CSV never pass through here.

use std::fmt;
use std::str::FromStr;

/// How flux densities are shown.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum FluxUnit {
    /// Millitesla (field readings); Br in tesla, as the trade quotes it.
    #[default]
    MilliTesla,
    /// Gauss, for field readings and Br alike (1 mT = 10 G, 1 T = 10 000 G).
    Gauss,
    /// Tesla, for field readings and Br alike.
    Tesla,
}

/// How temperatures are shown.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum TempUnit {
    /// Degrees Celsius.
    #[default]
    Celsius,
    /// Degrees Fahrenheit (°F = °C × 9/5 + 32; a difference of 1 K is 1.8 °F).
    Fahrenheit,
}

/// The display units of one command.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct DisplayUnits {
    /// Flux density.
    pub flux: FluxUnit,
    /// Temperature.
    pub temp: TempUnit,
}

/// A unit name that is not one of the choices.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("`{given}` is not a {what} unit: choose {choices}")]
pub struct UnknownUnit {
    /// What was given.
    pub given: String,
    /// Flux or temperature.
    pub what: &'static str,
    /// The accepted names.
    pub choices: &'static str,
}

impl FromStr for FluxUnit {
    type Err = UnknownUnit;
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        match s.trim() {
            "mT" | "mt" | "millitesla" => Ok(FluxUnit::MilliTesla),
            "G" | "g" | "gauss" => Ok(FluxUnit::Gauss),
            "T" | "t" | "tesla" => Ok(FluxUnit::Tesla),
            other => Err(UnknownUnit {
                given: other.into(),
                what: "flux",
                choices: "mT, G or T",
            }),
        }
    }
}

impl FromStr for TempUnit {
    type Err = UnknownUnit;
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        match s.trim() {
            "C" | "c" | "°C" | "celsius" => Ok(TempUnit::Celsius),
            "F" | "f" | "°F" | "fahrenheit" => Ok(TempUnit::Fahrenheit),
            other => Err(UnknownUnit {
                given: other.into(),
                what: "temperature",
                choices: "C or F",
            }),
        }
    }
}

impl fmt::Display for FluxUnit {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            FluxUnit::MilliTesla => "mT",
            FluxUnit::Gauss => "G",
            FluxUnit::Tesla => "T",
        })
    }
}

impl fmt::Display for TempUnit {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.symbol())
    }
}

impl TempUnit {
    /// `°C` or `°F`.
    pub fn symbol(self) -> &'static str {
        match self {
            TempUnit::Celsius => "°C",
            TempUnit::Fahrenheit => "°F",
        }
    }
}

impl DisplayUnits {
    /// The SI-based units every file is written in: mT (Br in T) and °C.
    pub const SI: DisplayUnits = DisplayUnits {
        flux: FluxUnit::MilliTesla,
        temp: TempUnit::Celsius,
    };

    /// A temperature, °C → shown.
    pub fn temp(&self, c: f64) -> f64 {
        match self.temp {
            TempUnit::Celsius => c,
            TempUnit::Fahrenheit => c * 1.8 + 32.0,
        }
    }

    /// A temperature difference, K → shown.
    pub fn temp_span(&self, k: f64) -> f64 {
        match self.temp {
            TempUnit::Celsius => k,
            TempUnit::Fahrenheit => k * 1.8,
        }
    }

    /// A coefficient per degree (α, %/°C) → per shown degree.
    pub fn per_degree(&self, per_c: f64) -> f64 {
        per_c / self.temp_span(1.0)
    }

    /// A coefficient per degree squared → per shown degree squared.
    pub fn per_degree2(&self, per_c2: f64) -> f64 {
        per_c2 / (self.temp_span(1.0) * self.temp_span(1.0))
    }

    /// `°C` or `°F`.
    pub fn temp_symbol(&self) -> &'static str {
        self.temp.symbol()
    }

    /// A difference's unit: `K` in Celsius (as the files write it), `°F` in Fahrenheit.
    pub fn span_symbol(&self) -> &'static str {
        match self.temp {
            TempUnit::Celsius => "K",
            TempUnit::Fahrenheit => "°F",
        }
    }

    /// A field reading, mT → shown.
    pub fn flux(&self, mt: f64) -> f64 {
        match self.flux {
            FluxUnit::MilliTesla => mt,
            FluxUnit::Gauss => mt * 10.0,
            FluxUnit::Tesla => mt * 1e-3,
        }
    }

    /// A field reading's unit.
    pub fn flux_symbol(&self) -> &'static str {
        match self.flux {
            FluxUnit::MilliTesla => "mT",
            FluxUnit::Gauss => "G",
            FluxUnit::Tesla => "T",
        }
    }

    /// Decimals for a field reading given those it has in mT.
    pub fn flux_decimals(&self, mt_decimals: usize) -> usize {
        match self.flux {
            FluxUnit::MilliTesla => mt_decimals,
            FluxUnit::Gauss => mt_decimals.saturating_sub(1),
            FluxUnit::Tesla => mt_decimals + 3,
        }
    }

    /// A remanence, T → shown (tesla unless gauss is chosen).
    pub fn br(&self, t: f64) -> f64 {
        match self.flux {
            FluxUnit::Gauss => t * 1e4,
            _ => t,
        }
    }

    /// A remanence's unit.
    pub fn br_symbol(&self) -> &'static str {
        match self.flux {
            FluxUnit::Gauss => "G",
            _ => "T",
        }
    }

    /// Decimals for a remanence given those it has in T.
    pub fn br_decimals(&self, t_decimals: usize) -> usize {
        match self.flux {
            FluxUnit::Gauss => t_decimals.saturating_sub(4),
            _ => t_decimals,
        }
    }

    /// Whether these are the units the files are written in.
    pub fn is_si(&self) -> bool {
        *self == DisplayUnits::SI
    }

    /// For a report shown in other units than its files: what it shows and what they hold.
    pub fn shown_note(&self) -> Option<String> {
        (!self.is_si()).then(|| {
            format!(
                "Shown in {} and {} (Br in {}); analysis.json and the CSV files hold °C, mT and T. The method below is stated in °C.",
                self.temp_symbol(),
                self.flux_symbol(),
                self.br_symbol()
            )
        })
    }

    /// The unit of α: `%/°C` or `%/°F`.
    pub fn alpha_symbol(&self) -> String {
        format!("%/{}", self.temp_symbol())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn conversions_follow_the_definitions_of_the_units() {
        // SI Brochure (BIPM, 9th ed.) Table 8: 1 G = 1e-4 T; NIST SP 811 §B.9:
        // t/°F = 1.8 t/°C + 32, and a kelvin is 1.8 °F of difference.
        let f = DisplayUnits {
            flux: FluxUnit::Gauss,
            temp: TempUnit::Fahrenheit,
        };
        assert_eq!(f.temp(100.0), 212.0);
        assert_eq!(f.temp(-40.0), -40.0);
        assert_eq!(f.temp_span(10.0), 18.0);
        assert!((f.per_degree(-0.12) - (-0.12 / 1.8)).abs() < 1e-15);
        assert_eq!(f.flux(123.4), 1234.0);
        assert_eq!(f.br(1.3), 13_000.0);
        let t = DisplayUnits {
            flux: FluxUnit::Tesla,
            ..DisplayUnits::SI
        };
        assert_eq!(t.flux(250.0), 0.25);
        assert_eq!(t.flux_decimals(2), 5);
        assert_eq!("G".parse::<FluxUnit>(), Ok(FluxUnit::Gauss));
        assert!("kG"
            .parse::<FluxUnit>()
            .unwrap_err()
            .to_string()
            .contains("mT, G or T"));
    }
}
