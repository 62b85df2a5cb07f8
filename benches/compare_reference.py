"""Time a general-purpose C-backed graph library (python-igraph) on the same task plumb does:
load an edge list and compute exact transitivity. Used only to put plumb's benchmark in context
(README performance table); not part of the test suite.

Usage: python3 benches/compare_reference.py EDGEFILE  (whitespace-separated integer pairs)
Needs: pip install igraph
"""
import sys
import time

import igraph

path = sys.argv[1]
t0 = time.perf_counter()
g = igraph.Graph.Read_Edgelist(path, directed=False)
t1 = time.perf_counter()
g.simplify()
t2 = time.perf_counter()
t = g.transitivity_undirected()
t3 = time.perf_counter()
print(f"igraph {igraph.__version__}: load {t1 - t0:.2f} s, simplify {t2 - t1:.2f} s, "
      f"transitivity {t3 - t2:.2f} s = {t:.6f}; total {t3 - t0:.2f} s")
