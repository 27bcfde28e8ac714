//! The one number formatter of every text report (`measure`, `null`,
//! `merge`, `species`, `effort`): a fixed count of significant digits, so a
//! small value (a sparse NODF of 0.0123) keeps its digits instead of
//! printing as 0.01. JSON and CSV print full precision and do not use it.

/// Significant digits of a text report.
pub const DIGITS: usize = 4;

/// `x` with [`DIGITS`] significant digits (never fewer digits than its
/// integer part has), trailing zeros after the point removed: 77.2295 is
/// `77.23`, 0.012345 is `0.01235`, 254.777 is `254.8`, 100.0 is `100`,
/// 123456.7 is `123457`. Values below 1e-4 in size use exponent form
/// (`1.235e-7`); a non-finite value prints as Rust prints it.
pub fn num(x: f64) -> String {
    num_digits(x, DIGITS)
}

/// `x` with `digits` significant digits (at least 1), as [`num`].
pub fn num_digits(x: f64, digits: usize) -> String {
    let digits = digits.max(1);
    if !x.is_finite() {
        return x.to_string();
    }
    if x == 0.0 {
        return "0".into();
    }
    let mag = x.abs().log10().floor() as i64;
    if mag < -4 {
        let s = format!("{:.*e}", digits - 1, x);
        // Trim zeros of the mantissa: 1.200e-7 -> 1.2e-7.
        return match s.split_once('e') {
            Some((m, e)) => format!("{}e{e}", trim(m)),
            None => s,
        };
    }
    let decimals = (digits as i64 - 1 - mag).max(0) as usize;
    let s = format!("{x:.decimals$}");
    // Rounding may carry into a new digit (9.99995 -> 10.000): one digit fewer.
    let s = match s.trim_start_matches('-').split_once('.') {
        Some((int, _))
            if decimals > 0 && int.trim_start_matches('0').len() as i64 > (mag + 1).max(0) =>
        {
            format!("{x:.*}", decimals - 1)
        }
        _ => s,
    };
    trim(&s)
}

fn trim(s: &str) -> String {
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s.to_string()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn keeps_significant_digits() {
        assert_eq!(num(0.0123), "0.0123");
        assert_eq!(num(0.012346), "0.01235");
        assert_eq!(num(77.229514), "77.23");
        assert_eq!(num(254.777), "254.8");
        assert_eq!(num(100.0), "100");
        assert_eq!(num(0.8), "0.8");
        assert_eq!(num(123456.7), "123457");
        assert_eq!(num(-0.759608), "-0.7596");
        assert_eq!(num(9.99996), "10");
        assert_eq!(num(0.000999996), "0.001");
        assert_eq!(num(1.2e-7), "1.2e-7");
        assert_eq!(num(0.0), "0");
        assert_eq!(num(1.0 / 81.0), "0.01235");
        assert_eq!(num(0.99996), "1");
        assert_eq!(num_digits(0.30000000000000004, 3), "0.3");
        assert_eq!(num(f64::NAN), "NaN");
    }
}
