//! Small-world coefficients of a connected graph against random and lattice references, with
//! intervals. The reference figures are analytic (Erdős–Rényi, configuration model, ring
//! lattice) or measured on sampled reference graphs; each is labelled with where it comes from.
//!
//! - sigma = (C/C_r)/(L/L_r) (Humphries & Gurney, "Network 'small-world-ness': a quantitative
//!   method for determining canonical network equivalence", PLoS ONE 3, e0002051, 2008);
//! - omega = L_r/L − C/C_l (Telesford, Joyce, Hayasaka, Burdette & Laurienti, "The ubiquity of
//!   small-world networks", Brain Connectivity 1, 367, 2011);
//! - small-world propensity phi = 1 − sqrt((ΔC² + ΔL²)/2), ΔC = (C_l − C)/(C_l − C_r),
//!   ΔL = (L − L_r)/(L_l − L_r), each clipped to [0, 1] (Muldoon, Bridgeford & Bassett, "Small-
//!   world propensity and weighted brain networks", Sci. Rep. 6, 22057, 2016).
//!
//! Intervals propagate every input's sampling error (its standard error, normal, or the spread
//! its own interval states when that is wider) through the formula by seeded Monte Carlo draws
//! (a parametric bootstrap), which handles the clipping in phi that the delta method cannot. Inputs that are exact or analytic carry no error.

use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;
use serde::{Deserialize, Serialize};

use crate::figure::{Figure, Interval};
use crate::numeric::{mean_variance, percentile_interval};

/// Euler–Mascheroni constant.
const EULER_GAMMA: f64 = 0.577_215_664_901_532_9;
/// Monte Carlo draws for the intervals.
const DRAWS: usize = 4000;

/// Mean distance of G(n, p) with mean degree `k` (Fronczak, Fronczak & Hołyst, "Average path
/// length in random networks", Phys. Rev. E 70, 056110, 2004): (ln n − γ)/ln k + 1/2.
pub fn er_mean_distance(n: f64, k: f64) -> f64 {
    (n.ln() - EULER_GAMMA) / k.ln() + 0.5
}

/// Clustering of G(n, p) with mean degree `k`: k/(n − 1).
pub fn er_clustering(n: f64, k: f64) -> f64 {
    k / (n - 1.0)
}

/// Clustering of the configuration model with the given degree moments (Newman, "The structure
/// and function of complex networks", SIAM Review 45, 2003, eq. 3.5): (⟨k²⟩ − ⟨k⟩)² / (n ⟨k⟩³).
pub fn configuration_clustering(n: f64, k: f64, k2: f64) -> f64 {
    (k2 - k).powi(2) / (n * k.powi(3))
}

/// Clustering of the ring lattice of degree k (Watts & Strogatz 1998): 3(k − 2)/(4(k − 1)).
pub fn lattice_clustering(k: u32) -> f64 {
    let k = k as f64;
    3.0 * (k - 2.0) / (4.0 * (k - 1.0))
}

/// Exact mean distance of the ring lattice with n nodes and degree k (even): with K = k/2,
/// S(h) = K q(q+1)/2 + r(q+1), q = floor(h/K), r = h − qK, the summed distances to the h
/// nearest nodes on one side; odd n: 2 S((n−1)/2)/(n−1); even n: (2 S(n/2 − 1) + ceil(n/2/K))/(n−1).
pub fn lattice_mean_distance(n: u64, k: u64) -> f64 {
    let kk = k / 2;
    let s = |h: u64| {
        let q = h / kk;
        let r = h - q * kk;
        (kk * q * (q + 1) / 2 + r * (q + 1)) as f64
    };
    if !n.is_multiple_of(2) {
        2.0 * s((n - 1) / 2) / (n - 1) as f64
    } else {
        (2.0 * s(n / 2 - 1) + (n / 2).div_ceil(kk) as f64) / (n - 1) as f64
    }
}

