//! Where a report comes from: the tool's version, the SHA-256 of the case file's bytes, and
//! the date (UTC; `SOURCE_DATE_EPOCH` fixes it for reproducible output).

use super::{Block, Section};
use sha2::{Digest, Sha256};
use std::time::{SystemTime, UNIX_EPOCH};

#[derive(Debug, Clone)]
pub struct Provenance {
    pub version: &'static str,
    pub case_file: String,
    pub case_sha256: String,
    /// "YYYY-MM-DD hh:mm:ss UTC".
    pub date: String,
    /// How the report was asked for, e.g. the options given.
    pub settings: String,
}

impl Provenance {
    pub fn new(case_file: String, case_bytes: &[u8], settings: String) -> Provenance {
        Provenance {
            version: env!("CARGO_PKG_VERSION"),
            case_file,
            case_sha256: sha256_hex(case_bytes),
            date: utc_date(report_epoch_seconds()),
            settings,
        }
    }
}

/// Lower-case hex of the SHA-256 digest (FIPS 180-4) of `bytes`.
pub fn sha256_hex(bytes: &[u8]) -> String {
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

/// Seconds since 1970 in UTC: `SOURCE_DATE_EPOCH` when it holds a whole number, else now.
fn report_epoch_seconds() -> i64 {
    std::env::var("SOURCE_DATE_EPOCH")
        .ok()
        .and_then(|s| s.trim().parse::<i64>().ok())
        .unwrap_or_else(|| {
            SystemTime::now()
                .duration_since(UNIX_EPOCH)
                .map_or(0, |d| d.as_secs() as i64)
        })
}

/// "YYYY-MM-DD hh:mm:ss UTC" of a Unix time (proleptic Gregorian calendar; the day-to-date
/// step is the well-known civil-from-days algorithm, counted in 400-year eras).
pub fn utc_date(seconds: i64) -> String {
    let days = seconds.div_euclid(86_400);
    let in_day = seconds.rem_euclid(86_400);
    let (y, m, d) = civil_from_days(days);
    format!(
        "{y:04}-{m:02}-{d:02} {:02}:{:02}:{:02} UTC",
        in_day / 3600,
        in_day % 3600 / 60,
        in_day % 60
    )
}

fn civil_from_days(days: i64) -> (i64, u32, u32) {
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z.rem_euclid(146_097);
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = (doy - (153 * mp + 2) / 5 + 1) as u32;
    let m = if mp < 10 { mp + 3 } else { mp - 9 } as u32;
    let y = yoe + era * 400 + i64::from(m <= 2);
    (y, m, d)
}

pub fn section(p: &Provenance) -> Section {
    Section {
        id: "provenance",
        heading: "Provenance".to_string(),
        new_page: false,
        blocks: vec![Block::Definitions(vec![
            ("tool".to_string(), format!("exoscreen {}", p.version)),
            ("case file".to_string(), p.case_file.clone()),
            ("case file SHA-256".to_string(), p.case_sha256.clone()),
            ("written".to_string(), p.date.clone()),
            ("settings".to_string(), p.settings.clone()),
        ])],
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// FIPS 180-4 / NIST example values: SHA-256("abc") and SHA-256 of the empty string.
    #[test]
    fn sha256_matches_the_published_examples() {
        assert_eq!(
            sha256_hex(b"abc"),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
        assert_eq!(
            sha256_hex(b""),
            "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855"
        );
    }

    /// Dates checked against the definition of Unix time (POSIX: 86 400 s a day from
    /// 1970-01-01): 951 782 400 s = 11 016 days = 2000-02-29 (a leap day of a century leap
    /// year), 1 700 000 000 s = 19 675 days + 80 000 s.
    #[test]
    fn unix_times_give_their_calendar_dates() {
        assert_eq!(utc_date(0), "1970-01-01 00:00:00 UTC");
        assert_eq!(utc_date(951_782_400), "2000-02-29 00:00:00 UTC");
        assert_eq!(utc_date(951_868_800), "2000-03-01 00:00:00 UTC");
        assert_eq!(utc_date(1_700_000_000), "2023-11-14 22:13:20 UTC");
        assert_eq!(utc_date(-1), "1969-12-31 23:59:59 UTC");
    }
}
