//! Mapping the user's node ids to dense `u32` indices.
//!
//! Dense indices follow the sorted order of the original ids (numeric for integer ids, bytewise for
//! text ids), so the mapping does not depend on thread count or chunking. Integer ids that are
//! small enough live in a flat array indexed by id (one `u32` per possible id, the common case of
//! roughly contiguous numbering); larger ones go to a hash map.

use rayon::prelude::*;
use rustc_hash::FxHashMap;

/// The largest number of distinct nodes: indices are `u32` and `u32::MAX` marks "absent".
pub const MAX_NODES: u64 = u32::MAX as u64;

/// Per-worker tally of integer ids: raw degree (edge lines touching the id, self-loops excluded).
pub struct IntTally {
    deg: Vec<u32>,
    /// Ids at or above this go to `sparse`.
    cap: u64,
    sparse: FxHashMap<u64, u32>,
    /// Ids seen in self-loops (they are nodes even if they have no other edge).
    loops: Vec<u64>,
    /// Ids waiting to be counted. Counting in batches, away from parsing, lets the processor
    /// overlap the cache misses of the random increments.
    pending: Vec<u64>,
    /// Ids counted so far (the density gauge for growing `deg`).
    counted: u64,
}

const BATCH: usize = 4096;

impl IntTally {
    pub fn new(cap: u64) -> Self {
        IntTally {
            deg: Vec::new(),
            cap,
            sparse: FxHashMap::default(),
            loops: Vec::new(),
            pending: Vec::with_capacity(BATCH),
            counted: 0,
        }
    }

    #[inline]
    pub fn edge(&mut self, a: u64, b: u64) {
        if a == b {
            self.loops.push(a);
        } else {
            self.pending.push(a);
            self.pending.push(b);
            if self.pending.len() >= BATCH {
                self.flush();
            }
        }
    }

    /// Count the pending ids.
    pub fn flush(&mut self) {
        let pending = std::mem::take(&mut self.pending);
        self.counted += pending.len() as u64;
        // Prefetch a fixed distance ahead: the increments' misses then overlap.
        const AHEAD: usize = 16;
        for (i, &id) in pending.iter().enumerate() {
            if let Some(d) = pending
                .get(i + AHEAD)
                .and_then(|&n| self.deg.get(n as usize))
            {
                crate::store::pages::prefetch(d);
            }
            self.bump(id);
        }
        self.pending = pending;
        self.pending.clear();
    }

    #[inline]
    fn bump(&mut self, id: u64) {
        if let Some(d) = self.deg.get_mut(id as usize) {
            *d = d.saturating_add(1);
        } else {
            self.bump_slow(id);
        }
    }

    #[cold]
    fn bump_slow(&mut self, id: u64) {
        // Grow the flat array only while it stays dense: up to 16 slots per id counted so far.
        // A few large ids in a small or early input go to the map instead of a huge array.
        let limit = self.cap.min(16 * self.counted + (1 << 16));
        if id < limit {
            let want = (id + 1)
                .max(2 * self.deg.len() as u64)
                .max(1 << 10)
                .min(limit);
            self.deg.resize(want as usize, 0);
            self.deg[id as usize] += 1;
        } else {
            let d = self.sparse.entry(id).or_insert(0);
            *d = d.saturating_add(1);
        }
    }
}

/// Dense index of every integer id in the input.
pub struct IntIndex {
    /// `rank[id]` for ids below `rank.len()`; `u32::MAX` where the id is absent. Empty when the ids
    /// are `first`, `first + 1`, ... with no gap.
    rank: Vec<u32>,
    /// The lowest id when the ids run without a gap: a lookup is then a subtraction, sparing the
    /// fill a random read per id (a tenth of the build on attachment files).
    first: Option<u64>,
    sparse: FxHashMap<u64, u32>,
    /// Original id of each dense index, ascending.
    pub ids: Vec<u64>,
    /// Raw degree (edge lines, self-loops excluded) of each dense index.
    pub raw_degree: Vec<u32>,
}

/// Why tallies could not be merged into an index.
#[derive(Debug)]
pub enum IndexFault {
    TooManyNodes,
    /// A node has more than `u32::MAX` edge lines; carries the original id.
    DegreeOverflow(String),
}

