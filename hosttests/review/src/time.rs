//! UTC timestamps `YYYY-MM-DDTHH:MM:SS[.fff]Z` (RFC 3339 with `Z`), without a date crate.
//!
//! Only what the report and the register need: parse to Unix seconds, print a day.

/// Days from 1970-01-01 to the civil date (proleptic Gregorian).
fn days_from_civil(y: i64, m: i64, d: i64) -> i64 {
    // Howard Hinnant's days_from_civil algorithm (public domain), computed form.
    let y = if m <= 2 { y - 1 } else { y };
    let era = y.div_euclid(400);
    let yoe = y - era * 400;
    let mp = (m + 9) % 12;
    let doy = (153 * mp + 2) / 5 + d - 1;
    let doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    era * 146_097 + doe - 719_468
}

/// The civil date of a day number (days since 1970-01-01).
fn civil_from_days(z: i64) -> (i64, i64, i64) {
    let z = z + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let y = yoe + era * 400;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = doy - (153 * mp + 2) / 5 + 1;
    let m = if mp < 10 { mp + 3 } else { mp - 9 };
    (if m <= 2 { y + 1 } else { y }, m, d)
}

/// Parse `YYYY-MM-DDTHH:MM:SS[.fff]Z` into Unix seconds. `None` if malformed.
pub fn parse_utc(s: &str) -> Option<f64> {
    let b = s.as_bytes();
    if b.len() < 20 || *b.last()? != b'Z' {
        return None;
    }
    let num = |r: std::ops::Range<usize>| -> Option<i64> {
        let t = s.get(r)?;
        if t.bytes().all(|c| c.is_ascii_digit()) {
            t.parse().ok()
        } else {
            None
        }
    };
    let sep = |i: usize, c: u8| b.get(i) == Some(&c);
    if !(sep(4, b'-')
        && sep(7, b'-')
        && (sep(10, b'T') || sep(10, b't'))
        && sep(13, b':')
        && sep(16, b':'))
    {
        return None;
    }
    let (y, mo, d) = (num(0..4)?, num(5..7)?, num(8..10)?);
    let (h, mi, se) = (num(11..13)?, num(14..16)?, num(17..19)?);
    let frac = match s.get(19..s.len() - 1)? {
        "" => 0.0,
        f if f.starts_with('.') && f.len() > 1 && f[1..].bytes().all(|c| c.is_ascii_digit()) => {
            format!("0{f}").parse::<f64>().ok()?
        }
        _ => return None,
    };
    let month_days = [
        31,
        if y % 4 == 0 && (y % 100 != 0 || y % 400 == 0) {
            29
        } else {
            28
        },
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
    let max_day = *month_days.get(usize::try_from(mo - 1).ok()?)?;
    if !(1..=max_day).contains(&d) || h > 23 || mi > 59 || se > 60 {
        return None;
    }
    let days = days_from_civil(y, mo, d);
    Some((days * 86_400 + h * 3600 + mi * 60 + se) as f64 + frac)
}

/// The UTC day (`YYYY-MM-DD`) of Unix seconds.
pub fn utc_day(unix_s: f64) -> String {
    let days = (unix_s / 86_400.0).floor() as i64;
    let (y, m, d) = civil_from_days(days);
    format!("{y:04}-{m:02}-{d:02}")
}

/// Unix seconds as `YYYY-MM-DDTHH:MM:SSZ` (whole seconds, rounded down).
pub fn format_utc(unix_s: f64) -> String {
    let secs = unix_s.floor() as i64;
    let days = secs.div_euclid(86_400);
    let rem = secs.rem_euclid(86_400);
    let (y, m, d) = civil_from_days(days);
    format!(
        "{y:04}-{m:02}-{d:02}T{:02}:{:02}:{:02}Z",
        rem / 3600,
        (rem / 60) % 60,
        rem % 60
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_and_prints_utc() {
        // 2000-03-01T00:00:00Z is Unix time 951 868 800 (computed from the calendar rules).
        assert_eq!(parse_utc("2000-03-01T00:00:00Z"), Some(951_868_800.0));
        assert_eq!(parse_utc("1970-01-01T00:00:01.5Z"), Some(1.5));
        assert_eq!(utc_day(951_868_800.0 - 1.0), "2000-02-29");
        assert_eq!(format_utc(951_868_800.0 + 3661.0), "2000-03-01T01:01:01Z");
        for bad in [
            "2000-02-30T00:00:00Z",
            "2000-03-01 00:00:00Z",
            "2000-03-01T00:00:00",
            "x",
        ] {
            assert_eq!(parse_utc(bad), None, "{bad}");
        }
    }
}
