//! The part of a sample row the analysis re-converts — device time, the raw codes, the duty
//! and the setpoint — read straight from the line, every other column checked but not used
//! (finite numbers, flags 0 or 1), with a decimal reader for the writer's fixed-point numbers
//! that gives exactly what `str::parse` gives.

use remanent_protocol::ThermoWord;

/// What a row carries that the analysis needs.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CodesRow {
    /// Device time, s.
    pub device_time_s: f64,
    /// Hall channel code.
    pub hall_code: i16,
    /// Probe thermistor channel code.
    pub probe_code: i16,
    /// The converter's word.
    pub thermo_word: ThermoWord,
    /// Heater duty, %.
    pub heater_duty_pct: f64,
    /// Setpoint, °C (None while the heater is off).
    pub setpoint_c: Option<f64>,
}

/// Fields in a row (the samples header's columns).
pub const FIELDS: usize = 14;

/// A decimal like `-12.345`: at most 15 digits, so the digits make an exact integer and one
/// correctly rounded division by an exact power of ten gives the correctly rounded value —
/// the same as `str::parse`, which other forms fall back to.
pub fn decimal(b: &[u8]) -> Option<f64> {
    let fallback = || std::str::from_utf8(b).ok()?.parse().ok();
    let (neg, digits) = match b.first() {
        Some(b'-') => (true, &b[1..]),
        _ => (false, b),
    };
    let mut m: u64 = 0;
    let mut n = 0u32;
    let mut frac: Option<u32> = None;
    for &c in digits {
        match c {
            b'0'..=b'9' => {
                m = m * 10 + u64::from(c - b'0');
                n += 1;
                if let Some(f) = frac.as_mut() {
                    *f += 1;
                }
            }
            b'.' if frac.is_none() => frac = Some(0),
            _ => return fallback(),
        }
    }
    if n == 0 || n > 15 {
        return fallback();
    }
    const POW10: [f64; 16] = [
        1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15,
    ];
    let v = m as f64 / POW10[frac.unwrap_or(0) as usize];
    Some(if neg { -v } else { v })
}

/// A decimal integer that fits an i16.
fn int16(b: &[u8]) -> Option<i16> {
    let (neg, digits) = match b.first() {
        Some(b'-') => (true, &b[1..]),
        _ => (false, b),
    };
    if digits.is_empty() || digits.len() > 5 {
        return None;
    }
    let mut v: i32 = 0;
    for &c in digits {
        if !c.is_ascii_digit() {
            return None;
        }
        v = v * 10 + i32::from(c - b'0');
    }
    i16::try_from(if neg { -v } else { v }).ok()
}

/// Eight hex digits.
fn hex32(b: &[u8]) -> Option<u32> {
    if b.is_empty() || b.len() > 8 {
        return None;
    }
    b.iter()
        .try_fold(0u32, |v, &c| Some(v << 4 | (c as char).to_digit(16)?))
}

