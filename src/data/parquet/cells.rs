//! One column's cells of a batch of rows, as CSV field text: numbers in the
//! plain decimal notation the CSV number reader takes exactly, strings
//! quoted where RFC 4180 needs it.

use super::columns::Unit;
use std::fmt::Write;

/// The cells of one column for a batch of rows, back to back.
#[derive(Debug, Default)]
pub(super) struct Cells {
    pub(super) text: String,
    ends: Vec<usize>,
}

impl Cells {
    pub(super) fn clear(&mut self) {
        self.text.clear();
        self.ends.clear();
    }

    /// Closes the cell written since the last one.
    pub(super) fn end(&mut self) {
        self.ends.push(self.text.len());
    }

    pub(super) fn get(&self, row: usize) -> &str {
        let start = if row == 0 { 0 } else { self.ends[row - 1] };
        &self.text[start..self.ends[row]]
    }
}

/// An integer (any width, signed or not).
pub(super) fn integer(value: impl std::fmt::Display, out: &mut String) {
    let _ = write!(out, "{value}");
}

/// A double as the shortest decimal that reads back as the same double,
/// never in exponent notation (Rust's `Display`): the CSV reader takes it
/// exactly, as the decimal the value was most likely written from.
/// Non-finite values come out as `NaN` (a missing-value marker by
/// default), `inf` and `-inf` (not numbers).
pub(super) fn double(value: f64, out: &mut String) {
    // zmij (Schubfach) finds shortest digits several times faster than
    // `Display`. With at most 15 significant digits the shortest text is
    // unique (distinct 15-digit decimals are distinct doubles), so both
    // write the same; with 16 or 17 they may pick different neighbours,
    // and exponent notation and `.0` endings differ: there `Display` writes.
    let mut buffer = zmij::Buffer::new();
    let fast = buffer.format(value);
    let digits = fast
        .trim_start_matches(['-', '0', '.'])
        .bytes()
        .filter(u8::is_ascii_digit)
        .count();
    if digits > 15 || fast.contains(['e', 'E', 'N', 'i']) {
        let _ = write!(out, "{value}");
    } else {
        out.push_str(fast.strip_suffix(".0").unwrap_or(fast));
    }
}

/// A single-precision value as the shortest decimal that reads back as the
/// same single-precision value (0.1, not 0.100000001490116…).
pub(super) fn float(value: f32, out: &mut String) {
    let _ = write!(out, "{value}");
}

/// An unscaled integer with `scale` digits after the point: the exact text
/// of a DECIMAL value.
pub(super) fn decimal(unscaled: i128, scale: u32, out: &mut String) {
    if unscaled < 0 {
        out.push('-');
    }
    let digits = unscaled.unsigned_abs().to_string();
    let scale = scale as usize;
    if scale == 0 {
        out.push_str(&digits);
    } else if digits.len() > scale {
        let (whole, fraction) = digits.split_at(digits.len() - scale);
        out.push_str(whole);
        out.push('.');
        out.push_str(fraction);
    } else {
        out.push_str("0.");
        out.extend(std::iter::repeat_n('0', scale - digits.len()));
        out.push_str(&digits);
    }
}

/// A big-endian two's-complement integer (DECIMAL in byte arrays); `None`
/// when it needs more than 128 bits.
pub(super) fn unscaled(bytes: &[u8]) -> Option<i128> {
    let negative = bytes.first().is_some_and(|b| b & 0x80 != 0);
    let fill = if negative { 0xff } else { 0x00 };
    // Leading bytes that only repeat the sign carry no value.
    let skip = bytes.len().saturating_sub(16);
    if bytes[..skip].iter().any(|&b| b != fill) {
        return None;
    }
    let rest = &bytes[skip..];
    let mut full = [fill; 16];
    full[16 - rest.len()..].copy_from_slice(rest);
    let value = i128::from_be_bytes(full);
    // A dropped sign byte must agree with the sign that remains.
    (skip == 0 || (value < 0) == negative).then_some(value)
}

/// Days since 1970-01-01 as YYYY-MM-DD.
pub(super) fn date(days: i64, out: &mut String) {
    out.push_str(&crate::world::civil_date(days.saturating_mul(86_400)));
}

/// A timestamp as YYYY-MM-DDTHH:MM:SS, with the fraction of a second when
/// there is one and `Z` when the value is in UTC.
pub(super) fn timestamp(value: i64, unit: Unit, utc: bool, out: &mut String) {
    let (per_second, digits) = unit.per_second();
    let (seconds, fraction) = (value.div_euclid(per_second), value.rem_euclid(per_second));
    let of_day = seconds.rem_euclid(86_400);
    out.push_str(&crate::world::civil_date(seconds - of_day));
    let _ = write!(
        out,
        "T{:02}:{:02}:{:02}",
        of_day / 3600,
        of_day / 60 % 60,
        of_day % 60
    );
    if fraction != 0 {
        let _ = write!(out, ".{fraction:0digits$}");
    }
    if utc {
        out.push('Z');
    }
}

