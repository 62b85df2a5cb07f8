//! One worker's share of the distributed profile: read its parts, then rounds of exchange that
//! gather each node's adjacency at its owner, and the figures computed from there. Every id is
//! the original integer id; a node belongs to the worker its id hashes to.

use std::path::{Path, PathBuf};

use super::exchange::{Parcel, Rounds, Wedge};
use super::owned::{Owned, mix, owner};
use super::sampling::{self, Aim, Target};
use super::{ComponentTally, Partial, SpreadClustering, SpreadDistances, SpreadOptions, ball};
use crate::error::{Error, ErrorClass, Result};
use crate::estimate::hyperball::BallOptions;
use crate::exact::clustering::ClusteringParts;
use crate::progress::Quiet;
use crate::store::graph::{Graph, NodeIds};
use crate::store::intake::IdKind;
use crate::store::load::LoadOptions;

/// Open wedges a worker sends in one round of the triangle count: bounds the round's buffers
/// (24 bytes a wedge, once sent and once received).
const WEDGES_PER_ROUND: usize = 1 << 23;

/// Read this worker's parts: the graph they make (with each edge's directions, for the
/// cleaning counts), or `None` when it has no parts or they hold no lines. `text` reads every
/// id as text.
fn read_share(
    shown: &Path,
    mine: &[PathBuf],
    load: &LoadOptions,
    text: bool,
) -> Result<Option<Graph>> {
    if mine.is_empty() {
        return Ok(None);
    }
    let opts = LoadOptions {
        directed: true,
        ..load.clone()
    };
    match crate::store::load::load_paths(shown, mine, &opts, &Quiet, text) {
        Ok(g) => Ok(Some(g)),
        // Parts with no lines at all add nothing.
        Err(Error::Empty { .. }) => Ok(None),
        Err(e) => Err(e),
    }
}

/// Every worker says whether its step failed; everyone learns of a failure before any other
/// round, so no worker waits on one that quit. A worker's own failure comes first.
fn no_faults<T>(x: &mut Rounds, mine: Result<T>) -> Result<T> {
    let (me, peers) = (x.index(), x.peers());
    let fault = mine
        .as_ref()
        .err()
        .map(|e| (me as u32, class_code(e.class()), e.to_string()));
    let got = x.round(
        (0..peers)
            .map(|_| fault.iter().cloned().collect())
            .collect(),
        Parcel::Fault,
    );
    let mine = mine?;
    let first = got
        .into_iter()
        .flat_map(|p| match p {
            Parcel::Fault(v) => v,
            _ => Vec::new(),
        })
        .min_by_key(|f| f.0);
    if let Some((worker, class, problem)) = first {
        return Err(Error::Remote {
            problem: format!("worker {worker} of the run failed: {problem}"),
            class: class_of(class),
        });
    }
    Ok(mine)
}

/// The id every worker knows a node by: the integer as written, or for text ids a 64-bit hash
/// of the bytes (XXH3); [`distinct_hashes`] checks that no two ids share one.
fn global_ids(ids: &NodeIds, n: usize) -> Vec<u64> {
    // Fault injection for the test of a clash: PLUMB_SPREAD_NARROW_HASH keeps 4 bits of each.
    let mask = if std::env::var_os("PLUMB_SPREAD_NARROW_HASH").is_some() {
        0xF
    } else {
        u64::MAX
    };
    match ids {
        NodeIds::Range { first, .. } => (0..n as u64).map(|u| first + u).collect(),
        NodeIds::Ints(v) => v.to_vec(),
        NodeIds::Text { offsets, bytes } => (0..n)
            .map(|u| {
                let id = &bytes[offsets[u] as usize..offsets[u + 1] as usize];
                xxhash_rust::xxh3::xxh3_64(id) & mask
            })
            .collect(),
    }
}

