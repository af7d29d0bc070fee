//! [`Dec`]: a number in a text, written exactly as `format!("{:.2}", x)`
//! writes it, only faster.
//!
//! The standard library rounds a float to a fixed number of decimals from
//! its exact binary value. For a value whose decimals end early (whole
//! numbers, 0.25, 7.5: most of the rounded figures in the day's texts) its
//! fast algorithm cannot decide and it falls back to arbitrary-precision
//! arithmetic, about three times slower. The texts of a shown day hold some
//! fifty such numbers, which made formatting a tenth of planning a week.
//!
//! `Dec` scales the value by a power of ten and rounds. The product is
//! within half a unit in the last place of the exact scaled value, so the
//! rounding is the same unless the product lies within a hair of a tie
//! (x.5); those, negative values, flags other than a precision, and very
//! large numbers (1e9 units of the last decimal) are left to the standard library. Tests compare the two
//! on a million values.

use std::fmt;

/// A float for a format string: `{:.1}` on a `Dec` prints what `{:.1}` on
/// the float prints. Without a precision it is the float's own `{}`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Dec(pub f64);

const POWERS: [f64; 7] = [1.0, 10.0, 100.0, 1e3, 1e4, 1e5, 1e6];

impl fmt::Display for Dec {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let x = self.0;
        let plain = f.width().is_none() && !f.sign_plus() && !f.alternate();
        if let (Some(decimals), true) = (f.precision(), plain)
            && decimals < POWERS.len()
            && x.is_finite()
            && x.is_sign_positive()
        {
            let scaled = x * POWERS[decimals];
            // Below 1e9 a unit in the last place is under 1.2e-7, far inside
            // the tie guard.
            if scaled >= 1e9 {
                return fmt::Display::fmt(&x, f);
            }
            let floor = scaled.floor();
            let fraction = scaled - floor;
            if (fraction - 0.5).abs() > 1e-6 {
                let n = floor as u64 + u64::from(fraction > 0.5);
                return f.write_str(digits(n, decimals, &mut [0; 24]));
            }
        }
        fmt::Display::fmt(&x, f)
    }
}

/// `n / 10^decimals` written with exactly `decimals` decimals, into the
/// end of `buf` (`n` is below 10^9, so at most 17 bytes are used).
fn digits(mut n: u64, decimals: usize, buf: &mut [u8; 24]) -> &str {
    let mut pos = buf.len();
    for _ in 0..decimals {
        pos -= 1;
        buf[pos] = b'0' + (n % 10) as u8;
        n /= 10;
    }
    if decimals > 0 {
        pos -= 1;
        buf[pos] = b'.';
    }
    loop {
        pos -= 1;
        buf[pos] = b'0' + (n % 10) as u8;
        n /= 10;
        if n == 0 {
            break;
        }
    }
    // Only ASCII digits and a point were written.
    std::str::from_utf8(&buf[pos..]).unwrap_or_default()
}

#[cfg(test)]
mod tests {
    use super::Dec;

    fn same(x: f64) {
        for decimals in 0..=3 {
            assert_eq!(
                format!("{:.*}", decimals, Dec(x)),
                format!("{:.*}", decimals, x),
                "{x} to {decimals} decimals"
            );
        }
        assert_eq!(format!("{}", Dec(x)), format!("{x}"));
        assert_eq!(format!("{:+.0}", Dec(x)), format!("{x:+.0}"));
        assert_eq!(format!("{:>8.1}", Dec(x)), format!("{x:>8.1}"));
    }

    #[test]
    fn writes_what_the_standard_library_writes() {
        for x in [
            0.0,
            -0.0,
            0.5,
            1.5,
            2.5,
            0.125,
            0.375,
            0.05,
            0.15,
            0.25,
            0.35,
            1.005,
            2.675,
            3.0,
            7.0,
            10.0,
            60.0,
            99.95,
            99.995,
            1e11,
            1e13,
            -1.25,
            -0.4,
            f64::NAN,
            f64::INFINITY,
            f64::MIN_POSITIVE,
            4.349_305_499_147_564,
            1_576.710_784_231_112,
        ] {
            same(x);
        }
        // Random values over many magnitudes, and values on a grid of
        // decimals (the rounded figures the planner writes most).
        let mut state = 0x2545_f491_4f6c_dd1d_u64;
        for k in 0..1_000_000u64 {
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            let unit = (state >> 11) as f64 / (1u64 << 53) as f64;
            let x = match k % 4 {
                0 => unit * 10f64.powi((k % 9) as i32),
                1 => (unit * 100_000.0).round() / 100.0,
                2 => (unit * 10_000.0).round() / 10.0,
                _ => (unit * 8_000.0).round() / 8.0,
            };
            for decimals in 0..=3 {
                assert_eq!(
                    format!("{:.*}", decimals, Dec(x)),
                    format!("{:.*}", decimals, x),
                    "{x} to {decimals} decimals"
                );
            }
        }
    }
}
