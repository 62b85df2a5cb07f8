//! The nodes a worker owns and their adjacency, and which worker owns a node: shared by every
//! round of the distributed profile.

/// The worker that owns node `id` among `peers` (a fixed mix, so every process agrees).
pub(crate) fn owner(id: u64, peers: usize) -> usize {
    (mix(id) % peers as u64) as usize
}

pub(crate) fn mix(mut x: u64) -> u64 {
    // splitmix64's finaliser (Steele, Lea & Flood 2014): consecutive ids spread evenly.
    x = (x ^ (x >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
    x = (x ^ (x >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
    x ^ (x >> 31)
}

/// The adjacency of the nodes a worker owns, ids ascending.
pub(crate) struct Owned {
    pub(crate) nodes: Vec<u64>,
    pub(crate) offsets: Vec<usize>,
    pub(crate) targets: Vec<u64>,
    /// The degree of `targets[i]`.
    pub(crate) target_degrees: Vec<u32>,
    /// Where `targets[i]` sits among its owner's nodes.
    pub(crate) target_slots: Vec<u32>,
}

impl Owned {
    pub(crate) fn degree(&self, i: usize) -> u32 {
        (self.offsets[i + 1] - self.offsets[i]) as u32
    }

    pub(crate) fn neighbours(&self, i: usize) -> &[u64] {
        &self.targets[self.offsets[i]..self.offsets[i + 1]]
    }

    pub(crate) fn index_of(&self, id: u64) -> Option<usize> {
        self.nodes.binary_search(&id).ok()
    }
}