/// The lattice degree used as reference for mean degree `k`: the nearest even number, at least 2
/// and below n.
pub fn lattice_degree(k: f64, n: u64) -> u32 {
    let even = (2.0 * (k / 2.0).round()).max(2.0) as u64;
    let below = if n.is_multiple_of(2) { n - 2 } else { n - 1 };
    even.min(below).max(2) as u32
}

/// One reference's figures and where they come from.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct Reference {
    /// What the reference is, e.g. "random, analytic Erdős–Rényi".
    pub name: String,
    /// The formula or procedure and its source.
    pub source: String,
    /// C_r (or C_l) by transitivity.
    pub transitivity: Option<Figure>,
    /// C_r (or C_l) by average local clustering.
    pub average_clustering: Option<Figure>,
    /// L_r (or L_l).
    pub mean_distance: Option<Figure>,
    /// Sampled graphs behind the figures (none for analytic references): their spread is
    /// propagated with a Student t of `graphs − 1` degrees of freedom.
    pub graphs: Option<u64>,
}

/// The observed graph's figures the coefficients use (on its giant component).
#[derive(Debug, Clone, PartialEq)]
pub struct Observed {
    /// Nodes of the giant component.
    pub nodes: u64,
    /// Its edges.
    pub edges: u64,
    /// Its mean degree.
    pub mean_degree: f64,
    /// Its second degree moment ⟨k²⟩.
    pub second_moment: f64,
    /// Its transitivity.
    pub transitivity: Figure,
    /// Average local clustering, degree < 2 counted as 0.
    pub average_clustering: Figure,
    /// Its mean distance.
    pub mean_distance: Figure,
}

/// sigma, omega and phi for one choice of clustering.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct Coefficients {
    /// "transitivity" or "average local clustering".
    pub clustering: String,
    /// Which reference gave C_r and L_r.
    pub compared_with: String,
    /// sigma = (C/C_r)/(L/L_r) (Humphries & Gurney, PLoS ONE 3, 2008); `None` when undefined
    /// (the random reference has no clustering).
    pub sigma: Option<Figure>,
    /// omega = L_r/L − C/C_l (Telesford et al., Brain Connectivity 1, 2011); `None` when
    /// undefined (the ring lattice of degree under 4 has no clustering).
    pub omega: Option<Figure>,
    /// Small-world propensity phi (Muldoon, Bridgeford & Bassett, Sci. Rep. 6, 2016); `None`
    /// when undefined (the lattice and random references tie in clustering or in distance).
    pub propensity: Option<Figure>,
    /// Plain-words readings that respect the intervals.
    pub verdicts: Vec<String>,
}

/// The small-world comparison of the giant component with its references.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, schemars::JsonSchema)]
pub struct SmallWorld {
    /// Node set the comparison is made on.
    pub node_set: String,
    /// The references, sampled first, then analytic.
    pub references: Vec<Reference>,
    /// One entry per clustering kind.
    pub coefficients: Vec<Coefficients>,
    /// What a reader should keep in mind, in words.
    pub caveats: Vec<String>,
}

