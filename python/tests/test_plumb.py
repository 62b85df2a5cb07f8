"""plumb's Python package checked against networkx (Hagberg, Schult and Swart 2008, "Exploring
network structure, dynamics, and function using NetworkX"), a general-purpose reference library,
on two held-in graphs that networkx ships:

- Zachary (1977), "An information flow model for conflict and fission in small groups": the
  karate club, 34 nodes and 78 edges (integer ids);
- Knuth (1993), "The Stanford GraphBase": the co-appearance network of Les Misérables, 77 nodes
  and 254 edges (text ids, written here as quoted CSV with extra columns).
"""

import csv
import math

import networkx as nx
import numpy as np
import pytest

import plumb


@pytest.fixture(scope="module")
def karate(tmp_path_factory):
    g = nx.karate_club_graph()
    path = tmp_path_factory.mktemp("karate") / "karate.tsv"
    with path.open("w") as f:
        for u, v in g.edges():
            f.write(f"{u}\t{v}\n")
    return g, path


@pytest.fixture(scope="module")
def miserables(tmp_path_factory):
    g = nx.les_miserables_graph()
    path = tmp_path_factory.mktemp("miserables") / "scenes.csv"
    with path.open("w", newline="") as f:
        w = csv.writer(f, quoting=csv.QUOTE_NONNUMERIC)
        w.writerow(["weight", "first character", "second character"])
        for u, v, d in g.edges(data=True):
            w.writerow([d.get("weight", 1), u, v])
    return g, path


def figures(doc):
    p = doc["profile"]
    c = p["clustering"]
    return p, c


@pytest.mark.parametrize("which", ["karate", "miserables"])
def test_profile_matches_networkx(which, request):
    g, path = request.getfixturevalue(which)
    opts = {"columns": "first character,second character"} if which == "miserables" else {}
    doc = plumb.profile(path, **opts)
    assert doc["schema"] == "plumb-profile"
    p, c = figures(doc)
    assert p["degrees"]["nodes"] == g.number_of_nodes()
    assert p["degrees"]["edges"] == g.number_of_edges()
    assert c["triangles"]["value"] == sum(nx.triangles(g).values()) / 3
    assert c["triangles"]["method"]["kind"] == "exact"
    assert math.isclose(c["transitivity"]["value"], nx.transitivity(g), rel_tol=1e-12)
    assert math.isclose(c["average_zeros"]["value"], nx.average_clustering(g), rel_tol=1e-12)
    assert math.isclose(
        p["degrees"]["assortativity"], nx.degree_assortativity_coefficient(g), rel_tol=1e-9
    )
    assert p["components"]["count"] == nx.number_connected_components(g)
    d = p["distances"]
    assert d["status"] == "exact"
    assert math.isclose(d["mean"]["value"], nx.average_shortest_path_length(g), rel_tol=1e-12)
    assert d["diameter"]["value"] == nx.diameter(g)
    assert d["radius"]["value"] == nx.radius(g)


@pytest.mark.parametrize("which", ["karate", "miserables"])
def test_per_node_arrays_match_networkx(which, request):
    g, path = request.getfixturevalue(which)
    # Positions cannot tell a header of text from text ids, so the header is named as such.
    opts = {"columns": "2,3", "header": "skip"} if which == "miserables" else {}
    graph = plumb.open(path, **opts)
    assert (graph.nodes, graph.edges, len(graph)) == (g.number_of_nodes(), g.number_of_edges(), g.number_of_nodes())
    ids = list(graph.ids)
    assert sorted(ids, key=str) == sorted(g.nodes(), key=str)
    tri, clus = nx.triangles(g), nx.clustering(g)
    assert graph.degree.dtype == np.uint32
    assert graph.triangles.dtype == np.uint64
    assert [int(x) for x in graph.degree] == [g.degree(v) for v in ids]
    assert [int(x) for x in graph.triangles] == [tri[v] for v in ids]
    np.testing.assert_allclose(graph.clustering, [clus[v] for v in ids], rtol=1e-12, atol=0)
    assert set(int(x) for x in graph.component) == {1}
    # Cached arrays are shared, so they are read-only.
    with pytest.raises(ValueError):
        graph.triangles[0] = 7


