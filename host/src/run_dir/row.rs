//! The one row type of `samples.csv`: what the writer serialises and the reader
//! deserialises, each number at the precision the record keeps, units in the headers.

use remanent_protocol::ThermoWord;
use serde::{Deserialize, Deserializer, Serialize, Serializer};

/// One sample: raw codes exactly as received, and the values converted when it was written.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SampleRow {
    /// Full sequence number.
    pub seq: u32,
    /// Device time, s.
    #[serde(with = "fixed3")]
    pub device_time_s: f64,
    /// Hall channel code.
    pub hall_code: i16,
    /// Probe thermistor channel code.
    pub probe_code: i16,
    /// The converter's word, 8 hex digits.
    #[serde(with = "hex_word")]
    pub thermo_word: ThermoWord,
    /// Heater duty, %.
    #[serde(with = "fixed1")]
    pub heater_duty_pct: f64,
    /// Heater enable output high (1) or low (0).
    pub heater_on: u8,
    /// A fault latched (1) or not (0).
    pub fault_latched: u8,
    /// The converter's fault: `open`, `short_gnd`, `short_vcc` or empty.
    pub tc_fault: String,
    /// Thermocouple, °C (empty on a converter fault).
    #[serde(rename = "temp_C", with = "opt3")]
    pub temp_c: Option<f64>,
    /// Cold junction, °C.
    #[serde(rename = "cold_junction_C", with = "fixed4")]
    pub cold_junction_c: f64,
    /// Probe temperature, °C (empty with the thermistor open or shorted).
    #[serde(rename = "probe_temp_C", with = "opt3")]
    pub probe_temp_c: Option<f64>,
    /// Flux density, mT (empty without a probe temperature).
    #[serde(rename = "flux_mT", with = "opt4")]
    pub flux_mt: Option<f64>,
    /// Setpoint in force, °C (empty while the heater is off).
    #[serde(rename = "setpoint_C", with = "opt1")]
    pub setpoint_c: Option<f64>,
}

fn parse<'de, D: Deserializer<'de>>(d: D) -> Result<Option<f64>, D::Error> {
    let s = String::deserialize(d)?;
    if s.trim().is_empty() {
        return Ok(None);
    }
    s.trim()
        .parse::<f64>()
        .map(Some)
        .map_err(|_| serde::de::Error::custom(format!("`{s}` is not a number")))
}

macro_rules! fixed {
    ($name:ident, $opt:ident, $digits:literal) => {
        mod $name {
            use super::*;
            pub fn serialize<S: Serializer>(v: &f64, s: S) -> Result<S::Ok, S::Error> {
                s.serialize_str(&format!("{v:.*}", $digits))
            }
            pub fn deserialize<'de, D: Deserializer<'de>>(d: D) -> Result<f64, D::Error> {
                parse(d)?.ok_or_else(|| serde::de::Error::custom("an empty number"))
            }
        }
        mod $opt {
            use super::*;
            pub fn serialize<S: Serializer>(v: &Option<f64>, s: S) -> Result<S::Ok, S::Error> {
                match v {
                    Some(v) => s.serialize_str(&format!("{v:.*}", $digits)),
                    None => s.serialize_str(""),
                }
            }
            pub fn deserialize<'de, D: Deserializer<'de>>(d: D) -> Result<Option<f64>, D::Error> {
                parse(d)
            }
        }
    };
}

fixed!(fixed1, opt1, 1);
fixed!(fixed3, opt3, 3);
fixed!(fixed4, opt4, 4);

