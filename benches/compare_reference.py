"""Time a general-purpose C-backed graph library (python-igraph) on the tasks plumb does, to put
plumb's benchmarks in context (README performance tables); not part of the test suite.

Usage:
  python3 benches/compare_reference.py EDGEFILE            load + exact transitivity
  python3 benches/compare_reference.py --profile EDGEFILE  the quick profile a user would script:
      load, simplify, transitivity, average clustering, components, mean distance from 100
      random sources (seeded)
EDGEFILE: whitespace-separated integer pairs, plain text. Needs: pip install igraph
"""
import random
import sys
import time

import igraph

profile = sys.argv[1] == "--profile"
path = sys.argv[-1]
t0 = time.perf_counter()
g = igraph.Graph.Read_Edgelist(path, directed=False)
t1 = time.perf_counter()
g.simplify()
t2 = time.perf_counter()
t = g.transitivity_undirected()
t3 = time.perf_counter()
if not profile:
    print(f"igraph {igraph.__version__}: load {t1 - t0:.2f} s, simplify {t2 - t1:.2f} s, "
          f"transitivity {t3 - t2:.2f} s = {t:.6f}; total {t3 - t0:.2f} s")
    sys.exit(0)
avg = g.transitivity_avglocal_undirected(mode="zero")
t4 = time.perf_counter()
comps = g.connected_components()
giant = comps.giant()
t5 = time.perf_counter()
rng = random.Random(1)
sources = rng.sample(range(giant.vcount()), 100)
total = 0.0
pairs = 0
for row in giant.distances(source=sources):
    for d in row:
        if d > 0:
            total += d
            pairs += 1
mean = total / pairs
t6 = time.perf_counter()
print(f"igraph {igraph.__version__} quick profile: load {t1 - t0:.2f} s, simplify {t2 - t1:.2f} s, "
      f"transitivity {t3 - t2:.2f} s = {t:.6f}, average clustering {t4 - t3:.2f} s = {avg:.6f}, "
      f"components {t5 - t4:.2f} s ({len(comps)}), mean distance from 100 sources "
      f"{t6 - t5:.2f} s = {mean:.4f}; total {t6 - t0:.2f} s")