/// A string as a CSV field: quoted, with quotes doubled, when it holds a
/// delimiter, a quote or a line break.
pub(super) fn text(value: &str, out: &mut String) {
    if value.contains([',', '"', '\n', '\r']) {
        out.push('"');
        out.push_str(&value.replace('"', "\"\""));
        out.push('"');
    } else {
        out.push_str(value);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn written(f: impl FnOnce(&mut String)) -> String {
        let mut s = String::new();
        f(&mut s);
        s
    }

    #[test]
    fn decimals_keep_every_digit() {
        assert_eq!(
            written(|s| decimal(10_000_000_000_004, 1, s)),
            "1000000000000.4"
        );
        assert_eq!(written(|s| decimal(-5, 3, s)), "-0.005");
        assert_eq!(written(|s| decimal(0, 2, s)), "0.00");
        assert_eq!(written(|s| decimal(42, 0, s)), "42");
        assert_eq!(
            written(|s| decimal(i128::MIN, 0, s)),
            "-170141183460469231731687303715884105728"
        );
    }

    #[test]
    fn byte_array_decimals_are_twos_complement() {
        assert_eq!(unscaled(&[0x01, 0x00]), Some(256));
        assert_eq!(unscaled(&[0xff, 0x38]), Some(-200));
        assert_eq!(unscaled(&[]), Some(0));
        let mut wide = [0u8; 20];
        wide[19] = 7;
        assert_eq!(unscaled(&wide), Some(7));
        wide[0] = 1;
        assert_eq!(unscaled(&wide), None);
        // 17 bytes of 0x00 then 0x80..: positive, but the kept 16 bytes
        // would read as negative.
        let mut edge = [0u8; 17];
        edge[1] = 0x80;
        assert_eq!(unscaled(&edge), None);
    }

    #[test]
    fn doubles_print_plain_digits_that_read_back() {
        for v in [
            0.1,
            1e-7,
            1e22,
            123456.789,
            -2.5e-30,
            1.7976931348623157e308,
        ] {
            let s = written(|s| double(v, s));
            assert!(!s.contains('e'), "{s}");
            assert_eq!(s.parse::<f64>().ok(), Some(v), "{s}");
        }
        assert_eq!(written(|s| double(1000000000000.4, s)), "1000000000000.4");
        assert_eq!(written(|s| double(500.0, s)), "500");
        assert_eq!(written(|s| double(f64::NAN, s)), "NaN");
        assert_eq!(written(|s| double(f64::NEG_INFINITY, s)), "-inf");
        assert_eq!(written(|s| float(0.1f32, s)), "0.1");
    }

    /// The fast path writes exactly what Rust's `Display` (the shortest
    /// round-trip text, by Grisu with a Dragon fallback) writes: over bit
    /// patterns from a fixed xorshift sequence (every exponent), and over
    /// three-decimal values as measurement files hold them.
    #[test]
    fn doubles_are_written_as_display_writes_them() {
        let mut state = 0x9e37_79b9_7f4a_7c15u64;
        for i in 0..200_000u64 {
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            for v in [
                f64::from_bits(state),
                (i as f64) / 1000.0 + 480.0,
                -(i as f64) * 1e-7,
            ] {
                assert_eq!(
                    written(|s| double(v, s)),
                    format!("{v}"),
                    "{:016x}",
                    v.to_bits()
                );
            }
        }
    }

    #[test]
    fn dates_and_timestamps_are_iso_text() {
        assert_eq!(written(|s| date(0, s)), "1970-01-01");
        assert_eq!(written(|s| date(19_844, s)), "2024-05-01");
        assert_eq!(written(|s| date(-1, s)), "1969-12-31");
        // 2024-05-01 is day 19,844 (19,844 × 86,400 = 1,714,521,600 s);
        // 08:30 adds 30,600 s.
        let t = 1_714_552_200_123;
        assert_eq!(
            written(|s| timestamp(t, Unit::Millis, true, s)),
            "2024-05-01T08:30:00.123Z"
        );
        assert_eq!(
            written(|s| timestamp(-1, Unit::Micros, false, s)),
            "1969-12-31T23:59:59.999999"
        );
    }

    #[test]
    fn strings_are_quoted_only_when_needed() {
        assert_eq!(written(|s| text("plain", s)), "plain");
        assert_eq!(written(|s| text("a,b", s)), "\"a,b\"");
        assert_eq!(written(|s| text("say \"hi\"", s)), "\"say \"\"hi\"\"\"");
    }
}
