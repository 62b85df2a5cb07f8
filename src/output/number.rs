//! The one number formatter every output uses (text, HTML, SVG ticks excepted), so that a figure
//! reads the same everywhere: counts with thousands separators, sizes with binary prefixes, and
//! fractions in fixed notation unless they are too small or too large to read that way, where
//! scientific notation takes over instead of printing `0.0000`.

/// 1234567 -> "1,234,567".
pub fn count(n: u64) -> String {
    let s = n.to_string();
    let mut out = String::with_capacity(s.len() + s.len() / 3);
    for (i, c) in s.chars().enumerate() {
        if i > 0 && (s.len() - i).is_multiple_of(3) {
            out.push(',');
        }
        out.push(c);
    }
    out
}

/// Binary-prefixed size: "3.4 MiB".
pub fn bytes(b: u64) -> String {
    const UNITS: [&str; 5] = ["B", "KiB", "MiB", "GiB", "TiB"];
    let mut v = b as f64;
    let mut u = 0;
    while v >= 1024.0 && u + 1 < UNITS.len() {
        v /= 1024.0;
        u += 1;
    }
    if u == 0 {
        format!("{b} B")
    } else {
        format!("{v:.1} {}", UNITS[u])
    }
}

/// `v` with `places` decimals, or in scientific notation with four significant digits when a
/// nonzero `v` is below 1e-3 (where fixed notation shows too few digits), would print as all
/// zeros at those places, or is at least ten million.
pub fn decimal(v: f64, places: usize) -> String {
    let smallest = 0.5 * 10f64.powi(-(places.min(300) as i32));
    if v != 0.0 && v.is_finite() && (v.abs() >= 1e7 || v.abs() < smallest.max(1e-3)) {
        format!("{v:.3e}")
    } else {
        format!("{v:.places$}")
    }
}

/// How an estimate prints so that its interval is visible: the half-width to two significant
/// digits and the value and bounds to the same place, in fixed notation for ordinary sizes and
/// in scientific notation when the figure is below 1e-3 or at least 1e7, so an estimate of
/// 1.2345e-5 prints as `1.2345e-5 ± 8.3e-8`, never `0.0000 ± 0.0000`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Precision {
    /// Mantissa digits after the point, in scientific notation.
    sci_digits: Option<usize>,
    /// Decimals, in fixed notation.
    places: usize,
}

/// The precision for `v` known to ±`half`, with at least `min_places` decimals in fixed notation.
pub fn precision(v: f64, half: f64, min_places: usize) -> Precision {
    if !(half > 0.0 && half.is_finite() && v.is_finite()) {
        return Precision {
            sci_digits: None,
            places: min_places,
        };
    }
    // The place of the half-width's second significant digit.
    let step = half.log10().floor() as i32 - 1;
    let scale = v.abs().max(half);
    if !(1e-3..1e7).contains(&scale) {
        let exponent = scale.log10().floor() as i32;
        Precision {
            sci_digits: Some((exponent - step).clamp(1, 12) as usize),
            places: 0,
        }
    } else {
        Precision {
            sci_digits: None,
            places: (-step).max(min_places as i32).min(12) as usize,
        }
    }
}

impl Precision {
    /// A value or bound.
    pub fn show(&self, v: f64) -> String {
        match self.sci_digits {
            Some(d) => format!("{v:.d$e}"),
            None if self.places == 0 => plain(v.round(), 0),
            None => decimal(v, self.places),
        }
    }

    /// The half-width.
    pub fn show_half(&self, h: f64) -> String {
        match self.sci_digits {
            Some(_) => format!("{h:.1e}"),
            None if self.places == 0 => plain(h.round(), 0),
            None => format!("{h:.prec$}", prec = self.places),
        }
    }
}

/// Decimals that show a difference of `diff` between two values: at least `min_places`, more
/// when the difference is smaller, so two different values never print alike.
pub fn places_for(diff: f64, min_places: usize) -> usize {
    if diff == 0.0 || !diff.is_finite() {
        return min_places;
    }
    let needed = (-diff.abs().log10()).ceil() as i64 + 1;
    (needed.max(min_places as i64) as usize).min(12)
}

/// A difference with its sign: whole numbers as integers, others with the decimals they need.
pub fn signed(diff: f64) -> String {
    if diff.fract() == 0.0 && diff.abs() < 1e15 {
        format!("{:+}", diff as i64)
    } else if diff.abs() < 1e-4 {
        format!("{diff:+.3e}")
    } else {
        format!("{diff:+.prec$}", prec = places_for(diff, 4))
    }
}

/// A value compared in a change row: whole numbers with separators, others with `places`
/// decimals (see [`places_for`]).
pub fn plain(v: f64, places: usize) -> String {
    if v.fract() == 0.0 && v.abs() < 1e15 {
        let s = count(v.abs() as u64);
        if v < 0.0 { format!("-{s}") } else { s }
    } else {
        decimal(v, places)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn formats() {
        assert_eq!(count(0), "0");
        assert_eq!(count(1234567), "1,234,567");
        assert_eq!(count(100), "100");
        assert_eq!(bytes(512), "512 B");
        assert_eq!(bytes(3 * 1024 * 1024 + 400_000), "3.4 MiB");
    }

    #[test]
    fn small_values_never_print_as_zeros() {
        assert_eq!(decimal(1e-5, 4), "1.000e-5");
        assert_eq!(decimal(0.1234, 4), "0.1234");
        assert_eq!(decimal(0.000106, 4), "1.060e-4");
        assert_eq!(decimal(0.0, 4), "0.0000");
        assert_eq!(decimal(2.5e8, 2), "2.500e8");
        assert_eq!(signed(1.0), "+1");
        assert_eq!(signed(0.00002), "+2.000e-5");
        assert_eq!(signed(0.0012), "+0.0012");
        assert_eq!(signed(0.00012), "+0.00012");
        assert_eq!(plain(999_998.0, 4), "999,998");
        assert_eq!(plain(-3.0, 4), "-3");
        // 10.00001 and 10.0 differ at the fifth decimal: six places show it.
        let p = places_for(10.00001 - 10.0, 4);
        assert_ne!(format!("{:.p$}", 10.00001), format!("{:.p$}", 10.0));
    }

    #[test]
    fn estimates_print_to_their_interval() {
        // A tiny figure: scientific, value to the half-width's second digit.
        let p = precision(1.2345e-5, 8.3e-8, 4);
        assert_eq!(
            (p.show(1.2345e-5), p.show_half(8.3e-8)),
            ("1.2345e-5".into(), "8.3e-8".into())
        );
        // Ordinary sizes keep the caller's decimals, or more when the interval is narrower.
        let p = precision(4.46512, 0.0367, 4);
        assert_eq!(
            (p.show(4.46512), p.show_half(0.0367)),
            ("4.4651".into(), "0.0367".into())
        );
        let p = precision(0.293123, 0.0000123, 3);
        assert_eq!(
            (p.show(0.293123), p.show_half(0.0000123)),
            ("0.293123".into(), "0.000012".into())
        );
        // No interval: the caller's decimals.
        assert_eq!(precision(0.5, 0.0, 3).show(0.5), "0.500");
        // Bounds of a tiny interval stay apart.
        let p = precision(5.8e-5, 1.1e-6, 4);
        assert_ne!(p.show(5.8e-5 - 1.1e-6), p.show(5.8e-5 + 1.1e-6));
        assert_ne!(p.show(5.8e-5 - 1.1e-6), "0.0000");
    }
}
