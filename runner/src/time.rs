//! UTC timestamps from `std` alone, so the runtime adds no date crate to users' builds.

use std::time::{Duration, SystemTime, UNIX_EPOCH};

/// Time since the Unix epoch; a clock set before 1970 reads as the epoch.
pub(crate) fn since_epoch(t: SystemTime) -> Duration {
    t.duration_since(UNIX_EPOCH).unwrap_or_default()
}

/// `2025-01-02T03:04:05.000006Z`: RFC 3339, UTC, microseconds.
pub(crate) fn rfc3339(t: SystemTime) -> String {
    let d = since_epoch(t);
    let (date, hms) = split(d.as_secs());
    format!(
        "{:04}-{:02}-{:02}T{:02}:{:02}:{:02}.{:06}Z",
        date.0,
        date.1,
        date.2,
        hms.0,
        hms.1,
        hms.2,
        d.subsec_micros()
    )
}

/// `20250102T030405Z`: the basic ISO 8601 form, for run ids (no `:`, sorts by time).
pub(crate) fn compact(t: SystemTime) -> String {
    let (date, hms) = split(since_epoch(t).as_secs());
    format!(
        "{:04}{:02}{:02}T{:02}{:02}{:02}Z",
        date.0, date.1, date.2, hms.0, hms.1, hms.2
    )
}

type Date = (i64, u32, u32);

fn split(secs: u64) -> (Date, (u64, u64, u64)) {
    let days = (secs / 86_400) as i64;
    let sod = secs % 86_400;
    (civil_from_days(days), (sod / 3600, sod / 60 % 60, sod % 60))
}

/// Proleptic Gregorian date of a day count since 1970-01-01.
///
/// Algorithm `civil_from_days` of H. Hinnant, "chrono-Compatible Low-Level Date
/// Algorithms" (2013): shift the epoch to 0000-03-01 so leap days end each 400-year era,
/// then split into era, year of era and day of year with March as month 0.
fn civil_from_days(days: i64) -> Date {
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z.rem_euclid(146_097); // [0, 146096]
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365; // [0, 399]
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100); // [0, 365]
    let mp = (5 * doy + 2) / 153; // [0, 11], March = 0
    let d = doy - (153 * mp + 2) / 5 + 1;
    let m = if mp < 10 { mp + 3 } else { mp - 9 };
    let y = yoe + era * 400 + i64::from(m <= 2);
    (y, m as u32, d as u32)
}

#[cfg(test)]
mod tests {
    use super::*;

    // Independent check of the closed-form algorithm: a day-by-day walk of the calendar
    // with the Gregorian leap rule (divisible by 4, except centuries not divisible by
    // 400; ISO 8601, common practice).
    fn leap(y: i64) -> bool {
        (y % 4 == 0 && y % 100 != 0) || y % 400 == 0
    }

    fn month_len(y: i64, m: u32) -> u32 {
        match m {
            2 if leap(y) => 29,
            2 => 28,
            4 | 6 | 9 | 11 => 30,
            _ => 31,
        }
    }

    fn next_day((y, m, d): Date) -> Date {
        if d < month_len(y, m) {
            (y, m, d + 1)
        } else if m < 12 {
            (y, m + 1, 1)
        } else {
            (y + 1, 1, 1)
        }
    }

    #[test]
    fn matches_a_day_by_day_calendar_walk_for_three_centuries() {
        // 1970-01-01 to 2271, crossing the leap century 2000 and the non-leap 2100 and 2200
        let mut expect = (1970i64, 1u32, 1u32);
        for days in 0..110_000i64 {
            assert_eq!(civil_from_days(days), expect, "day {days}");
            expect = next_day(expect);
        }
    }

    #[test]
    fn formats_rfc3339_utc() {
        let walk = (0..11_016).fold((1970i64, 1u32, 1u32), |d, _| next_day(d));
        assert_eq!(walk, (2000, 2, 29));
        // 951782400 s = 11016 days after the epoch, which the walk puts on 2000-02-29
        let t = UNIX_EPOCH + Duration::new(951_782_400 + 3661, 123_456_789);
        assert_eq!(rfc3339(t), "2000-02-29T01:01:01.123456Z");
        assert_eq!(compact(t), "20000229T010101Z");
        assert_eq!(rfc3339(UNIX_EPOCH), "1970-01-01T00:00:00.000000Z");
    }
}