/// Round: each text id to the owner of its hash, which checks that no two distinct ids share
/// one (about n²/2⁶⁵ pairs are expected to: a run with one stops rather than merge two nodes).
fn distinct_hashes(x: &mut Rounds, g: Option<&Graph>, keys: &[u64]) -> Result<()> {
    let peers = x.peers();
    let mut out: Vec<Vec<(u64, Vec<u8>)>> = vec![Vec::new(); peers];
    if let Some(NodeIds::Text { offsets, bytes }) = g.map(|g| &g.ids) {
        for (u, &k) in keys.iter().enumerate() {
            let name = bytes[offsets[u] as usize..offsets[u + 1] as usize].to_vec();
            out[owner(k, peers)].push((k, name));
        }
    }
    let mut got: Vec<(u64, Vec<u8>)> = Vec::new();
    for p in x.round(out, Parcel::Names) {
        if let Parcel::Names(v) = p {
            got.extend(v);
        }
    }
    got.sort_unstable();
    got.dedup();
    let clash = got.windows(2).find(|w| w[0].0 == w[1].0).map(|w| {
        format!(
            "the text ids {:?} and {:?} have the same 64-bit hash, which a distributed profile \
             uses as their name; profile this graph on one machine",
            String::from_utf8_lossy(&w[0].1),
            String::from_utf8_lossy(&w[1].1)
        )
    });
    no_faults(
        x,
        match clash {
            Some(problem) => Err(Error::Parameters { problem }),
            None => Ok(()),
        },
    )
}

