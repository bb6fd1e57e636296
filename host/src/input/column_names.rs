//! Column names as people write them: `temperature_C`, `Temp (°F)`, `Time`, `B [mT]`,
//! `Field_G`… matched without regard to case, their quantity from the name's words and their
//! unit from its last word or its brackets. A name with no unit takes the quantity's usual one
//! (seconds, °C, mT) and the loader says so.

/// How a column's numbers become ours.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Unit {
    /// value · factor + offset.
    Linear(f64, f64),
    /// A clock timestamp, made seconds from the first row.
    Clock,
}

/// What a column holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Quantity {
    /// Time.
    Time,
    /// The magnet's (thermocouple's) temperature.
    Temp,
    /// Flux density.
    Flux,
    /// The Hall probe's own temperature.
    Probe,
}

/// Our names for each quantity, with the conversion to s, °C or mT.
pub const TIME: &[(&str, Unit)] = &[
    ("time_s", Unit::Linear(1.0, 0.0)),
    ("time_ms", Unit::Linear(0.001, 0.0)),
    ("time_min", Unit::Linear(60.0, 0.0)),
    ("clock", Unit::Clock),
];
/// Temperature names.
pub const TEMP: &[(&str, Unit)] = &[
    ("temp_C", Unit::Linear(1.0, 0.0)),
    ("temp_F", F),
    ("temp_K", Unit::Linear(1.0, -273.15)),
];
/// Flux names.
pub const FLUX: &[(&str, Unit)] = &[
    ("flux_mT", Unit::Linear(1.0, 0.0)),
    ("flux_T", Unit::Linear(1000.0, 0.0)),
    ("flux_G", Unit::Linear(0.1, 0.0)),
    ("flux_kG", Unit::Linear(100.0, 0.0)),
];
/// Probe temperature names.
pub const PROBE: &[(&str, Unit)] = &[
    ("probe_temp_C", Unit::Linear(1.0, 0.0)),
    ("probe_temp_F", F),
    ("probe_temp_K", Unit::Linear(1.0, -273.15)),
];

const F: Unit = Unit::Linear(5.0 / 9.0, -32.0 * 5.0 / 9.0);

/// A header name understood.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Understood {
    /// What it holds.
    pub quantity: Quantity,
    /// Its conversion.
    pub unit: Unit,
    /// The unit was not in the name: this one is assumed (for the note).
    pub assumed: Option<&'static str>,
}

const PROBE_WORDS: &[&str] = &[
    "probe_temp",
    "probe_temperature",
    "sensor_temp",
    "sensor_temperature",
    "hall_temp",
    "hall_temperature",
];
const TEMP_WORDS: &[&str] = &[
    "temp",
    "temperature",
    "magnet_temp",
    "magnet_temperature",
    "sample_temp",
    "sample_temperature",
    "thermocouple",
    "tc",
];
const FLUX_WORDS: &[&str] = &[
    "flux",
    "flux_density",
    "b",
    "bz",
    "field",
    "b_field",
    "magnetic_field",
];
const TIME_WORDS: &[&str] = &[
    "time",
    "elapsed",
    "elapsed_time",
    "time_elapsed",
    "runtime",
    "run_time",
    "device_time",
];
const CLOCK_WORDS: &[&str] = &["clock", "timestamp", "datetime", "date_time"];

/// The name's words, lower case, joined by `_`, and a unit given in brackets.
fn words(name: &str) -> (String, Option<String>) {
    let lower = name.trim().to_lowercase().replace('°', "");
    let (base, bracket) = match lower.find(['(', '[']) {
        Some(i) => {
            let inner: String = lower[i + 1..]
                .chars()
                .take_while(|c| *c != ')' && *c != ']')
                .collect();
            (lower[..i].to_string(), Some(inner.trim().to_string()))
        }
        None => (lower, None),
    };
    let joined = base
        .split(|c: char| !c.is_alphanumeric())
        .filter(|w| !w.is_empty())
        .collect::<Vec<_>>()
        .join("_");
    (joined, bracket)
}