/// The analytic references for `o`.
pub fn analytic_references(o: &Observed) -> Vec<Reference> {
    let (n, k, k2) = (o.nodes as f64, o.mean_degree, o.second_moment);
    let er_c = er_clustering(n, k);
    let kl = lattice_degree(k, o.nodes);
    let cl = lattice_clustering(kl);
    let ll = lattice_mean_distance(o.nodes, kl as u64);
    let cm = configuration_clustering(n, k, k2);
    let f = |v: f64, how: &str| Some(Figure::exact(v, how));
    vec![
        Reference {
            name: "random, analytic Erdős–Rényi".into(),
            source:
                "C_r = <k>/(n-1); L_r = (ln n - γ)/ln<k> + 1/2 (Fronczak, Fronczak & Hołyst 2004)"
                    .into(),
            transitivity: f(er_c, "analytic: <k>/(n-1)"),
            average_clustering: f(er_c, "analytic: <k>/(n-1)"),
            mean_distance: (k > 1.0).then(|| {
                Figure::exact(
                    er_mean_distance(n, k),
                    "analytic: (ln n - γ)/ln<k> + 1/2 (Fronczak, Fronczak & Hołyst 2004)",
                )
            }),
            graphs: None,
        },
        Reference {
            name: "random with the same degrees, analytic configuration model".into(),
            source: "C = (<k²> - <k>)² / (n <k>³) (Newman 2003)".into(),
            transitivity: f(cm, "analytic: (<k²>-<k>)²/(n<k>³) (Newman 2003)"),
            average_clustering: None,
            mean_distance: None,
            graphs: None,
        },
        Reference {
            name: format!("ring lattice, analytic, degree {kl}"),
            source: "C_l = 3(k-2)/(4(k-1)) (Watts & Strogatz 1998); exact L_l of the ring lattice"
                .into(),
            transitivity: f(cl, "analytic: 3(k-2)/(4(k-1))"),
            average_clustering: f(cl, "analytic: 3(k-2)/(4(k-1))"),
            mean_distance: f(ll, "exact mean distance of the ring lattice"),
            graphs: None,
        },
    ]
}

/// A reference measured on `r` sampled graphs: the mean of their figures, with the spread of
/// one random graph about it as the standard error, sd·sqrt(1 + 1/r), and a t prediction
/// interval. The comparison asks whether the input differs from a typical random graph by more
/// than random graphs differ among themselves, so the ensemble's spread belongs in the interval,
/// not just the uncertainty of its mean. With one graph there is no spread to measure and the
/// figure carries none.
pub fn empirical_reference(
    name: &str,
    source: &str,
    samples: &[(f64, f64, f64)],
    level: f64,
) -> Reference {
    let r = samples.len();
    let fig = |pick: &dyn Fn(&(f64, f64, f64)) -> f64| -> Option<Figure> {
        if r == 0 {
            return None;
        }
        let v: Vec<f64> = samples.iter().map(pick).collect();
        let (mean, var) = mean_variance(&v);
        let se = (var * (1.0 + 1.0 / r as f64)).sqrt();
        let half = if r > 1 {
            crate::estimate::interval::t_for(level, r as u64 - 1) * se
        } else {
            0.0
        };
        Some(Figure::estimate(
            mean,
            &format!(
                "mean over {r} sampled reference graphs; interval: where one such graph's value \
                 lies (t prediction interval)"
            ),
            r as u64,
            se,
            Interval::around(mean, half, level),
        ))
    };
    Reference {
        name: name.into(),
        source: source.into(),
        transitivity: fig(&|s| s.0),
        average_clustering: fig(&|s| s.1),
        mean_distance: fig(&|s| s.2),
        graphs: Some(r as u64),
    }
}

/// One input of a coefficient: value, standard error (0 when exact or analytic), and the degrees
/// of freedom of its error when it comes from a few sampled graphs (normal otherwise).
#[derive(Clone, Copy)]
struct Input {
    value: f64,
    se: f64,
    df: Option<u64>,
}

fn ve(f: &Figure, graphs: Option<u64>) -> Input {
    let se = f.std_error().unwrap_or(0.0);
    // An input whose own interval is wider than a normal one of its standard error (a t
    // interval over a few HyperBall runs) is drawn with the spread its interval states, so the
    // coefficient is not more certain than its inputs are.
    let stated = f.interval().map_or(0.0, |iv| {
        (iv.high - iv.low) / (2.0 * crate::estimate::interval::z_for(iv.level))
    });
    Input {
        value: f.value(),
        se: if graphs.is_some() { se } else { se.max(stated) },
        df: graphs.filter(|&g| g > 1).map(|g| g - 1),
    }
}

/// A Student t draw with `df` degrees of freedom: z / sqrt(chi²/df).
fn student(rng: &mut ChaCha8Rng, df: u64) -> f64 {
    let z = normal(rng);
    let chi2: f64 = (0..df).map(|_| normal(rng).powi(2)).sum();
    z / (chi2 / df as f64).sqrt()
}