/// Run this worker's share; worker 0 returns the merged partial figures.
pub(crate) fn run(
    x: &mut Rounds,
    shown: &Path,
    parts: &[PathBuf],
    load: &LoadOptions,
    want: &SpreadOptions,
) -> Result<Option<Partial>> {
    let (me, peers) = (x.index(), x.peers());
    let mine: Vec<PathBuf> = parts
        .iter()
        .enumerate()
        .filter(|(i, _)| i % peers == me)
        .map(|(_, p)| p.clone())
        .collect();
    let started = std::time::Instant::now();
    x.stage("reading parts");
    let mut share = no_faults(x, read_share(shown, &mine, load, false))?;
    // Round: one text id anywhere makes every id text, kept as written ("007" is not "7"),
    // as on one machine; shares read as integers are read again.
    let is_text = |s: &Option<Graph>| s.as_ref().is_some_and(|g| g.ids.kind() == IdKind::Text);
    let text = x.all_sum(vec![u128::from(is_text(&share))])[0] > 0;
    if text {
        let again = if share.is_some() && !is_text(&share) {
            read_share(shown, &mine, load, true)
        } else {
            Ok(share.take())
        };
        share = no_faults(x, again)?;
    }
    let keys = share
        .as_ref()
        .map_or_else(Vec::new, |g| global_ids(&g.ids, g.node_count()));
    if text {
        distinct_hashes(x, share.as_ref(), &keys)?;
    }
    let mut partial = Partial {
        read_seconds: started.elapsed().as_secs_f64(),
        ..Default::default()
    };
    let clock = std::time::Instant::now();

    x.stage("gathering edges");
    // Round: every distinct edge to the worker its pair hashes to, with its directions; nodes
    // without edges to their owners.
    let mut edges_out: Vec<Vec<(u64, u64, u8)>> = vec![Vec::new(); peers];
    let mut lone_out: Vec<Vec<u64>> = vec![Vec::new(); peers];
    partial.text_ids = text;
    if let Some(g) = &share {
        partial.add_intake(&g.intake, &mine);
        let dirs = g.directions.as_ref();
        let offsets = g.csr.offsets();
        for u in 0..g.node_count() {
            let a = keys[u];
            let (s, e) = (offsets[u] as usize, offsets[u + 1] as usize);
            if s == e {
                lone_out[owner(a, peers)].push(a);
            }
            for k in s..e {
                let b = keys[g.csr.targets()[k] as usize];
                if a < b {
                    // Entry flags: 1 for u → v as written, 2 for v → u.
                    let f = dirs.map_or(3, |d| d[k]);
                    edges_out[owner(mix(a) ^ b, peers)].push((a, b, f));
                }
            }
        }
    }
    drop(share);
    let lone_in = x.round(lone_out, Parcel::Nodes);
    let mut edges: Vec<(u64, u64, u8)> = Vec::new();
    for p in x.round(edges_out, Parcel::Edges) {
        if let Parcel::Edges(v) = p {
            edges.extend(v);
        }
    }
    edges.sort_unstable_by_key(|e| (e.0, e.1));
    let mut distinct: Vec<(u64, u64)> = Vec::with_capacity(edges.len());
    let mut flags: u8 = 0;
    for (i, &(a, b, f)) in edges.iter().enumerate() {
        flags |= f;
        if edges.get(i + 1).is_none_or(|n| (n.0, n.1) != (a, b)) {
            distinct.push((a, b));
            partial.directed_pairs += flags.count_ones() as u64;
            flags = 0;
        }
    }
    drop(edges);
    partial.edges = distinct.len() as u64;

    // Round: each edge to both ends' owners, which then hold their nodes' whole lists.
    let mut adj_out: Vec<Vec<(u64, u64)>> = vec![Vec::new(); peers];
    for &(a, b) in &distinct {
        adj_out[owner(a, peers)].push((a, b));
        adj_out[owner(b, peers)].push((b, a));
    }
    drop(distinct);
    let mut adj: Vec<(u64, u64)> = Vec::new();
    for p in x.round(adj_out, Parcel::Adjacency) {
        if let Parcel::Adjacency(v) = p {
            adj.extend(v);
        }
    }
    for p in lone_in {
        if let Parcel::Nodes(v) = p {
            // A node without edges in one part may have some in another: (id, id) marks it
            // and is dropped from its list below.
            adj.extend(v.into_iter().map(|a| (a, a)));
        }
    }
    adj.sort_unstable();
    adj.dedup();
    let mut owned = Owned {
        nodes: Vec::new(),
        offsets: vec![0],
        targets: Vec::with_capacity(adj.len()),
        target_degrees: Vec::new(),
        target_slots: Vec::new(),
    };
    for (i, &(a, b)) in adj.iter().enumerate() {
        if a != b {
            owned.targets.push(b);
        }
        if adj.get(i + 1).is_none_or(|n| n.0 != a) {
            owned.nodes.push(a);
            owned.offsets.push(owned.targets.len());
        }
    }
    drop(adj);

    // Round: each node tells its neighbours' owners its degree.
    let mut deg_out: Vec<Vec<(u64, u64, u32)>> = vec![Vec::new(); peers];
    for i in 0..owned.nodes.len() {
        let (a, d) = (owned.nodes[i], owned.degree(i));
        for &b in owned.neighbours(i) {
            deg_out[owner(b, peers)].push((b, a, d));
        }
    }
    let mut nd: Vec<(u64, u64, u32)> = Vec::new();
    for p in x.round(deg_out, Parcel::NeighbourDegrees) {
        if let Parcel::NeighbourDegrees(v) = p {
            nd.extend(v);
        }
    }
    // Sorted by (node, neighbour), the messages line up with the sorted lists.
    nd.sort_unstable_by_key(|e| (e.0, e.1));
    // Round: each node tells its neighbours' owners where it sits here, so later rounds
    // address it by slot instead of looking its id up once per message.
    let mut slot_out: Vec<Vec<(u64, u64, u32)>> = vec![Vec::new(); peers];
    let mut i = 0;
    for (k, &(v, u, _)) in nd.iter().enumerate() {
        while owned.offsets[i + 1] <= k {
            i += 1;
        }
        slot_out[owner(u, peers)].push((u, v, i as u32));
    }
    owned.target_degrees = nd.into_iter().map(|e| e.2).collect();
    let mut slots: Vec<(u64, u64, u32)> = Vec::new();
    for p in x.round(slot_out, Parcel::Slots) {
        if let Parcel::Slots(v) = p {
            slots.extend(v);
        }
    }
    slots.sort_unstable_by_key(|e| (e.0, e.1));
    owned.target_slots = slots.into_iter().map(|e| e.2).collect();
    for i in 0..owned.nodes.len() {
        let d = owned.degree(i) as u128;
        let around: u128 = owned.target_degrees[owned.offsets[i]..owned.offsets[i + 1]]
            .iter()
            .map(|&k| k as u128)
            .sum();
        partial.nodes += 1;
        let slot = d as usize;
        if partial.histogram.len() <= slot {
            partial.histogram.resize(slot + 1, 0);
        }
        partial.histogram[slot] += 1;
        partial.sums.0 += d * around;
        partial.sums.1 += d * d;
        partial.sums.2 += d * d * d;
    }
    partial.degree_seconds = clock.elapsed().as_secs_f64();
    let clock = std::time::Instant::now();

    x.stage("components");
    let label = components(x, &owned, &mut partial);
    partial.component_seconds = clock.elapsed().as_secs_f64();

    // The giant component, agreed on by every worker, and whether it is the whole graph.
    let giant = giant_of(x, &partial);
    let in_giant: Vec<bool> = label
        .iter()
        .map(|&l| giant.is_some_and(|g| g.1 == l))
        .collect();
    let whole = x.all_sum(vec![partial.nodes as u128])[0] as u64;
    let connected = giant.is_none_or(|g| g.0 == whole);
    partial.giant_nodes = giant.map_or(0, |g| g.0);
    for (i, _) in in_giant.iter().enumerate().filter(|g| *g.1) {
        let d = owned.degree(i) as u128;
        partial.giant_squares += d * d;
    }
    let clock = std::time::Instant::now();
    match &want.distances {
        SpreadDistances::Sources(k) if *k > 0 && giant.is_some() => {
            x.stage("distances");
            distances(x, &owned, &in_giant, *k, want.seed, &mut partial);
        }
        SpreadDistances::Ball(o) => {
            let o = BallOptions {
                level: want.level,
                seed: want.seed,
                ..*o
            };
            x.stage("HyperBall");
            let (runs, rounds) = ball::run(x, &owned, &in_giant, &o);
            partial.ball_runs = runs;
            partial.ball_rounds = rounds;
        }
        _ => {}
    }
    partial.distance_seconds = clock.elapsed().as_secs_f64();
    let clock = std::time::Instant::now();
    match &want.clustering {
        SpreadClustering::Exact => {
            x.stage("triangles");
            triangles(x, &owned, &in_giant, &mut partial);
        }
        SpreadClustering::Sampled { margin, bin_margin } => {
            x.stage("sampled clustering");
            let mut targets = vec![
                Target {
                    aim: Aim::Wedges,
                    giant_only: false,
                },
                Target {
                    aim: Aim::Nodes,
                    giant_only: false,
                },
            ];
            // Every bin a degree can fall in (empty ones are dropped from the report).
            targets.extend((0..31).map(|b| Target {
                aim: Aim::Bin(b),
                giant_only: false,
            }));
            if !connected {
                targets.extend([Aim::Wedges, Aim::Nodes].map(|aim| Target {
                    aim,
                    giant_only: true,
                }));
            }
            partial.sampled = Some(sampling::run(
                x, &owned, &in_giant, targets, margin, bin_margin, want.level, want.seed,
            ));
        }
        SpreadClustering::Off => {}
    }
    partial.triangle_seconds = clock.elapsed().as_secs_f64();
    x.finish();
    partial.exchanged = x.sent;
    partial.by_kind = x.by_kind;

    // Round: every partial to worker 0.
    let mut out: Vec<Vec<Partial>> = (0..peers).map(|_| Vec::new()).collect();
    out[0].push(partial);
    let got = x.round(out, |mut v| Parcel::Partial(Box::new(v.remove(0))));
    if me != 0 {
        return Ok(None);
    }
    let mut all = Partial::default();
    let mut first = true;
    for p in got {
        if let Parcel::Partial(p) = p {
            if first {
                all = *p;
                first = false;
            } else {
                all.merge(*p);
            }
        }
    }
    Ok(Some(all))
}

