//! Numbers as text, short and exact: Rust's shortest round-trip digits, in plain decimal for
//! everyday magnitudes and in exponent form for tiny and huge ones (so a transmittance of
//! 1e-160 is written as `1e-160`, not as 160 zeros). Reading the text back gives the same
//! number bit for bit.

use std::fmt;

/// Smallest magnitude written in plain decimal.
const PLAIN_FROM: f64 = 1e-5;
/// Magnitudes from here on are written with an exponent.
const PLAIN_BELOW: f64 = 1e16;

/// Displays an `f64` short and exact (see the module doc).
///
/// ```
/// use stackwise::number::Short;
/// assert_eq!(Short(0.25).to_string(), "0.25");
/// assert_eq!(Short(550.0).to_string(), "550");
/// assert_eq!(Short(0.0).to_string(), "0");
/// assert_eq!(Short(1e-160).to_string(), "1e-160");
/// assert_eq!(Short(-2.5e300).to_string(), "-2.5e300");
/// assert_eq!(Short(f64::MIN_POSITIVE).to_string().parse::<f64>(), Ok(f64::MIN_POSITIVE));
/// ```
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Short(pub f64);

impl fmt::Display for Short {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let x = self.0;
        let m = x.abs();
        if m == 0.0 || !m.is_finite() || (PLAIN_FROM..PLAIN_BELOW).contains(&m) {
            write!(f, "{x}")
        } else {
            write!(f, "{x:e}")
        }
    }
}

/// Displays an `f64` with a fixed number of decimals (the second field), without a minus sign
/// on a value that rounds to zero: "0.0", not "-0.0".
///
/// ```
/// use stackwise::number::Fixed;
/// assert_eq!(Fixed(-0.03, 1).to_string(), "0.0");
/// assert_eq!(Fixed(-0.06, 1).to_string(), "-0.1");
/// assert_eq!(Fixed(12.345, 2).to_string(), "12.35");
/// assert_eq!(Fixed(-0.0, 0).to_string(), "0");
/// ```
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Fixed(pub f64, pub usize);

impl fmt::Display for Fixed {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let s = format!("{:.*}", self.1, self.0);
        match s.strip_prefix('-') {
            Some(rest) if rest.bytes().all(|b| b == b'0' || b == b'.') => f.write_str(rest),
            _ => f.write_str(&s),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn round_trips_exactly_and_stays_short() {
        let mut x = 1.234_567_890_123_456_7e-300;
        while x < 1e300 {
            for v in [x, -x, x * 3.3, 1.0 / x] {
                let s = Short(v).to_string();
                assert_eq!(s.parse::<f64>(), Ok(v), "{v:e} as {s}");
                assert!(s.len() <= 25, "{s} is short");
            }
            x *= 7.77;
        }
    }
}