def test_table_is_a_dataframe(karate):
    pd = pytest.importorskip("pandas")
    g, path = karate
    t = plumb.open(path).table()
    assert isinstance(t, pd.DataFrame)
    assert list(t.columns) == ["id", "degree", "triangles", "clustering", "component"]
    assert len(t) == 34
    row = t.set_index("id").loc[33]
    assert row["degree"] == g.degree(33) and row["triangles"] == nx.triangles(g, 33)


def test_graph_profile_equals_file_profile(karate):
    _, path = karate
    a = plumb.profile(path, seed=5, clustering="sampled", figures=["clustering"])
    b = plumb.open(path).profile(seed=5, clustering="sampled", figures="clustering", threads=1)
    assert a["profile"]["clustering"] == b["profile"]["clustering"]
    t = a["profile"]["clustering"]["transitivity"]
    assert t["method"]["kind"] == "estimate"
    lo, hi = t["interval"]["low"], t["interval"]["high"]
    assert lo <= t["value"] <= hi


def test_options_spelt_like_the_command_line(karate):
    _, path = karate
    assert "exact_within" in plumb.option_names() and "threads" in plumb.option_names()
    with pytest.raises(plumb.OptionError) as e:
        plumb.profile(path, levle=0.9)
    assert "unknown option" in str(e.value) and e.value.exit_code == 2
    with pytest.raises(plumb.OptionError) as e:
        plumb.profile(path, level=2)
    assert "'level'" in str(e.value) and "strictly between 0 and 1" in str(e.value)
    with pytest.raises(plumb.OptionError):
        plumb.open(path, seed=3)
    with pytest.raises(plumb.OptionError):
        plumb.open(path).profile(skip_malformed=True)


def test_bad_input_raises_with_position(tmp_path):
    bad = tmp_path / "bad.tsv"
    bad.write_bytes(b"1 2\n2 3\nthree\n4 5\n")
    with pytest.raises(plumb.InputError) as e:
        plumb.profile(bad)
    err = e.value
    assert isinstance(err, plumb.PlumbError)
    assert (err.line, err.byte_offset, err.exit_code) == (3, 8, 3)
    assert err.path == str(bad)
    assert str(err) == err.message
    assert "line 3, byte offset 8" in err.message and "only one field" in err.message
    # The same input with skipping reads three edges and counts the bad line.
    graph = plumb.open(bad, skip_malformed=True)
    assert graph.edges == 3 and graph.intake["malformed_skipped"] == 1


def test_missing_named_column_lists_the_header(miserables):
    _, path = miserables
    with pytest.raises(plumb.InputError) as e:
        plumb.open(path, columns="first character,third character")
    assert "third character" in str(e.value) and "second character" in str(e.value)


def test_missing_file_is_a_read_error(tmp_path):
    with pytest.raises(plumb.ReadError) as e:
        plumb.open(tmp_path / "nowhere.tsv")
    assert e.value.exit_code == 4 and e.value.line is None


def test_work_releases_the_gil(tmp_path):
    # A ring lattice of 200,000 nodes and degree 10: long enough to watch another thread run.
    path = tmp_path / "ring.tsv"
    n, half = 200_000, 5
    with path.open("w") as f:
        f.writelines(f"{u}\t{(u + j) % n}\n" for u in range(n) for j in range(1, half + 1))
    import threading
    import time

    done = threading.Event()
    result = {}

    def work():
        result["doc"] = plumb.profile(path, figures="clustering", clustering="exact", threads=1)
        done.set()

    t = threading.Thread(target=work)
    start = time.perf_counter()
    t.start()
    ticks = 0
    while not done.is_set():
        ticks += 1
        time.sleep(0.001)
    t.join()
    elapsed = time.perf_counter() - start
    # The lattice's clustering, Watts and Strogatz (1998): 3(K-2)/(4(K-1)) = 2/3 for K = 10.
    c = result["doc"]["profile"]["clustering"]["transitivity"]["value"]
    assert math.isclose(c, 2 / 3, rel_tol=1e-12)
    # Holding the GIL would freeze this loop for the whole call; released, it ticks along.
    assert ticks >= max(5, int(elapsed / 0.001 / 20)), (ticks, elapsed)