/// Connected components by label propagation: every node takes the smallest id it hears of
/// and passes a new label on to its neighbours, until no label changes anywhere (as many
/// rounds as the longest distance from a component's smallest id, plus one). Then each
/// component's owner (of its label) tallies its nodes and edges.
fn components(x: &mut Rounds, owned: &Owned, partial: &mut Partial) -> Vec<u64> {
    let peers = x.peers();
    let n = owned.nodes.len();
    let mut label: Vec<u64> = (0..n)
        .map(|i| {
            owned
                .neighbours(i)
                .iter()
                .copied()
                .fold(owned.nodes[i], u64::min)
        })
        .collect();
    let mut changed: Vec<bool> = vec![true; n];
    loop {
        let mut out: Vec<Vec<(u64, u64)>> = vec![Vec::new(); peers];
        let mut any = false;
        for i in 0..n {
            if !std::mem::take(&mut changed[i]) {
                continue;
            }
            for k in owned.offsets[i]..owned.offsets[i + 1] {
                let b = owned.targets[k];
                if label[i] < b {
                    out[owner(b, peers)].push((owned.target_slots[k] as u64, label[i]));
                    any = true;
                }
            }
        }
        if !x.any(any) {
            break;
        }
        partial.label_rounds += 1;
        for p in x.round(out, Parcel::Labels) {
            if let Parcel::Labels(v) = p {
                for (slot, l) in v {
                    let i = slot as usize;
                    if l < label[i] {
                        label[i] = l;
                        changed[i] = true;
                    }
                }
            }
        }
    }
    let mut out: Vec<Vec<(u64, u32)>> = vec![Vec::new(); peers];
    for i in 0..n {
        out[owner(label[i], peers)].push((label[i], owned.degree(i)));
    }
    let mut members: Vec<(u64, u32)> = Vec::new();
    for p in x.round(out, Parcel::Members) {
        if let Parcel::Members(v) = p {
            members.extend(v);
        }
    }
    members.sort_unstable_by_key(|m| m.0);
    let mut tally = ComponentTally::default();
    for run in members.chunk_by(|a, b| a.0 == b.0) {
        let size = run.len() as u64;
        let ends: u64 = run.iter().map(|m| m.1 as u64).sum();
        tally.add(run[0].0, size, ends / 2);
    }
    partial.components = tally;
    label
}

