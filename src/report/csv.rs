//! The failure envelope as CSV: one row per failure time, units in the header.

use crate::assess::envelope::EnvelopePoint;
use crate::report::celsius;

/// The header row: each column's unit in brackets.
pub const ENVELOPE_HEADER: [&str; 4] = [
    "failure_time [h]",
    "max_temperature [degC]",
    "time_to_max_rate [h]",
    "max_rate [K/min]",
];

const HOUR: f64 = 3600.0;
const MINUTE: f64 = 60.0;

/// The envelope as CSV text (comma-separated, `\n` line ends, a header and one row per point).
pub fn envelope_csv(envelope: &[EnvelopePoint]) -> Vec<u8> {
    let mut writer = csv::Writer::from_writer(Vec::new());
    // Writing into memory cannot fail: the only errors are those of the underlying writer.
    writer
        .write_record(ENVELOPE_HEADER)
        .expect("CSV into memory");
    for p in envelope {
        let row = [
            p.failure_time / HOUR,
            celsius(p.max_temperature),
            p.time_to_max_rate / HOUR,
            p.max_rate * MINUTE,
        ];
        writer
            .write_record(row.iter().map(|v| v.to_string()))
            .expect("CSV into memory");
    }
    writer.into_inner().expect("CSV into memory")
}

#[cfg(test)]
mod tests {
    use super::*;

    fn point(k: usize) -> EnvelopePoint {
        EnvelopePoint {
            failure_time: 360.0 * k as f64,
            max_temperature: 373.15 + k as f64,
            time_to_max_rate: 1800.0,
            max_rate: 0.01,
        }
    }

    #[test]
    fn header_with_units_and_one_row_per_point() {
        let envelope: Vec<EnvelopePoint> = (0..7).map(point).collect();
        let text = String::from_utf8(envelope_csv(&envelope)).expect("UTF-8");
        let lines: Vec<&str> = text.lines().collect();
        assert_eq!(lines.len(), 1 + envelope.len());
        assert_eq!(
            lines[0],
            "failure_time [h],max_temperature [degC],time_to_max_rate [h],max_rate [K/min]"
        );
        assert!(text.ends_with('\n'));
    }

    #[test]
    fn rows_in_report_units() {
        let text = String::from_utf8(envelope_csv(&[point(10)])).expect("UTF-8");
        let row: Vec<f64> = text
            .lines()
            .nth(1)
            .expect("a data row")
            .split(',')
            .map(|v| v.parse().expect("a number"))
            .collect();
        let expected = [1.0, 110.0, 0.5, 0.6];
        for (got, want) in row.iter().zip(expected) {
            assert!((got - want).abs() < 1e-9, "{got} vs {want}");
        }
    }

    #[test]
    fn an_empty_envelope_is_the_header_alone() {
        let text = String::from_utf8(envelope_csv(&[])).expect("UTF-8");
        assert_eq!(text.lines().count(), 1);
    }
}
