//! Wall-clock time as the server writes and reads it: RFC 3339 UTC text (audit lines, the
//! validation record, token expiry) and seconds since the Unix epoch. Proleptic Gregorian
//! calendar arithmetic, no time-zone database: everything is UTC.
//!
//! Invariant: [`parse_instant`] and [`rfc3339_utc`] are inverse on whole seconds.

use std::time::{SystemTime, UNIX_EPOCH};

/// Civil date (year, month, day) of a day count since 1970-01-01 (proleptic Gregorian).
fn civil_from_days(z: i64) -> (i64, u32, u32) {
    let z = z + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z.rem_euclid(146_097);
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let y = yoe + era * 400;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = (doy - (153 * mp + 2) / 5 + 1) as u32;
    let m = if mp < 10 { mp + 3 } else { mp - 9 } as u32;
    (if m <= 2 { y + 1 } else { y }, m, d)
}

/// RFC 3339 UTC text with milliseconds of a time given as milliseconds since the Unix epoch.
pub fn rfc3339_utc(ms_since_epoch: i64) -> String {
    let secs = ms_since_epoch.div_euclid(1000);
    let ms = ms_since_epoch.rem_euclid(1000);
    let days = secs.div_euclid(86_400);
    let sod = secs.rem_euclid(86_400);
    let (y, m, d) = civil_from_days(days);
    format!(
        "{y:04}-{m:02}-{d:02}T{:02}:{:02}:{:02}.{ms:03}Z",
        sod / 3600,
        (sod / 60) % 60,
        sod % 60
    )
}

/// Now, as RFC 3339 UTC text.
pub fn now_rfc3339() -> String {
    let ms = SystemTime::now()
        .duration_since(UNIX_EPOCH)
        .map(|d| d.as_millis() as i64)
        .unwrap_or(0);
    rfc3339_utc(ms)
}

/// Seconds since the Unix epoch, now.
pub fn now_unix() -> i64 {
    SystemTime::now()
        .duration_since(UNIX_EPOCH)
        .map(|d| d.as_secs() as i64)
        .unwrap_or(0)
}

/// Days since 1970-01-01 of a civil date (proleptic Gregorian).
fn days_from_civil(y: i64, m: u32, d: u32) -> i64 {
    let y = if m <= 2 { y - 1 } else { y };
    let era = y.div_euclid(400);
    let yoe = y.rem_euclid(400);
    let mp = i64::from((m + 9) % 12);
    let doy = (153 * mp + 2) / 5 + i64::from(d) - 1;
    let doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    era * 146_097 + doe - 719_468
}

/// Parses `YYYY-MM-DD` or `YYYY-MM-DDTHH:MM[:SS][Z]` (UTC) into seconds since the Unix epoch.
pub fn parse_instant(text: &str) -> Result<i64, String> {
    let bad =
        || format!("'{text}' is not a UTC instant: write YYYY-MM-DD or YYYY-MM-DDTHH:MM[:SS][Z]");
    let t = text.strip_suffix('Z').unwrap_or(text);
    let (date, time) = match t.split_once('T') {
        Some((d, tm)) => (d, Some(tm)),
        None => (t, None),
    };
    let num = |s: &str, len: usize| -> Result<u32, String> {
        if s.len() == len && s.bytes().all(|b| b.is_ascii_digit()) {
            s.parse::<u32>().map_err(|_| bad())
        } else {
            Err(bad())
        }
    };
    let parts: Vec<&str> = date.split('-').collect();
    let [y, m, d] = parts.as_slice() else {
        return Err(bad());
    };
    let (y, m, d) = (num(y, 4)?, num(m, 2)?, num(d, 2)?);
    let leap = (y % 4 == 0 && y % 100 != 0) || y % 400 == 0;
    let days_in = [
        31,
        if leap { 29 } else { 28 },
        31,
        30,
        31,
        30,
        31,
        31,
        30,
        31,
        30,
        31,
    ];
    if !(1..=12).contains(&m) || d == 0 || d > days_in[(m - 1) as usize] {
        return Err(bad());
    }
    let mut secs = days_from_civil(i64::from(y), m, d) * 86_400;
    if let Some(tm) = time {
        let parts: Vec<&str> = tm.split(':').collect();
        let (h, mi, s) = match parts.as_slice() {
            [h, mi] => (num(h, 2)?, num(mi, 2)?, 0),
            [h, mi, s] => (num(h, 2)?, num(mi, 2)?, num(s, 2)?),
            _ => return Err(bad()),
        };
        if h > 23 || mi > 59 || s > 59 {
            return Err(bad());
        }
        secs += i64::from(h * 3600 + mi * 60 + s);
    }
    Ok(secs)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rfc3339_known_instants() {
        // Unix epoch and 2000-02-29 (leap day): calendar arithmetic, common practice, no source.
        assert_eq!(rfc3339_utc(0), "1970-01-01T00:00:00.000Z");
        assert_eq!(rfc3339_utc(951_782_400_123), "2000-02-29T00:00:00.123Z");
        assert_eq!(rfc3339_utc(1_735_689_599_000), "2024-12-31T23:59:59.000Z");
    }

    #[test]
    fn instants() {
        // Calendar arithmetic, common practice, no source: 2000-03-01 is day 11017.
        assert_eq!(parse_instant("1970-01-01").unwrap(), 0);
        assert_eq!(parse_instant("2000-03-01").unwrap(), 11_017 * 86_400);
        assert_eq!(
            parse_instant("2024-12-31T23:59:59Z").unwrap(),
            1_735_689_599
        );
        assert_eq!(parse_instant("2024-12-31T23:59").unwrap(), 1_735_689_540);
        for bad in [
            "2024-02-30",
            "2023-02-29",
            "24-01-01",
            "2024-01-01T25:00",
            "soon",
        ] {
            assert!(parse_instant(bad).is_err(), "{bad}");
        }
        assert!(parse_instant("2024-02-29").is_ok());
    }

    #[test]
    fn parse_and_format_agree() {
        for s in [
            "1999-12-31T23:59:59Z",
            "2026-03-01T00:00:00Z",
            "2400-02-29T12:34:56Z",
        ] {
            let secs = parse_instant(s).unwrap();
            assert_eq!(rfc3339_utc(secs * 1000), s.replace('Z', ".000Z"));
        }
    }
}