/// Standard normal draw (Box–Muller).
fn normal(rng: &mut ChaCha8Rng) -> f64 {
    let u1: f64 = 1.0 - rng.random::<f64>();
    let u2: f64 = rng.random();
    (-2.0 * u1.ln()).sqrt() * (2.0 * std::f64::consts::PI * u2).cos()
}

/// A coefficient from inputs `(value, se)` through `f`, with a percentile interval from seeded
/// normal draws of the inputs; exact when no input has an error.
fn propagate(
    inputs: &[Input],
    f: &dyn Fn(&[f64]) -> f64,
    name: &str,
    level: f64,
    seed: u64,
) -> Option<Figure> {
    let point: Vec<f64> = inputs.iter().map(|x| x.value).collect();
    let value = f(&point);
    // A zero denominator (no clustering in a reference) leaves the coefficient undefined.
    if !value.is_finite() {
        return None;
    }
    if inputs.iter().all(|x| x.se == 0.0) {
        return Some(Figure::exact(
            value,
            &format!("{name}, from exact or analytic inputs"),
        ));
    }
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let mut draws: Vec<f64> = (0..DRAWS)
        .map(|_| {
            let x: Vec<f64> = inputs
                .iter()
                .map(|i| {
                    let e = match i.df {
                        Some(df) => student(&mut rng, df),
                        None => normal(&mut rng),
                    };
                    i.value + i.se * e
                })
                .collect();
            f(&x)
        })
        .filter(|v| v.is_finite())
        .collect();
    // Most draws undefined: the inputs' errors reach a zero denominator, so no interval
    // can be given, and the value alone would claim a precision it lacks.
    if draws.len() < DRAWS / 2 {
        return None;
    }
    let se = mean_variance(&draws).1.sqrt();
    draws.sort_by(f64::total_cmp);
    Some(Figure::estimate(
        value,
        &format!(
            "{name}; interval by Monte Carlo propagation of the inputs' errors ({DRAWS} draws)"
        ),
        DRAWS as u64,
        se,
        percentile_interval(&draws, level, value),
    ))
}

fn verdicts(sigma: Option<&Figure>, omega: Option<&Figure>, phi: Option<&Figure>) -> Vec<String> {
    let span = |f: &Figure| match f.interval() {
        Some(iv) => (iv.low, iv.high),
        None => (f.value(), f.value()),
    };
    let mut out = Vec::new();
    out.push(match sigma.map(span) {
        None => "sigma undefined: the random reference has no clustering".to_string(),
        Some((lo, _)) if lo > 1.0 => "sigma above 1: small-world by sigma".to_string(),
        Some((_, hi)) if hi < 1.0 => "sigma below 1: not small-world by sigma".to_string(),
        Some(_) => "sigma undecided: its interval straddles 1".to_string(),
    });
    out.push(match omega.map(span) {
        None => "omega undefined: the ring lattice of this degree has no clustering".to_string(),
        Some((lo, hi)) if lo > -0.5 && hi < 0.5 => {
            "omega within (-0.5, 0.5): small-world by omega".to_string()
        }
        Some((_, hi)) if hi <= -0.5 => "omega at or below -0.5: lattice-like".to_string(),
        Some((lo, _)) if lo >= 0.5 => "omega at or above 0.5: random-like".to_string(),
        Some(_) => "omega undecided: its interval straddles -0.5 or 0.5".to_string(),
    });
    out.push(match phi.map(span) {
        None => "propensity undefined: the lattice and random references tie".to_string(),
        Some((lo, _)) if lo > 0.6 => "propensity above 0.6: small-world by propensity".to_string(),
        Some((_, hi)) if hi < 0.6 => {
            "propensity below 0.6: not small-world by propensity".to_string()
        }
        Some(_) => "propensity undecided: its interval straddles 0.6".to_string(),
    });
    out
}

