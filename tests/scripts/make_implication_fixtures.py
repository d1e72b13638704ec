#!/usr/bin/env python3
"""Reference answers for the testable implications of a graph: on seeded random
DAGs, some with latent nodes, for every pair of observed nodes that are not
adjacent, whether SOME set of observed nodes d-separates them. The answer is
found by brute force over every subset of the other observed nodes with the
general-purpose graph library networkx (`is_d_separator`, `d_separated` before
3.3). The output, tests/fixtures/implications_networkx.json, records the
library and Python versions; `cargo test` reads the stored file.

Run from the repository root:  python3 tests/scripts/make_implication_fixtures.py
"""

import itertools
import json
import os
import platform
import random

import networkx as nx

SEED = 20240918
GRAPHS = 300
ROOT = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
OUT = os.path.join(ROOT, "tests", "fixtures", "implications_networkx.json")


def d_separated(g, x, y, z):
    if hasattr(nx, "is_d_separator"):
        return nx.is_d_separator(g, x, y, z)
    return nx.d_separated(g, x, y, z)


def random_dag(rng):
    n = rng.randint(4, 11)
    p = rng.choice([0.15, 0.25, 0.35, 0.5])
    order = list(range(n))
    rng.shuffle(order)
    edges = [[a, b] for a in range(n) for b in range(n) if order[a] < order[b] and rng.random() < p]
    # About a third of the graphs have no latent node; the others 1 to 4,
    # some of them added as a fresh common cause of two nodes (like a <-> b).
    latent = []
    if rng.random() > 0.33:
        k = rng.randint(1, 4)
        for _ in range(k):
            if rng.random() < 0.4:
                latent.append(rng.randrange(n))
            else:
                a, b = rng.sample(range(n), 2)
                u = n
                n += 1
                edges += [[u, a], [u, b]]
                latent.append(u)
    rng.shuffle(edges)
    return n, edges, sorted(set(latent))


def separable(g, a, b, others):
    for size in range(len(others) + 1):
        for z in itertools.combinations(others, size):
            if d_separated(g, {a}, {b}, set(z)):
                return True
    return False


def main():
    rng = random.Random(SEED)
    cases = []
    for _ in range(GRAPHS):
        n, edges, latent = random_dag(rng)
        g = nx.DiGraph()
        g.add_nodes_from(range(n))
        g.add_edges_from(edges)
        observed = [v for v in range(n) if v not in latent]
        pairs = []
        for a, b in itertools.combinations(observed, 2):
            if g.has_edge(a, b) or g.has_edge(b, a):
                continue
            others = [v for v in observed if v not in (a, b)]
            pairs.append([a, b, separable(g, a, b, others)])
        cases.append({"nodes": n, "edges": edges, "latent": latent, "pairs": pairs})
    doc = {
        "source": "networkx is_d_separator, brute force over subsets of observed nodes, seeded random DAGs",
        "networkx": nx.__version__,
        "python": platform.python_version(),
        "seed": SEED,
        "cases": cases,
    }
    with open(OUT, "w") as f:
        json.dump(doc, f, separators=(",", ":"))
        f.write("\n")
    total = sum(len(c["pairs"]) for c in cases)
    sep = sum(p[2] for c in cases for p in c["pairs"])
    with_latent = sum(1 for c in cases if c["latent"])
    print(f"{OUT}: {len(cases)} graphs ({with_latent} with latent nodes), {total} pairs, {sep} separable")


if __name__ == "__main__":
    main()
