//! Time as text: clock timestamps in loggers' files — `14:22:05.250`, `2026-11-03 14:22:05`,
//! `2026-11-03T14:22:05.5Z` — made seconds since the first row (across midnight for a clock
//! that shows the time of day only), and seconds since 1970 written as RFC 3339 UTC.

/// Seconds since the first timestamp seen.
#[derive(Debug, Default)]
pub struct Clock {
    first: Option<f64>,
    last: f64,
    /// Days added for a time-of-day clock that passed midnight.
    rollover_s: f64,
}

/// Half a day: a time of day that goes back more than this passed midnight, s.
const ROLLOVER_S: f64 = 43_200.0;

impl Clock {
    /// The seconds since the first row for `cell`, or `None` if it is not a timestamp.
    pub fn seconds(&mut self, cell: &str) -> Option<f64> {
        let v = cell.trim().trim_matches('"').trim();
        let (date, time) = match v.split_once(['T', ' ']) {
            Some((d, t)) => (Some(d), t),
            None => (None, v),
        };
        let days = match date {
            Some(d) => days_from_civil(d)?,
            None => 0,
        };
        let mut abs = days as f64 * 86_400.0 + time_of_day(time)?;
        if date.is_none() {
            abs += self.rollover_s;
            if self.first.is_some() && abs < self.last - ROLLOVER_S {
                self.rollover_s += 86_400.0;
                abs += 86_400.0;
            }
        }
        self.last = abs;
        let first = *self.first.get_or_insert(abs);
        Some(abs - first)
    }
}

/// Seconds since 1970 of an RFC 3339 UTC instant or a plain date (`2026-11-03`, midnight).
pub fn parse_utc(text: &str) -> Option<f64> {
    let v = text.trim();
    let (date, time) = match v.split_once(['T', ' ']) {
        Some((d, t)) => (d, Some(t)),
        None => (v, None),
    };
    let days = days_from_civil(date)? as f64;
    Some(days * 86_400.0 + time.map_or(Some(0.0), time_of_day)?)
}

/// `HH:MM:SS(.fff)` with an optional zone (`Z` or `+01:00`, ignored: one logger, one zone).
fn time_of_day(t: &str) -> Option<f64> {
    let t = t.trim_end_matches('Z');
    let t = match t.rfind(['+', '-']) {
        Some(i) if i >= 8 => &t[..i],
        _ => t,
    };
    let mut parts = t.split(':');
    let h: f64 = parts.next()?.parse().ok()?;
    let m: f64 = parts.next()?.parse().ok()?;
    let s: f64 = parts.next().unwrap_or("0").replace(',', ".").parse().ok()?;
    if parts.next().is_some()
        || !(0.0..24.0).contains(&h)
        || !(0.0..60.0).contains(&m)
        || !(0.0..61.0).contains(&s)
    {
        return None;
    }
    Some(h * 3600.0 + m * 60.0 + s)
}

/// Days since 1970-01-01 of `YYYY-MM-DD` (the proleptic Gregorian calendar; Howard Hinnant's
/// days-from-civil).
fn days_from_civil(d: &str) -> Option<i64> {
    let mut parts = d.split('-');
    let y: i64 = parts.next()?.parse().ok()?;
    let m: i64 = parts.next()?.parse().ok()?;
    let day: i64 = parts.next()?.parse().ok()?;
    // the Gregorian calendar's month lengths: a 30 February is no day
    let leap = y % 4 == 0 && (y % 100 != 0 || y % 400 == 0);
    let month_days = match m {
        2 if leap => 29,
        2 => 28,
        4 | 6 | 9 | 11 => 30,
        _ => 31,
    };
    if parts.next().is_some() || !(1..=12).contains(&m) || !(1..=month_days).contains(&day) {
        return None;
    }
    let y = if m <= 2 { y - 1 } else { y };
    let era = y.div_euclid(400);
    let yoe = y - era * 400;
    let mp = (m + 9) % 12;
    let doy = (153 * mp + 2) / 5 + day - 1;
    let doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    Some(era * 146_097 + doe - 719_468)
}

/// Seconds since 1970 as RFC 3339 UTC (civil-from-days, Howard Hinnant's algorithm).
pub fn format_utc(secs: u64) -> String {
    let days = (secs / 86_400) as i64;
    let rem = secs % 86_400;
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = doy - (153 * mp + 2) / 5 + 1;
    let m = if mp < 10 { mp + 3 } else { mp - 9 };
    let y = yoe + era * 400 + i64::from(m <= 2);
    format!(
        "{y:04}-{m:02}-{d:02}T{:02}:{:02}:{:02}Z",
        rem / 3600,
        rem % 3600 / 60,
        rem % 60
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn days_match_the_unix_epoch_and_a_known_date() {
        assert_eq!(days_from_civil("1970-01-01"), Some(0));
        // 2000-03-01 is day 11017 of the Unix epoch (POSIX time 951868800 / 86400)
        assert_eq!(days_from_civil("2000-03-01"), Some(11_017));
        assert_eq!(days_from_civil("2026-13-01"), None);
    }

    #[test]
    fn a_day_past_its_months_end_is_no_date() {
        // Gregorian leap years: 2024 is one, 1900 is not, 2000 is (every 4th, not every
        // 100th, every 400th)
        assert!(days_from_civil("2024-02-29").is_some());
        assert!(days_from_civil("2000-02-29").is_some());
        assert_eq!(days_from_civil("1900-02-29"), None);
        assert_eq!(days_from_civil("2026-02-29"), None);
        assert_eq!(days_from_civil("2026-04-31"), None);
        assert!(days_from_civil("2026-12-31").is_some());
    }

    #[test]
    fn time_of_day_clocks_cross_midnight_and_dates_cross_months() {
        let mut c = Clock::default();
        assert_eq!(c.seconds("23:59:59.5"), Some(0.0));
        assert_eq!(c.seconds("00:00:00.5"), Some(1.0));
        let mut d = Clock::default();
        d.seconds("2026-11-30T23:59:59Z").unwrap();
        assert_eq!(d.seconds("2026-12-01 00:00:01"), Some(2.0));
        assert_eq!(d.seconds("12.5"), None);
    }

    #[test]
    fn instants_read_back_what_format_writes() {
        // 2000-03-01T00:00:00Z is 951868800 s after the Unix epoch (POSIX time, date(1)).
        assert_eq!(parse_utc("2000-03-01T00:00:00Z"), Some(951_868_800.0));
        assert_eq!(parse_utc("2000-03-01"), Some(951_868_800.0));
        assert_eq!(parse_utc(&format_utc(1_798_761_599)), Some(1_798_761_599.0));
        assert_eq!(parse_utc("yesterday"), None);
    }
}