/// The giant component, (size, label), as every worker agrees: each offers its largest
/// component and everyone takes the largest (the smallest label on a tie, as the
/// single-machine profile).
fn giant_of(x: &mut Rounds, partial: &Partial) -> Option<(u64, u64)> {
    let peers = x.peers();
    let offer = partial.components.giant.map(|(s, l, _)| (s, l));
    let got = x.round(
        (0..peers).map(|_| offer.into_iter().collect()).collect(),
        Parcel::Giants,
    );
    got.into_iter()
        .flat_map(|p| match p {
            Parcel::Giants(v) => v,
            _ => Vec::new(),
        })
        .max_by_key(|&(s, l)| (s, std::cmp::Reverse(l)))
}

/// Distances from sampled sources in the giant component: every worker offers its largest
/// component and everyone takes the largest (the smallest label on a tie, as the single-machine
/// profile); the sources are the `k` giant nodes of smallest seeded hash (a uniform sample
/// without replacement), searched 64 at a time: one bit per source in each node's word, a
/// frontier round per level. Each source's count of nodes at each distance is exact, so the
/// single-machine estimator turns them into the same figures and intervals.
fn distances(
    x: &mut Rounds,
    owned: &Owned,
    in_giant: &[bool],
    k: usize,
    seed: u64,
    partial: &mut Partial,
) {
    let peers = x.peers();
    let n = owned.nodes.len();
    let key = |id: u64| mix(id ^ mix(seed));
    let mut mine: Vec<(u64, u64)> = (0..n)
        .filter(|&i| in_giant[i])
        .map(|i| (key(owned.nodes[i]), owned.nodes[i]))
        .collect();
    mine.sort_unstable();
    mine.truncate(k);
    let got = x.round(
        (0..peers).map(|_| mine.clone()).collect(),
        Parcel::Candidates,
    );
    let mut all: Vec<(u64, u64)> = got
        .into_iter()
        .flat_map(|p| match p {
            Parcel::Candidates(v) => v,
            _ => Vec::new(),
        })
        .collect();
    all.sort_unstable();
    all.truncate(k);
    let sources: Vec<u64> = all.into_iter().map(|c| c.1).collect();
    partial.sources = sources.len() as u64;
    let mut per_source: Vec<Vec<u64>> = vec![Vec::new(); sources.len()];
    for (b, batch) in sources.chunks(64).enumerate() {
        let mut seen: Vec<u64> = vec![0; n];
        let mut frontier: Vec<u64> = vec![0; n];
        for (bit, &s) in batch.iter().enumerate() {
            if let Some(i) = owned.index_of(s) {
                seen[i] |= 1 << bit;
                frontier[i] |= 1 << bit;
            }
        }
        let mut level = 0usize;
        loop {
            let mut out: Vec<Vec<(u64, u64)>> = vec![Vec::new(); peers];
            for (i, f) in frontier.iter_mut().enumerate() {
                let f = std::mem::take(f);
                if f != 0 {
                    for k in owned.offsets[i]..owned.offsets[i + 1] {
                        let v = owned.targets[k];
                        out[owner(v, peers)].push((owned.target_slots[k] as u64, f));
                    }
                }
            }
            let mut next: Vec<u64> = vec![0; n];
            for p in x.round(out, Parcel::Frontier) {
                if let Parcel::Frontier(v) = p {
                    for (slot, f) in v {
                        let i = slot as usize;
                        next[i] |= f & !seen[i];
                    }
                }
            }
            level += 1;
            let mut any = false;
            for i in 0..n {
                let mut w = next[i];
                if w == 0 {
                    continue;
                }
                any = true;
                seen[i] |= w;
                while w != 0 {
                    let bit = w.trailing_zeros() as usize;
                    let counts = &mut per_source[b * 64 + bit];
                    if counts.len() < level {
                        counts.resize(level, 0);
                    }
                    counts[level - 1] += 1;
                    w &= w - 1;
                }
            }
            frontier = next;
            partial.bfs_rounds += 1;
            if !x.any(any) {
                break;
            }
        }
    }
    partial.per_source = per_source;
}

