"""Regenerate the reference fixtures in this folder.

Data: Zachary, W. W. (1977), "An information flow model for conflict and fission in small
groups", J. Anthropol. Res. 33:452-473 (the 78-edge version), and Knuth, D. E. (1993), "The
Stanford GraphBase" (Les Miserables co-appearances, 77 characters, 254 edges), both as shipped
by the NetworkX package (Hagberg, Schult & Swart 2008), version recorded in each file.
Run: python3 tests/data/make_fixtures.py  (needs `pip install networkx`).
"""
import os

import networkx as nx

here = os.path.dirname(os.path.abspath(__file__))
ver = nx.__version__

g = nx.karate_club_graph()
with open(os.path.join(here, "karate.mtx"), "w") as f:
    f.write("%%MatrixMarket matrix coordinate pattern symmetric\n")
    f.write(f"% Zachary karate club (Zachary 1977), 78 edges, via networkx {ver}\n")
    edges = sorted((max(u, v) + 1, min(u, v) + 1) for u, v in g.edges())
    f.write(f"{g.number_of_nodes()} {g.number_of_nodes()} {len(edges)}\n")
    for i, j in edges:
        f.write(f"{i} {j}\n")
with open(os.path.join(here, "karate.degrees"), "w") as f:
    f.write(f"# node (1-based) and degree, networkx {ver}\n")
    for v in sorted(g.nodes()):
        f.write(f"{v + 1} {g.degree(v)}\n")

lm = nx.les_miserables_graph()
with open(os.path.join(here, "lesmis.csv"), "w") as f:
    f.write(f"# Les Miserables co-appearances (Knuth 1993), via networkx {ver}\n")
    f.write("source,target,weight\n")
    for u, v, d in sorted(lm.edges(data=True)):
        f.write(f"{u},{v},{d.get('weight', 1)}\n")
with open(os.path.join(here, "lesmis.degrees"), "w") as f:
    f.write(f"# character and degree, networkx {ver}\n")
    for v in sorted(lm.nodes()):
        f.write(f"{v}\t{lm.degree(v)}\n")
