//! Rounds of all-to-all exchange on timely dataflow: each round every worker hands the engine
//! batches addressed to workers, the engine routes them (within the process or over its own
//! TCP channels) and its progress tracking says when the round's data has all arrived. Nothing
//! here touches a socket or encodes bytes: the engine does both.

use std::cell::RefCell;
use std::collections::BTreeMap;
use std::rc::Rc;
use std::sync::Arc;

use serde::{Deserialize, Serialize};
use timely::container::CapacityContainerBuilder;
use timely::dataflow::channels::pact::Pipeline;
use timely::dataflow::operators::generic::Operator;
use timely::dataflow::operators::{Exchange, Input, Probe};
use timely::dataflow::{InputHandle, ProbeHandle};
use timely::worker::Worker;

use crate::profile::report::Exchanged;
use crate::progress::{Progress, Unit};

/// Items per batch: large enough to amortise the engine's per-message cost, small enough that
/// a round's buffers do not double a worker's memory at once.
const BATCH: usize = 1 << 16;

/// What travels between workers, always in batches.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub(crate) enum Parcel {
    /// Distinct-edge candidates (smaller id, larger id, direction bits 1: small→large,
    /// 2: large→small).
    Edges(Vec<(u64, u64, u8)>),
    /// Nodes with no edge in their part (they still count).
    Nodes(Vec<u64>),
    /// Adjacency entries (node, neighbour) for the neighbour's owner... and the node's.
    Adjacency(Vec<(u64, u64)>),
    /// (node, neighbour, neighbour's degree).
    NeighbourDegrees(Vec<(u64, u64, u32)>),
    /// Where nodes sit at their owners: (neighbour, node, the node's slot).
    Slots(Vec<(u64, u64, u32)>),
    /// Open wedges to check.
    Wedges(Vec<Wedge>),
    /// One triangle at each listed node (by slot at its owner).
    Corners(Vec<u64>),
    /// Component labels offered to nodes: (node's slot at its owner, label).
    Labels(Vec<(u64, u64)>),
    /// Members of components: (label, degree).
    Members(Vec<(u64, u32)>),
    /// Candidate giant components: (size, label).
    Giants(Vec<(u64, u64)>),
    /// Candidate BFS sources: (hash key, id).
    Candidates(Vec<(u64, u64)>),
    /// Search frontiers offered to nodes: (node's slot at its owner, one bit per source).
    Frontier(Vec<(u64, u64)>),
    /// Text ids to check for a shared hash: (hash, the id's bytes).
    Names(Vec<(u64, Vec<u8>)>),
    /// Vectors summed over all workers (sent to every worker).
    Sums(Vec<u128>),
    /// Sampled wedges to check: (first end's slot at its owner, far end's id, target).
    Queries(Vec<(u32, u64, u16)>),
    /// HyperBall counters that changed: (registers, slots at the receiver of the node's
    /// neighbours).
    Counters(Vec<(Vec<u8>, Vec<u32>)>),
    /// A worker's partial figures, for worker 0.
    Partial(Box<super::Partial>),
    /// A worker's answer to "is there more to do?" (true) in a loop of rounds.
    More(bool),
    /// A worker could not read its parts: (worker, class of the failure, message), for all.
    Fault(Vec<(u32, u8, String)>),
}

/// An open wedge apex–middle, apex–far, sent to the middle's owner to check middle–far.
#[derive(Debug, Clone, Copy, Serialize, Deserialize)]
pub(crate) struct Wedge {
    /// The middle end's slot at its owner (the receiver).
    pub(crate) middle: u32,
    /// The far end's id (looked up in the middle's list) and slot at its owner.
    pub(crate) far: u64,
    pub(crate) far_slot: u32,
    /// The apex's id (for its owner) and slot there.
    pub(crate) apex: u64,
    pub(crate) apex_slot: u32,
}

/// One worker's end of the exchange.
pub(crate) struct Rounds<'w> {
    worker: &'w mut Worker,
    input: InputHandle<u64, CapacityContainerBuilder<Vec<(u32, Parcel)>>>,
    probe: ProbeHandle<u64>,
    inbox: Rc<RefCell<BTreeMap<u64, Vec<Parcel>>>>,
    /// Items handed to the engine for other workers.
    pub(crate) sent: u64,
    /// The same, by kind of parcel.
    pub(crate) by_kind: Exchanged,
    /// Told of each stage and round (the reporting worker's; the others' is quiet).
    progress: Arc<dyn Progress + Send + Sync>,
}