/// Exact triangles: each edge points from the end of lower (degree, id) to the higher; every
/// pair of a node's out-neighbours is an open wedge, sent to the owner of its lower end, which
/// checks the closing edge in its list. Each triangle is found once, at its lowest corner, and
/// its three corners are credited. Wedges go out in bounded rounds until none is left.
fn triangles(x: &mut Rounds, owned: &Owned, in_giant: &[bool], partial: &mut Partial) {
    let peers = x.peers();
    let n = owned.nodes.len();
    let mut corners: Vec<u64> = vec![0; n];
    let key = |d: u32, id: u64| (d, id);
    let mut next = 0usize;
    // (degree, id, slot at the owner) of a node's out-neighbours.
    let mut out_list: Vec<(u32, u64, u32)> = Vec::new();
    loop {
        let mut out: Vec<Vec<Wedge>> = vec![Vec::new(); peers];
        let mut sent = 0usize;
        while next < n && sent < WEDGES_PER_ROUND {
            let (a, da) = (owned.nodes[next], owned.degree(next));
            out_list.clear();
            let (s, e) = (owned.offsets[next], owned.offsets[next + 1]);
            for k in s..e {
                let (b, db) = (owned.targets[k], owned.target_degrees[k]);
                if key(db, b) > key(da, a) {
                    out_list.push((db, b, owned.target_slots[k]));
                }
            }
            out_list.sort_unstable();
            for (i, &(_, b, sb)) in out_list.iter().enumerate() {
                for &(_, c, sc) in &out_list[i + 1..] {
                    out[owner(b, peers)].push(Wedge {
                        middle: sb,
                        far: c,
                        far_slot: sc,
                        apex: a,
                        apex_slot: next as u32,
                    });
                }
            }
            sent += out_list.len() * out_list.len().saturating_sub(1) / 2;
            next += 1;
        }
        let more = next < n;
        let mut credit: Vec<Vec<u64>> = vec![Vec::new(); peers];
        for p in x.round(out, Parcel::Wedges) {
            if let Parcel::Wedges(v) = p {
                for w in v {
                    let i = w.middle as usize;
                    if owned.neighbours(i).binary_search(&w.far).is_ok() {
                        corners[i] += 1;
                        credit[owner(w.apex, peers)].push(w.apex_slot as u64);
                        credit[owner(w.far, peers)].push(w.far_slot as u64);
                    }
                }
            }
        }
        for p in x.round(credit, Parcel::Corners) {
            if let Parcel::Corners(v) = p {
                for slot in v {
                    corners[slot as usize] += 1;
                }
            }
        }
        partial.wedge_rounds += 1;
        if !x.any(more) {
            break;
        }
    }
    let mut parts = ClusteringParts::default();
    let mut giant = ClusteringParts::default();
    for (i, &t) in corners.iter().enumerate() {
        let d = owned.degree(i);
        // As `exact::clustering::local_from`, to the last digit.
        let df = d as f64;
        let c = if df < 2.0 {
            0.0
        } else {
            2.0 * t as f64 / (df * (df - 1.0))
        };
        parts.add(d, c);
        partial.corner_sum += t;
        if in_giant[i] {
            giant.add(d, c);
            partial.giant_corners += t;
        }
    }
    partial.clustering = Some(parts);
    partial.giant_clustering = Some(giant);
}

fn class_code(c: ErrorClass) -> u8 {
    match c {
        ErrorClass::BadInput => 0,
        ErrorClass::Io => 1,
        ErrorClass::Budget => 2,
        ErrorClass::Usage => 3,
    }
}

fn class_of(code: u8) -> ErrorClass {
    match code {
        1 => ErrorClass::Io,
        2 => ErrorClass::Budget,
        3 => ErrorClass::Usage,
        _ => ErrorClass::BadInput,
    }
}