impl IntIndex {
    /// Merge per-worker tallies. `universe` makes ids `1..=n` nodes even without edges (Matrix
    /// Market declares its node count).
    pub fn build(
        mut tallies: Vec<IntTally>,
        universe: Option<u64>,
        max_nodes: u64,
    ) -> Result<Self, IndexFault> {
        tallies.iter_mut().for_each(IntTally::flush);
        tallies.sort_by_key(|t| std::cmp::Reverse(t.deg.len()));
        let mut iter = tallies.into_iter();
        let mut base = iter.next().unwrap_or_else(|| IntTally::new(0));
        if let Some(n) = universe
            && (base.deg.len() as u64) < n + 1
        {
            base.deg.resize(n as usize + 1, 0);
        }
        let dense_len = base.deg.len();
        // Ids that went to a map while the flat array was still short belong in the array now.
        let own_sparse = std::mem::take(&mut base.sparse);
        let mut overflow: Option<u64> = None;
        for t in iter {
            // Element-wise sum of the flat arrays, in parallel.
            let bad = base.deg[..t.deg.len()]
                .par_iter_mut()
                .zip(t.deg.par_iter())
                .with_min_len(1 << 16)
                .enumerate()
                .filter_map(|(i, (d, &x))| match d.checked_add(x) {
                    Some(s) if s != u32::MAX => {
                        *d = s;
                        None
                    }
                    _ => {
                        *d = u32::MAX;
                        Some(i as u64)
                    }
                })
                .min();
            overflow = overflow.min(bad).or(bad);
            for (id, x) in t.sparse {
                if id < dense_len as u64 {
                    let d = &mut base.deg[id as usize];
                    *d = d.saturating_add(x);
                } else {
                    let d = base.sparse.entry(id).or_insert(0);
                    *d = d.saturating_add(x);
                }
            }
            base.loops.extend(t.loops);
        }
        for (id, x) in own_sparse {
            if id < dense_len as u64 {
                let d = &mut base.deg[id as usize];
                *d = d.saturating_add(x);
            } else {
                let d = base.sparse.entry(id).or_insert(0);
                *d = d.saturating_add(x);
            }
        }
        if let Some(id) = overflow.or_else(|| {
            base.deg
                .iter()
                .position(|&d| d == u32::MAX)
                .map(|i| i as u64)
        }) {
            return Err(IndexFault::DegreeOverflow(id.to_string()));
        }
        if let Some((id, _)) = base.sparse.iter().find(|(_, d)| **d == u32::MAX) {
            return Err(IndexFault::DegreeOverflow(id.to_string()));
        }
        let mut loops = base.loops;
        loops.par_sort_unstable();
        loops.dedup();
        // Looped ids above the flat array become sparse nodes; those inside it are merged below.
        for &id in loops.iter().filter(|&&id| id >= dense_len as u64) {
            base.sparse.entry(id).or_insert(0);
        }

        // Ranks over the flat array: one sequential pass (it is memory-bound and simple).
        let in_universe = |id: usize| universe.is_some_and(|n| id >= 1 && id as u64 <= n);
        let mut deg = base.deg;
        let mut ids = Vec::new();
        let mut raw_degree = Vec::new();
        let mut li = 0;
        for (id, slot) in deg.iter_mut().enumerate() {
            while li < loops.len() && loops[li] < id as u64 {
                li += 1;
            }
            let looped = li < loops.len() && loops[li] == id as u64;
            let d = *slot;
            if d > 0 || looped || in_universe(id) {
                if ids.len() as u64 >= max_nodes {
                    return Err(IndexFault::TooManyNodes);
                }
                *slot = ids.len() as u32;
                ids.push(id as u64);
                raw_degree.push(d);
            } else {
                *slot = u32::MAX;
            }
        }
        let rank = deg;
        let mut sparse_ids: Vec<(u64, u32)> = base.sparse.into_iter().collect();
        sparse_ids.par_sort_unstable_by_key(|&(id, _)| id);
        if ids.len() as u64 + sparse_ids.len() as u64 > max_nodes {
            return Err(IndexFault::TooManyNodes);
        }
        let mut sparse = FxHashMap::with_capacity_and_hasher(sparse_ids.len(), Default::default());
        for (id, d) in sparse_ids {
            sparse.insert(id, ids.len() as u32);
            ids.push(id);
            raw_degree.push(d);
        }
        let first = match (ids.first(), ids.last()) {
            (Some(&lo), Some(&hi)) if sparse.is_empty() && hi - lo + 1 == ids.len() as u64 => {
                Some(lo)
            }
            _ => None,
        };
        Ok(IntIndex {
            rank: if first.is_some() { Vec::new() } else { rank },
            first,
            sparse,
            ids,
            raw_degree,
        })
    }

