"""Directed exports (``directed=True``) checked against networkx's directed functions
(Hagberg, Schult and Swart 2008) on two seeded directed graphs held in this test, and Fagiolo's
clustering (Fagiolo 2007, "Clustering in complex directed networks", Phys. Rev. E 76, 026107)
recomputed from the adjacency matrix with numpy.

- a G(n, p) digraph (Erdős–Rényi, directed), networkx's ``gnp_random_graph(..., directed=True)``;
- a scale-free digraph (Bollobás, Borgs, Chayes and Riordan 2003, "Directed scale-free
  graphs"), networkx's ``scale_free_graph``: it has repeated edges and self-loops, written to the
  file as they are, so the test also checks that they are counted and dropped.
"""

import math

import networkx as nx
import numpy as np
import pytest

import plumb


def write(tmp_path, name, edges):
    path = tmp_path / name
    with path.open("w") as f:
        f.write("# follower followed\n")
        for u, v in edges:
            f.write(f"{u} {v}\n")
    return path


def graphs():
    g1 = nx.gnp_random_graph(300, 0.02, seed=11, directed=True)
    g2 = nx.scale_free_graph(400, seed=5)
    return {"gnp": list(g1.edges()), "scale-free": list(g2.edges())}


def fagiolo_from_matrix(d):
    nodes = sorted(d.nodes())
    a = nx.to_numpy_array(d, nodelist=nodes, dtype=np.int64)
    s = a + a.T
    t = np.diag(s @ s @ s) // 2
    total = a.sum(0) + a.sum(1)
    both = (a * a.T).sum(1)
    den = total * (total - 1) - 2 * both
    return t.sum() / den.sum()


@pytest.mark.parametrize("which", ["gnp", "scale-free"])
def test_directed_figures_match_networkx(which, tmp_path):
    edges = graphs()[which]
    path = write(tmp_path, f"{which}.txt", edges)
    d = nx.DiGraph(edges)
    loops = sum(1 for u, v in edges if u == v)
    d.remove_edges_from(nx.selfloop_edges(d))
    d.remove_nodes_from([v for v in list(d.nodes()) if d.degree(v) == 0])

    doc = plumb.profile(path, directed=True, clustering="exact", figures="clustering")
    p = doc["profile"]
    i, k = p["intake"], p["directed"]
    assert i["directed"] is True
    assert i["self_loops"] == loops
    assert i["edge_lines"] == len(edges)
    assert k["directed_edges"] == d.number_of_edges()
    assert math.isclose(k["reciprocity"], nx.overall_reciprocity(d), rel_tol=1e-12)
    scc = [len(c) for c in nx.strongly_connected_components(d)]
    wcc = [len(c) for c in nx.weakly_connected_components(d)]
    # Nodes seen only in self-loops are nodes of plumb's graph without edges: one
    # component each.
    extra = i["isolated_nodes"]
    assert k["strong_components"] == len(scc) + extra
    assert k["largest_strong"] == max(scc)
    assert k["weak_components"] == len(wcc) + extra
    assert k["largest_weak"] == max(wcc)
    outs = [x for _, x in d.out_degree()] + [0] * extra
    ins = [x for _, x in d.in_degree()] + [0] * extra
    assert k["out_degree"]["histogram"] == list(np.bincount(outs))
    assert k["in_degree"]["histogram"] == list(np.bincount(ins))
    assert k["out_degree"]["max"] == max(outs) and k["in_degree"]["max"] == max(ins)
    c = k["clustering"]
    # networkx's clustering of a DiGraph is Fagiolo's total coefficient; its average over
    # plumb's nodes (isolated ones at 0).
    clus = nx.clustering(d)
    avg = sum(clus.values()) / (d.number_of_nodes() + extra)
    assert math.isclose(c["average"], avg, rel_tol=1e-9, abs_tol=1e-15)
    assert math.isclose(c["transitivity"], fagiolo_from_matrix(d), rel_tol=1e-12)
    # The undirected figures are those of the symmetrised graph.
    u = d.to_undirected()
    assert p["degrees"]["edges"] == u.number_of_edges()
    assert p["clustering"]["triangles"]["value"] == sum(nx.triangles(u).values()) / 3

    g = plumb.open(path, directed=True)
    assert g.directed
    ids = [int(x) for x in g.ids]
    assert [int(x) for x in g.out_degree] == [d.out_degree(v) if v in d else 0 for v in ids]
    assert [int(x) for x in g.in_degree] == [d.in_degree(v) if v in d else 0 for v in ids]


def test_undirected_graph_has_no_directed_arrays(tmp_path):
    path = write(tmp_path, "plain.txt", [(1, 2), (2, 3)])
    g = plumb.open(path)
    assert not g.directed and g.out_degree is None and g.in_degree is None
    assert "directed" not in plumb.profile(path)["profile"]
