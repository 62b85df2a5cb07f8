//! HyperLogLog registers and Ertl's improved estimator, shared by HyperBall (one counter per
//! node) and the id sketches (two counters per graph). A register holds the largest rank seen
//! among the hashes that map to it (Flajolet, Fusy, Gandouet & Meunier, "HyperLogLog: the
//! analysis of a near-optimal cardinality estimation algorithm", AofA 2007).

/// The register a 64-bit hash maps to with `2^b` registers (its top `b` bits), and its rank:
/// one more than the leading zeros of the remaining bits.
#[inline]
pub(crate) fn register_of(h: u64, b: u32) -> (usize, u8) {
    let j = (h >> (64 - b)) as usize;
    let rest = h << b;
    (j, (rest.leading_zeros().min(64 - b) + 1) as u8)
}

/// The cardinality estimate of one counter by Ertl's improved estimator (O. Ertl, "New
/// cardinality estimation algorithms for HyperLogLog sketches", arXiv:1702.01284, 2017), which
/// stays nearly unbiased across the range where the original estimator switches to linear
/// counting; the original's bias there showed as under-coverage in this project's coverage test.
/// `q` = 64 − log2(registers) is the largest rank a register can take, minus one.
pub(crate) fn count(r: &[u8], q: usize) -> f64 {
    let m = r.len() as f64;
    let mut c = [0u32; 66];
    for &x in r {
        c[x as usize] += 1;
    }
    if c[0] as f64 == m {
        return 0.0;
    }
    let mut z = m * tau(1.0 - c[q + 1] as f64 / m);
    for k in (1..=q).rev() {
        z = 0.5 * (z + c[k] as f64);
    }
    z += m * sigma(c[0] as f64 / m);
    m * m / (2.0 * std::f64::consts::LN_2) / z
}

/// sigma(x) = x + sum_{k>=1} x^(2^k) 2^(k-1) (Ertl 2017).
fn sigma(mut x: f64) -> f64 {
    if x == 1.0 {
        return f64::INFINITY;
    }
    let mut y = 1.0;
    let mut z = x;
    loop {
        x *= x;
        let before = z;
        z += x * y;
        y += y;
        if z == before {
            return z;
        }
    }
}

/// tau(x) = (1 - x - sum_{k>=1} (1 - x^(2^-k))^2 2^-k) / 3 (Ertl 2017).
fn tau(mut x: f64) -> f64 {
    if x == 0.0 || x == 1.0 {
        return 0.0;
    }
    let mut y = 1.0;
    let mut z = 1.0 - x;
    loop {
        x = x.sqrt();
        let before = z;
        y *= 0.5;
        z -= (1.0 - x).powi(2) * y;
        if z == before {
            return z / 3.0;
        }
    }
}
