//! Resource limits: how much memory a build may use, so that no claim in an input (a size
//! line, a decompression bomb) can make plumb allocate without bound.

use crate::error::ParamError;

/// A default memory budget: 90% of the memory available when first asked (Linux
/// `MemAvailable`), or 16 GiB where that cannot be read. Read once per process.
pub fn default_memory_budget() -> u64 {
    static BUDGET: std::sync::OnceLock<u64> = std::sync::OnceLock::new();
    *BUDGET.get_or_init(|| available_memory().map_or(16 << 30, |b| b / 10 * 9))
}

/// Bytes of memory available to new allocations, from `/proc/meminfo`.
pub fn available_memory() -> Option<u64> {
    let text = std::fs::read_to_string("/proc/meminfo").ok()?;
    parse_meminfo(&text)
}

fn parse_meminfo(text: &str) -> Option<u64> {
    let line = text.lines().find(|l| l.starts_with("MemAvailable:"))?;
    let kib: u64 = line.split_whitespace().nth(1)?.parse().ok()?;
    kib.checked_mul(1024)
}

/// Parse a size such as `512M`, `8G`, `1.5T` or a plain byte count (binary units).
pub fn parse_size(s: &str) -> Result<u64, ParamError> {
    let s = s.trim();
    let (num, mult) = match s.char_indices().last() {
        Some((i, c)) if c.is_ascii_alphabetic() => {
            let m: u64 = match c.to_ascii_uppercase() {
                'K' => 1 << 10,
                'M' => 1 << 20,
                'G' => 1 << 30,
                'T' => 1 << 40,
                'B' => 1,
                _ => {
                    return Err(ParamError::from(format!(
                        "unknown unit in {s:?}; use K, M, G or T"
                    )));
                }
            };
            (&s[..i], m)
        }
        _ => (s, 1),
    };
    let v: f64 = num
        .trim()
        .parse()
        .map_err(|_| format!("{s:?} is not a size like 512M or 8G"))?;
    if !(v.is_finite() && v > 0.0) {
        return Err(ParamError::from(format!("{s:?} must be a positive size")));
    }
    Ok((v * mult as f64) as u64)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sizes() {
        assert_eq!(parse_size("512M"), Ok(512 << 20));
        assert_eq!(parse_size("1.5g"), Ok(3 << 29));
        assert_eq!(parse_size("1000"), Ok(1000));
        assert!(parse_size("lots").is_err());
        assert!(parse_size("-1G").is_err());
        assert_eq!(
            parse_meminfo("MemTotal: 10 kB\nMemAvailable:    2048 kB\n"),
            Some(2 << 20)
        );
    }
}