/// The comparison: `random` names the reference that gives C_r and L_r (the first reference
/// with both, preferring sampled ones the caller put first); the lattice is the analytic one.
pub fn compare(o: &Observed, references: Vec<Reference>, level: f64, seed: u64) -> SmallWorld {
    let lattice = references
        .iter()
        .find(|r| r.name.starts_with("ring lattice"))
        .cloned()
        .expect("the analytic lattice reference is always present");
    let mut coefficients = Vec::new();
    for (label, pick) in [
        (
            "transitivity",
            (|r: &Reference| r.transitivity.clone()) as fn(&Reference) -> Option<Figure>,
        ),
        ("average local clustering", |r: &Reference| {
            r.average_clustering.clone()
        }),
    ] {
        let Some(random) = references.iter().find(|r| {
            r.name.starts_with("random") && pick(r).is_some() && r.mean_distance.is_some()
        }) else {
            continue;
        };
        let c = if label == "transitivity" {
            &o.transitivity
        } else {
            &o.average_clustering
        };
        let inputs = [
            ve(c, None),
            ve(&pick(random).expect("checked"), random.graphs),
            ve(&pick(&lattice).expect("lattice has both"), None),
            ve(&o.mean_distance, None),
            ve(
                random.mean_distance.as_ref().expect("checked"),
                random.graphs,
            ),
            ve(lattice.mean_distance.as_ref().expect("lattice has L"), None),
        ];
        // x = [C, C_r, C_l, L, L_r, L_l]
        let sigma = propagate(
            &inputs,
            &|x| (x[0] / x[1]) / (x[3] / x[4]),
            "sigma = (C/C_r)/(L/L_r) (Humphries & Gurney 2008)",
            level,
            seed,
        );
        let omega = propagate(
            &inputs,
            &|x| x[4] / x[3] - x[0] / x[2],
            "omega = L_r/L - C/C_l (Telesford et al. 2011)",
            level,
            seed ^ 1,
        );
        let phi = propagate(
            &inputs,
            &|x| {
                let dc = ((x[2] - x[0]) / (x[2] - x[1])).clamp(0.0, 1.0);
                let dl = ((x[3] - x[4]) / (x[5] - x[4])).clamp(0.0, 1.0);
                1.0 - ((dc * dc + dl * dl) / 2.0).sqrt()
            },
            "small-world propensity (Muldoon, Bridgeford & Bassett 2016)",
            level,
            seed ^ 2,
        );
        let v = verdicts(sigma.as_ref(), omega.as_ref(), phi.as_ref());
        coefficients.push(Coefficients {
            clustering: label.into(),
            compared_with: random.name.clone(),
            sigma,
            omega,
            propensity: phi,
            verdicts: v,
        });
    }
    SmallWorld {
        node_set: String::new(),
        references,
        coefficients,
        caveats: vec![
            "sigma grows with the number of nodes for a fixed structure, so compare it only \
             between graphs of similar size"
                .into(),
            "omega can leave [-1, 1] when the graph clusters more than the lattice or is closer \
             than the random reference"
                .into(),
            "analytic references carry no ensemble spread; sampled reference graphs (built on \
             one machine: plumb profile --reference-graphs) fold it into the intervals"
                .into(),
        ],
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn lattice_closed_forms() {
        // Values checked against exact BFS in the exact-structure tests: n=100, k=10 -> 5.454545;
        // n=1000, k=10 -> 50.45045.
        assert!((lattice_mean_distance(100, 10) - 5.454_545_454_545_454).abs() < 1e-9);
        assert!((lattice_mean_distance(1000, 10) - 50.450_450_450_450_45).abs() < 1e-9);
        let g = crate::models::generate::ring_lattice(999, 6);
        let ap = crate::exact::distances::all_pairs(&g);
        let s = crate::exact::distances::DistanceStats::from_all_pairs(&ap, "all", 0);
        assert!((lattice_mean_distance(999, 6) - s.mean.value()).abs() < 1e-9);
        assert_eq!(lattice_degree(4.588, 34), 4);
        assert_eq!(lattice_degree(1.2, 34), 2);
        assert_eq!(lattice_clustering(10), 2.0 / 3.0);
    }
}
