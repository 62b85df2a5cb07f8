//! Every fast exact algorithm against its naive twin on random graphs.

use plumb::exact::bfs::{Bfs, UNREACHED, naive_distances};
use plumb::exact::components::{components, induced};
use plumb::exact::diameter;
use plumb::exact::distances;
use plumb::exact::triangles;
use plumb::store::csr::Csr;
use proptest::prelude::*;

fn graphs() -> impl Strategy<Value = Csr> {
    (2usize..90).prop_flat_map(|n| {
        prop::collection::vec((0..n as u32, 0..n as u32), 0..n * 3)
            .prop_map(move |e| Csr::from_edges(n, &e))
    })
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(300))]

    #[test]
    fn triangles_match_naive(g in graphs()) {
        let fast = triangles::count(&g);
        prop_assert_eq!(&fast, &triangles::naive(&g));
        prop_assert_eq!(triangles::total(&g), fast.total);
    }

    #[test]
    fn bfs_matches_naive(g in graphs(), s in 0u32..1000) {
        let s = s % g.node_count() as u32;
        let mut b = Bfs::new(g.node_count());
        b.run(&g, s);
        let want = naive_distances(&g, s);
        prop_assert_eq!(b.dist(), &want[..]);
        prop_assert_eq!(b.reached(), want.iter().filter(|&&d| d != UNREACHED).count() as u64);
    }

    #[test]
    fn components_match_bfs(g in graphs()) {
        let c = components(&g);
        for v in 0..g.node_count() as u32 {
            let d = naive_distances(&g, v);
            let smallest = (0..g.node_count() as u32).find(|&u| d[u as usize] != UNREACHED).unwrap();
            prop_assert_eq!(c.label[v as usize], smallest);
        }
    }

    #[test]
    fn diameter_and_all_pairs_match_per_source_bfs(g in graphs()) {
        let c = components(&g);
        let sub = induced(&g, &c.giant_nodes());
        let ap = distances::all_pairs(&sub);
        let mut ecc = Vec::new();
        for s in 0..sub.node_count() as u32 {
            ecc.push(*naive_distances(&sub, s).iter().max().unwrap());
        }
        prop_assert_eq!(&ap.eccentricity, &ecc);
        let d = diameter::diameter(&sub);
        let want = *ecc.iter().max().unwrap();
        prop_assert_eq!((d.lower, d.upper), (want, want));
    }
}