impl CodesRow {
    /// Read the analysis's part of a row from its bytes; errors name the column.
    pub fn parse_line(line: &[u8]) -> Result<CodesRow, String> {
        let line = line.strip_suffix(b"\n").unwrap_or(line);
        let line = line.strip_suffix(b"\r").unwrap_or(line);
        let mut cells: [&[u8]; FIELDS] = [b""; FIELDS];
        let mut k = 0;
        let mut start = 0;
        for (i, &b) in line.iter().enumerate() {
            if b == b',' {
                if k == FIELDS - 1 {
                    return Err("more fields than the header".into());
                }
                cells[k] = &line[start..i];
                k += 1;
                start = i + 1;
            }
        }
        cells[k] = &line[start..];
        k += 1;
        if k < FIELDS {
            return Err(format!("{k} fields, {FIELDS} in the header"));
        }
        let bad = |i: usize, name: &str, what: &str| {
            format!(
                "`{name}`: `{}` is not {what}",
                String::from_utf8_lossy(cells[i])
            )
        };
        let num = |i: usize, name: &str| {
            decimal(cells[i])
                .filter(|v| v.is_finite())
                .ok_or_else(|| bad(i, name, "a finite number"))
        };
        let int = |i: usize, name: &str| int16(cells[i]).ok_or_else(|| bad(i, name, "a code"));
        // the columns the analysis derives again are checked all the same: a row the tool did
        // not write is not taken on the strength of the columns it happens to read
        if std::str::from_utf8(cells[0])
            .ok()
            .and_then(|t| t.parse::<u32>().ok())
            .is_none()
        {
            return Err(bad(0, "seq", "a sample number"));
        }
        for (i, name) in [(6, "heater_on"), (7, "fault_latched")] {
            if !matches!(cells[i], b"0" | b"1") {
                return Err(bad(i, name, "0 or 1"));
            }
        }
        for (i, name) in [
            (9, "temp_C"),
            (10, "cold_junction_C"),
            (11, "probe_temp_C"),
            (12, "flux_mT"),
        ] {
            if !cells[i].is_empty() {
                num(i, name)?;
            }
        }
        Ok(CodesRow {
            device_time_s: num(1, "device_time_s")?,
            hall_code: int(2, "hall_code")?,
            probe_code: int(3, "probe_code")?,
            thermo_word: ThermoWord(
                hex32(cells[4]).ok_or_else(|| bad(4, "thermo_word", "a hex word"))?,
            ),
            heater_duty_pct: num(5, "heater_duty_pct")?,
            setpoint_c: match cells[13] {
                b"" => None,
                _ => Some(num(13, "setpoint_C")?),
            },
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_column_of_a_row_is_checked_and_named() {
        let good = "7,0.709,17450,14088,01601900,0.0,0,0,,21.919,25.0000,21.998,217.9583,";
        assert!(CodesRow::parse_line(good.as_bytes()).is_ok());
        // (column, a value it must refuse): the columns read and the ones derived again
        for (col, value, name) in [
            (1, "nan", "device_time_s"),
            (1, "inf", "device_time_s"),
            (5, "NaN", "heater_duty_pct"),
            (0, "-3", "seq"),
            (6, "2", "heater_on"),
            (7, "yes", "fault_latched"),
            (9, "inf", "temp_C"),
            (12, "nan", "flux_mT"),
            (13, "-inf", "setpoint_C"),
        ] {
            let mut cells: Vec<&str> = good.split(',').collect();
            cells[col] = value;
            let e = CodesRow::parse_line(cells.join(",").as_bytes()).unwrap_err();
            assert!(e.contains(name) && e.contains(value), "{e}");
        }
    }

    #[test]
    fn the_decimal_reader_gives_what_parse_gives() {
        for s in [
            "0.1",
            "12.346",
            "-0.0625",
            "1e3",
            "215.9583",
            "0",
            "-7",
            "123456789.123456",
            "0.30000000000000004",
            "nan",
            "",
            "1.2.3",
        ] {
            let fast = decimal(s.as_bytes());
            let std = s.parse::<f64>().ok();
            assert_eq!(fast.map(f64::to_bits), std.map(f64::to_bits), "{s}");
        }
        // every value the writer's three-decimal time column takes in an hour at 100 Hz
        for i in 0..360_000u32 {
            let s = format!("{:.3}", f64::from(i) * 0.01);
            assert_eq!(decimal(s.as_bytes()), s.parse().ok(), "{s}");
        }
    }

    #[test]
    fn a_row_reads_as_the_full_row_does() {
        let line = "7,12.346,-120,16000,01901880,40.0,1,0,,25.123,24.5000,,-1.2346,80.5\n";
        let r = CodesRow::parse_line(line.as_bytes()).unwrap();
        let full = super::super::SampleRow::parse_line(line).unwrap();
        assert_eq!(r.device_time_s, full.device_time_s);
        assert_eq!(r.thermo_word, full.thermo_word);
        assert_eq!(
            (r.hall_code, r.probe_code),
            (full.hall_code, full.probe_code)
        );
        assert_eq!(r.setpoint_c, full.setpoint_c);
        assert!(CodesRow::parse_line(b"7,12.346,-120").is_err());
        let bad =
            CodesRow::parse_line(b"7,12.346,-12x0,16000,01901880,40.0,1,0,,,,,,").unwrap_err();
        assert!(bad.contains("`hall_code`: `-12x0`"), "{bad}");
    }
}
