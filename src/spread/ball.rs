//! HyperBall on the distributed profile (Boldi, Rosa & Vigna, "HyperANF: approximating the
//! neighbourhood function of very large graphs on a budget", WWW 2011): each node of the giant
//! component keeps a HyperLogLog counter (Flajolet, Fusy, Gandouet & Meunier, AofA 2007) at its
//! owner; a round sends each counter that changed to every worker owning one of its neighbours,
//! once per worker with the neighbours' slots there, and each owner takes the register-wise
//! maximum. N(t) is summed exactly, so every process count gives the same bits; the runs feed
//! the single-machine estimator, whose jackknife over hash seeds gives the intervals.

use xxhash_rust::xxh3::xxh3_64_with_seed;

use super::exchange::{Parcel, Rounds};
use super::owned::{Owned, owner};
use crate::estimate::hll::{count, register_of};
use crate::estimate::hyperball::{BallOptions, run_seed};
use crate::numeric::ExactSum;

/// N(0), N(1), … of every run (hash seed), each term this worker's exact partial sum over its
/// giant nodes; merged by adding the sums term by term.
pub(crate) fn run(
    x: &mut Rounds,
    owned: &Owned,
    in_giant: &[bool],
    opts: &BallOptions,
) -> (Vec<Vec<ExactSum>>, u64) {
    let peers = x.peers();
    let n = owned.nodes.len();
    let b = opts.log2_registers as u32;
    let m = 1usize << b;
    let q = 64 - b as usize;
    let mut rounds = 0;
    let mut runs = Vec::new();
    for r in 0..opts.repeats as u64 {
        let seed = run_seed(opts.seed, r);
        let mut cur = vec![0u8; n * m];
        let mut estimate = vec![0f64; n];
        let mut changed = vec![false; n];
        let mut total = ExactSum::default();
        for i in (0..n).filter(|&i| in_giant[i]) {
            let h = xxh3_64_with_seed(&owned.nodes[i].to_le_bytes(), seed);
            let (j, rank) = register_of(h, b);
            cur[i * m + j] = rank;
            estimate[i] = count(&cur[i * m..(i + 1) * m], q);
            changed[i] = true;
            total.add(estimate[i]);
        }
        let mut nt = vec![total];
        // Slots grouped by the worker that owns them, reused for every node.
        let mut by_peer: Vec<Vec<u32>> = vec![Vec::new(); peers];
        loop {
            let mut out: Vec<Vec<(Vec<u8>, Vec<u32>)>> = vec![Vec::new(); peers];
            for i in (0..n).filter(|&i| changed[i]) {
                for k in owned.offsets[i]..owned.offsets[i + 1] {
                    by_peer[owner(owned.targets[k], peers)].push(owned.target_slots[k]);
                }
                let regs = &cur[i * m..(i + 1) * m];
                for (w, slots) in by_peer.iter_mut().enumerate() {
                    if !slots.is_empty() {
                        out[w].push((regs.to_vec(), std::mem::take(slots)));
                    }
                }
            }
            let mut next = cur.clone();
            let mut touched = vec![false; n];
            for p in x.round(out, Parcel::Counters) {
                if let Parcel::Counters(v) = p {
                    for (regs, slots) in v {
                        for s in slots {
                            let i = s as usize;
                            touched[i] = true;
                            for (a, &c) in next[i * m..(i + 1) * m].iter_mut().zip(&regs) {
                                *a = (*a).max(c);
                            }
                        }
                    }
                }
            }
            let mut any = false;
            for i in 0..n {
                let now = &next[i * m..(i + 1) * m];
                changed[i] = touched[i] && now != &cur[i * m..(i + 1) * m];
                if changed[i] {
                    estimate[i] = count(now, q);
                    any = true;
                }
            }
            cur = next;
            rounds += 1;
            if !x.any(any) {
                break;
            }
            let mut total = ExactSum::default();
            for i in (0..n).filter(|&i| in_giant[i]) {
                total.add(estimate[i]);
            }
            nt.push(total);
        }
        runs.push(nt);
    }
    (runs, rounds)
}