impl SampleRow {
    /// Read a row from its line as the writer wrote it (no quotes, no spaces): the fast path
    /// the reader uses, the same result as deserialising it. Errors name the column.
    pub fn parse_line(line: &str) -> Result<SampleRow, String> {
        let line = line.strip_suffix('\n').unwrap_or(line);
        let line = line.strip_suffix('\r').unwrap_or(line);
        // split at the ASCII commas by byte (a comma is always a character boundary)
        let bytes = line.as_bytes();
        let mut start = 0;
        let mut cells = std::iter::from_fn(|| {
            if start > bytes.len() {
                return None;
            }
            let end = bytes[start..]
                .iter()
                .position(|&b| b == b',')
                .map_or(bytes.len(), |k| start + k);
            let cell = &line[start..end];
            start = end + 1;
            Some(cell)
        });
        let mut next =
            |name: &'static str| cells.next().ok_or_else(|| format!("no `{name}` field"));
        // the writer writes no spaces: cells are parsed as they are
        fn num<T: std::str::FromStr>(name: &str, v: &str) -> Result<T, String> {
            v.parse()
                .map_err(|_| format!("`{name}`: `{v}` is not a number"))
        }
        fn opt(name: &str, v: &str) -> Result<Option<f64>, String> {
            if v.is_empty() {
                Ok(None)
            } else {
                num(name, v).map(Some)
            }
        }
        let row = SampleRow {
            seq: num("seq", next("seq")?)?,
            device_time_s: num("device_time_s", next("device_time_s")?)?,
            hall_code: num("hall_code", next("hall_code")?)?,
            probe_code: num("probe_code", next("probe_code")?)?,
            thermo_word: {
                let v = next("thermo_word")?;
                u32::from_str_radix(v, 16)
                    .map(ThermoWord)
                    .map_err(|_| format!("`thermo_word`: `{v}` is not a hex word"))?
            },
            heater_duty_pct: num("heater_duty_pct", next("heater_duty_pct")?)?,
            heater_on: num("heater_on", next("heater_on")?)?,
            fault_latched: num("fault_latched", next("fault_latched")?)?,
            tc_fault: next("tc_fault")?.to_string(),
            temp_c: opt("temp_C", next("temp_C")?)?,
            cold_junction_c: num("cold_junction_C", next("cold_junction_C")?)?,
            probe_temp_c: opt("probe_temp_C", next("probe_temp_C")?)?,
            flux_mt: opt("flux_mT", next("flux_mT")?)?,
            setpoint_c: opt("setpoint_C", next("setpoint_C")?)?,
        };
        match cells.next() {
            None => Ok(row),
            Some(_) => Err("more fields than the header".into()),
        }
    }
}

mod hex_word {
    use super::*;
    pub fn serialize<S: Serializer>(w: &ThermoWord, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_str(&format!("{:08x}", w.0))
    }
    pub fn deserialize<'de, D: Deserializer<'de>>(d: D) -> Result<ThermoWord, D::Error> {
        let s = String::deserialize(d)?;
        u32::from_str_radix(s.trim(), 16)
            .map(ThermoWord)
            .map_err(|_| serde::de::Error::custom(format!("`{s}` is not a hex word")))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_row_survives_the_round_trip_at_its_precision() {
        let row = SampleRow {
            seq: 7,
            device_time_s: 12.3456,
            hall_code: -120,
            probe_code: 16000,
            thermo_word: ThermoWord(0x0190_1880),
            heater_duty_pct: 40.04,
            heater_on: 1,
            fault_latched: 0,
            tc_fault: String::new(),
            temp_c: Some(25.1234),
            cold_junction_c: 24.5,
            probe_temp_c: None,
            flux_mt: Some(-1.23456),
            setpoint_c: None,
        };
        let mut w = csv::Writer::from_writer(Vec::new());
        w.serialize(&row).unwrap();
        let text = String::from_utf8(w.into_inner().unwrap()).unwrap();
        assert_eq!(
            text.lines().nth(1).unwrap(),
            "7,12.346,-120,16000,01901880,40.0,1,0,,25.123,24.5000,,-1.2346,"
        );
        let back: SampleRow = csv::Reader::from_reader(text.as_bytes())
            .deserialize()
            .next()
            .unwrap()
            .unwrap();
        assert_eq!(back.thermo_word, row.thermo_word);
        let fast = SampleRow::parse_line(text.lines().nth(1).unwrap()).unwrap();
        assert_eq!(fast, back, "the fast path reads what deserialising reads");
        assert!(SampleRow::parse_line("7,12.3,-120").is_err());
        assert_eq!(back.temp_c, Some(25.123));
        assert_eq!(back.probe_temp_c, None);
    }
}