impl<'w> Rounds<'w> {
    pub(crate) fn new(worker: &'w mut Worker, progress: Arc<dyn Progress + Send + Sync>) -> Self {
        let mut input = InputHandle::new();
        let inbox: Rc<RefCell<BTreeMap<u64, Vec<Parcel>>>> = Rc::new(RefCell::new(BTreeMap::new()));
        let sink = inbox.clone();
        let probe = worker.dataflow(|scope| {
            scope
                .input_from(&mut input)
                .container::<Vec<_>>()
                .exchange(|(dest, _): &(u32, Parcel)| *dest as u64)
                // Moves what arrives into the inbox and passes nothing on: the probe after it
                // passes a round only once every parcel of the round is in the inbox.
                .unary::<CapacityContainerBuilder<Vec<()>>, _, _, _>(
                    Pipeline,
                    "inbox",
                    move |_, _| {
                        move |input, _output| {
                            // A faster worker's next round may arrive before this round ends:
                            // keep parcels by round.
                            input.for_each(|cap, data| {
                                let round = cap.least().copied().unwrap_or_default();
                                sink.borrow_mut()
                                    .entry(round)
                                    .or_default()
                                    .extend(data.drain(..).map(|(_, p)| p));
                            });
                        }
                    },
                )
                .probe()
                .0
        });
        Rounds {
            worker,
            input,
            probe,
            inbox,
            sent: 0,
            by_kind: Exchanged::default(),
            progress,
        }
    }

    /// A new stage of the run starts (shown by the reporting worker, a round at a time).
    pub(crate) fn stage(&self, name: &str) {
        self.progress.stage(name, None, Unit::Items);
    }

    /// The run's stages are over.
    pub(crate) fn finish(&self) {
        self.progress.finish();
    }

    pub(crate) fn index(&self) -> usize {
        self.worker.index()
    }

    pub(crate) fn peers(&self) -> usize {
        self.worker.peers()
    }

    /// Send `items` to each worker (`out[w]` for worker w) wrapped by `wrap`, end the round and
    /// return every parcel addressed to this worker in it.
    pub(crate) fn round<T>(
        &mut self,
        out: Vec<Vec<T>>,
        wrap: impl Fn(Vec<T>) -> Parcel,
    ) -> Vec<Parcel> {
        for (dest, items) in out.into_iter().enumerate() {
            let remote = dest != self.worker.index();
            let count = items.len() as u64;
            if remote {
                self.sent += count;
            }
            let mut first = true;
            // Each item moves once, into a batch of its own size: splitting the vector in
            // place would copy its tail again and again, and keep its whole capacity alive in
            // the first batch.
            let mut rest = items.into_iter();
            loop {
                let batch: Vec<T> = rest.by_ref().take(BATCH).collect();
                if batch.is_empty() {
                    break;
                }
                let parcel = wrap(batch);
                if remote && first {
                    tally(&mut self.by_kind, &parcel, count);
                    first = false;
                }
                self.input.send((dest as u32, parcel));
            }
        }
        // Fault injection for the tests of a process dying mid-run: PLUMB_SPREAD_CRASH=W:R
        // makes worker W abort at the start of round R's wait, as a killed process would.
        if let Ok(v) = std::env::var("PLUMB_SPREAD_CRASH")
            && let Some((w, r)) = v.split_once(':')
            && w.parse() == Ok(self.worker.index())
            && r.parse() == Ok(*self.input.time())
        {
            std::process::abort();
        }
        let round = *self.input.time();
        self.input.advance_to(round + 1);
        while self.probe.less_than(self.input.time()) {
            // Park (briefly) when idle: a busy step would take the core from another process
            // of the run on the same machine, which is what this round waits for.
            self.worker
                .step_or_park(Some(std::time::Duration::from_millis(1)));
        }
        self.progress.advance(1);
        self.inbox.borrow_mut().remove(&round).unwrap_or_default()
    }

    /// Every worker's vector, summed element by element on every worker.
    pub(crate) fn all_sum(&mut self, mine: Vec<u128>) -> Vec<u128> {
        let peers = self.peers();
        let got = self.round((0..peers).map(|_| mine.clone()).collect(), Parcel::Sums);
        let mut total = vec![0u128; mine.len()];
        for p in got {
            if let Parcel::Sums(v) = p {
                for (a, b) in total.iter_mut().zip(v) {
                    *a += b;
                }
            }
        }
        total
    }

    /// Every worker says whether it has more to do; true when any has.
    pub(crate) fn any(&mut self, more: bool) -> bool {
        let peers = self.peers();
        let got = self.round((0..peers).map(|_| vec![more]).collect(), |v| {
            Parcel::More(v[0])
        });
        got.iter().any(|p| matches!(p, Parcel::More(true)))
    }
}

/// Count `items` of `p`'s kind in `by`.
fn tally(by: &mut Exchanged, p: &Parcel, items: u64) {
    let slot = match p {
        Parcel::Edges(_) => &mut by.edges,
        Parcel::Adjacency(_) => &mut by.adjacency,
        Parcel::NeighbourDegrees(_) | Parcel::Slots(_) => &mut by.degrees,
        Parcel::Labels(_) | Parcel::Members(_) => &mut by.labels,
        Parcel::Wedges(_) | Parcel::Corners(_) | Parcel::Queries(_) => &mut by.wedges,
        Parcel::Counters(_) => &mut by.counters,
        Parcel::Frontier(_) => &mut by.frontier,
        _ => &mut by.other,
    };
    *slot += items;
}