    /// Dense index of an id known to be in the input.
    #[inline]
    pub fn get(&self, id: u64) -> u32 {
        if let Some(first) = self.first {
            return (id - first) as u32;
        }
        match self.rank.get(id as usize) {
            Some(&r) => r,
            None => self.sparse[&id],
        }
    }

    /// Dense index of an id, `None` when the input did not hold it.
    #[inline]
    pub(crate) fn try_get(&self, id: u64) -> Option<u32> {
        if let Some(first) = self.first {
            return id
                .checked_sub(first)
                .filter(|&i| i < self.ids.len() as u64)
                .map(|i| i as u32);
        }
        match self.rank.get(id as usize) {
            Some(&r) => (r != u32::MAX).then_some(r),
            None => self.sparse.get(&id).copied(),
        }
    }
}

/// Per-worker tally of text ids.
#[derive(Default)]
pub struct TextTally {
    deg: FxHashMap<Box<[u8]>, u32>,
}

impl TextTally {
    #[inline]
    pub fn edge(&mut self, a: &[u8], b: &[u8]) {
        if a == b {
            self.touch(a, 0);
        } else {
            self.touch(a, 1);
            self.touch(b, 1);
        }
    }

    #[inline]
    fn touch(&mut self, id: &[u8], by: u32) {
        match self.deg.get_mut(id) {
            Some(d) => *d = d.saturating_add(by),
            None => {
                self.deg.insert(id.into(), by);
            }
        }
    }
}

/// Dense index of every text id: bytewise sorted order.
pub struct TextIndex {
    map: FxHashMap<Box<[u8]>, u32>,
    /// Concatenated ids in index order, and where each starts (`n + 1` offsets).
    pub bytes: Vec<u8>,
    pub offsets: Vec<u64>,
    pub raw_degree: Vec<u32>,
}

impl TextIndex {
    pub fn build(tallies: Vec<TextTally>, max_nodes: u64) -> Result<Self, IndexFault> {
        let mut iter = tallies.into_iter();
        let mut base = iter.next().unwrap_or_default();
        for t in iter {
            for (k, x) in t.deg {
                let d = base.deg.entry(k).or_insert(0);
                *d = d.saturating_add(x);
            }
        }
        if base.deg.len() as u64 > max_nodes {
            return Err(IndexFault::TooManyNodes);
        }
        if let Some((k, _)) = base.deg.iter().find(|(_, d)| **d == u32::MAX) {
            return Err(IndexFault::DegreeOverflow(
                String::from_utf8_lossy(k).into_owned(),
            ));
        }
        let mut entries: Vec<(Box<[u8]>, u32)> = base.deg.into_iter().collect();
        entries.par_sort_unstable_by(|x, y| x.0.cmp(&y.0));
        let mut bytes = Vec::with_capacity(entries.iter().map(|e| e.0.len()).sum());
        let mut offsets = Vec::with_capacity(entries.len() + 1);
        let mut raw_degree = Vec::with_capacity(entries.len());
        let mut map = FxHashMap::with_capacity_and_hasher(entries.len(), Default::default());
        offsets.push(0);
        for (i, (k, d)) in entries.into_iter().enumerate() {
            bytes.extend_from_slice(&k);
            offsets.push(bytes.len() as u64);
            raw_degree.push(d);
            map.insert(k, i as u32);
        }
        Ok(TextIndex {
            map,
            bytes,
            offsets,
            raw_degree,
        })
    }