/// A unit word of `q`, if it is one.
fn unit_of(q: Quantity, w: &str) -> Option<Unit> {
    let w = w
        .trim()
        .trim_start_matches("deg")
        .trim_start_matches('_')
        .trim();
    Some(match q {
        Quantity::Time => match w {
            "s" | "sec" | "secs" | "second" | "seconds" => Unit::Linear(1.0, 0.0),
            "ms" | "msec" | "millisecond" | "milliseconds" => Unit::Linear(0.001, 0.0),
            "min" | "mins" | "minute" | "minutes" => Unit::Linear(60.0, 0.0),
            "h" | "hr" | "hrs" | "hour" | "hours" => Unit::Linear(3600.0, 0.0),
            _ => return None,
        },
        Quantity::Temp | Quantity::Probe => match w {
            "c" | "celsius" => Unit::Linear(1.0, 0.0),
            "f" | "fahrenheit" => F,
            "k" | "kelvin" => Unit::Linear(1.0, -273.15),
            _ => return None,
        },
        Quantity::Flux => match w {
            "mt" | "millitesla" => Unit::Linear(1.0, 0.0),
            "t" | "tesla" => Unit::Linear(1000.0, 0.0),
            "g" | "gauss" | "gs" => Unit::Linear(0.1, 0.0),
            "kg" | "kgauss" | "kilogauss" | "kgs" => Unit::Linear(100.0, 0.0),
            "ut" | "µt" | "microtesla" => Unit::Linear(0.001, 0.0),
            _ => return None,
        },
    })
}

/// What a header name holds, if anything we know.
pub fn understand(name: &str) -> Option<Understood> {
    let (joined, bracket) = words(name);
    let classes: [(Quantity, &[&str]); 4] = [
        (Quantity::Probe, PROBE_WORDS),
        (Quantity::Temp, TEMP_WORDS),
        (Quantity::Flux, FLUX_WORDS),
        (Quantity::Time, TIME_WORDS),
    ];
    if CLOCK_WORDS.contains(&joined.as_str()) && bracket.is_none() {
        return Some(Understood {
            quantity: Quantity::Time,
            unit: Unit::Clock,
            assumed: None,
        });
    }
    // the unit in brackets, or the last word (`temp_F`, `time_ms`, a bare `T_C`)
    let (base, unit_word) = match &bracket {
        Some(b) => (joined.as_str(), Some(b.as_str())),
        None => match joined.rsplit_once('_') {
            Some((b, u)) => (b, Some(u)),
            None => (joined.as_str(), None),
        },
    };
    for (q, list) in classes {
        if let Some(u) = unit_word.and_then(|u| unit_of(q, u)) {
            if list.contains(&base) || base == "t" && q != Quantity::Probe {
                return Some(Understood {
                    quantity: q,
                    unit: u,
                    assumed: None,
                });
            }
        }
    }
    // no unit in the name: the whole name is the quantity's word
    for (q, list) in classes {
        if list.contains(&joined.as_str()) && bracket.is_none() {
            let (unit, said) = match q {
                Quantity::Time => (Unit::Linear(1.0, 0.0), "s"),
                Quantity::Flux => (Unit::Linear(1.0, 0.0), "mT"),
                _ => (Unit::Linear(1.0, 0.0), "°C"),
            };
            return Some(Understood {
                quantity: q,
                unit,
                assumed: Some(said),
            });
        }
    }
    None
}

#[cfg(test)]
mod tests {
    use super::*;

    fn q(name: &str) -> Option<(Quantity, Unit, bool)> {
        understand(name).map(|u| (u.quantity, u.unit, u.assumed.is_some()))
    }

    #[test]
    fn names_as_people_write_them() {
        let c = Unit::Linear(1.0, 0.0);
        assert_eq!(q("temperature_C"), Some((Quantity::Temp, c, false)));
        assert_eq!(q("Temp_F"), Some((Quantity::Temp, F, false)));
        assert_eq!(q("Temperature (°C)"), Some((Quantity::Temp, c, false)));
        assert_eq!(
            q("T [K]"),
            Some((Quantity::Temp, Unit::Linear(1.0, -273.15), false))
        );
        assert_eq!(q("Time"), Some((Quantity::Time, c, true)));
        assert_eq!(
            q("elapsed (min)"),
            Some((Quantity::Time, Unit::Linear(60.0, 0.0), false))
        );
        assert_eq!(q("Timestamp"), Some((Quantity::Time, Unit::Clock, false)));
        assert_eq!(q("B (mT)"), Some((Quantity::Flux, c, false)));
        assert_eq!(
            q("Field_Gauss"),
            Some((Quantity::Flux, Unit::Linear(0.1, 0.0), false))
        );
        assert_eq!(
            q("flux_kG"),
            Some((Quantity::Flux, Unit::Linear(100.0, 0.0), false))
        );
        assert_eq!(q("Probe_Temp_C"), Some((Quantity::Probe, c, false)));
        assert_eq!(
            q("time_ms"),
            Some((Quantity::Time, Unit::Linear(0.001, 0.0), false))
        );
        assert_eq!(q("humidity_pct"), None);
        assert_eq!(q("T"), None, "a bare T could be time or temperature");
    }
}
