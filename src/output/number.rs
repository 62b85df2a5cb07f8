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
/// nonzero `v` would print as all zeros at those places or is at least ten million.
pub fn decimal(v: f64, places: usize) -> String {
    let smallest = 0.5 * 10f64.powi(-(places.min(300) as i32));
    if v != 0.0 && v.is_finite() && (v.abs() >= 1e7 || v.abs() < smallest.max(1e-4)) {
        format!("{v:.3e}")
    } else {
        format!("{v:.places$}")
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
}