    #[inline]
    pub fn get(&self, id: &[u8]) -> u32 {
        self.map[id]
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ranks_follow_id_order_across_dense_and_sparse() {
        let mut a = IntTally::new(100);
        let mut b = IntTally::new(100);
        a.edge(5, 1_000_000);
        b.edge(3, 5);
        b.edge(42, 42); // self-loop: node without edges
        a.edge(7, 7);
        a.edge(u64::MAX, 3);
        let idx = IntIndex::build(vec![a, b], None, MAX_NODES).unwrap();
        assert_eq!(idx.ids, vec![3, 5, 7, 42, 1_000_000, u64::MAX]);
        assert_eq!(idx.raw_degree, vec![2, 2, 0, 0, 1, 1]);
        for (i, &id) in idx.ids.iter().enumerate() {
            assert_eq!(idx.get(id), i as u32);
        }
    }

    #[test]
    fn gapless_ids_map_by_subtraction_as_the_ranks_would() {
        // Ids 7..=1006 with no gap take the subtraction; one more id past a gap takes the ranks.
        for extra in [None, Some(5_000u64)] {
            let mut a = IntTally::new(1 << 20);
            let mut b = IntTally::new(1 << 20);
            for i in 7..1006u64 {
                if i % 2 == 0 { &mut a } else { &mut b }.edge(i, i + 1);
            }
            if let Some(x) = extra {
                a.edge(x, 7);
            }
            let idx = IntIndex::build(vec![a, b], None, MAX_NODES).unwrap();
            assert_eq!(idx.first.is_some(), extra.is_none());
            for (i, &id) in idx.ids.iter().enumerate() {
                assert_eq!(idx.get(id), i as u32);
                assert_eq!(idx.try_get(id), Some(i as u32));
            }
            for absent in [0, 6, 1007, 4_999, u64::MAX] {
                assert_eq!(idx.try_get(absent), None, "{absent}");
            }
        }
    }

    #[test]
    fn degree_overflow_is_reported_not_wrapped() {
        let mut a = IntTally::new(100);
        a.deg = vec![0; 10];
        a.deg[5] = u32::MAX - 1;
        a.edge(5, 6);
        a.edge(5, 7);
        match IntIndex::build(vec![a], None, MAX_NODES) {
            Err(IndexFault::DegreeOverflow(id)) => assert_eq!(id, "5"),
            _ => panic!("overflow not caught"),
        }
    }

    #[test]
    fn ids_mapped_before_the_flat_array_grew_are_found() {
        // 200,000 starts in the map (the array may not grow that far yet), then enough small ids
        // arrive for the array to cover it; it must be counted and ranked once.
        let mut a = IntTally::new(1 << 30);
        a.edge(200_000, 1);
        a.flush();
        for i in 0..20_000u64 {
            a.edge(i, i + 1);
        }
        a.edge(200_000, 2);
        let mut b = IntTally::new(1 << 30);
        b.edge(200_000, 3);
        let idx = IntIndex::build(vec![a, b], None, MAX_NODES).unwrap();
        let r = idx.get(200_000);
        assert_eq!(idx.ids[r as usize], 200_000);
        assert_eq!(idx.raw_degree[r as usize], 3);
        assert_eq!(idx.ids.len(), 20_002);
    }

    #[test]
    fn universe_keeps_isolated_nodes() {
        let mut a = IntTally::new(1 << 20);
        a.edge(2, 3);
        let idx = IntIndex::build(vec![a], Some(4), MAX_NODES).unwrap();
        assert_eq!(idx.ids, vec![1, 2, 3, 4]);
    }

    #[test]
    fn text_ids_sorted_bytewise() {
        let mut t = TextTally::default();
        t.edge(b"mo", b"al");
        t.edge(b"zed", b"zed");
        let idx = TextIndex::build(vec![t], MAX_NODES).unwrap();
        assert_eq!(idx.bytes, b"almozed");
        assert_eq!(idx.offsets, vec![0, 2, 4, 7]);
        assert_eq!(idx.get(b"zed"), 2);
        assert_eq!(idx.raw_degree, vec![1, 1, 0]);
    }
}
