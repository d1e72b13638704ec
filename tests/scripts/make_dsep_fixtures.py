"""Reference answers for d-separation queries on seeded random DAGs.

The reference is the general-purpose graph library networkx
(`is_d_separator`, or `d_separated` in versions before 3.3). The output,
tests/fixtures/dsep_networkx.json, records the library and Python versions;
`cargo test` reads the stored file and needs no Python.

Run from the repository root:  python3 tests/scripts/make_dsep_fixtures.py
"""

import json
import platform
import random

import networkx as nx

SEED = 20240611
GRAPHS = 300
QUERIES_PER_GRAPH = 8
OUT = "tests/fixtures/dsep_networkx.json"


def d_separated(g, x, y, z):
    if hasattr(nx, "is_d_separator"):
        return nx.is_d_separator(g, x, y, z)
    return nx.d_separated(g, x, y, z)


def random_dag(rng):
    n = rng.randint(5, 15)
    p = rng.choice([0.12, 0.2, 0.3, 0.45])
    order = list(range(n))
    rng.shuffle(order)  # node i comes at position order[i]
    edges = []
    for a in range(n):
        for b in range(n):
            if order[a] < order[b] and rng.random() < p:
                edges.append([a, b])
    rng.shuffle(edges)
    return n, edges


def main():
    rng = random.Random(SEED)
    cases = []
    for _ in range(GRAPHS):
        n, edges = random_dag(rng)
        g = nx.DiGraph()
        g.add_nodes_from(range(n))
        g.add_edges_from(edges)
        queries = []
        for _ in range(QUERIES_PER_GRAPH):
            nodes = list(range(n))
            rng.shuffle(nodes)
            nx_size = 1 if rng.random() < 0.75 else 2
            ny_size = 1 if rng.random() < 0.75 else 2
            xs = sorted(nodes[:nx_size])
            ys = sorted(nodes[nx_size : nx_size + ny_size])
            rest = nodes[nx_size + ny_size :]
            zs = sorted(rng.sample(rest, rng.randint(0, min(len(rest), 5))))
            sep = d_separated(g, set(xs), set(ys), set(zs))
            queries.append({"x": xs, "y": ys, "z": zs, "separated": bool(sep)})
        cases.append({"nodes": n, "edges": edges, "queries": queries})
    doc = {
        "source": "networkx d-separation (is_d_separator) on seeded random DAGs",
        "networkx": nx.__version__,
        "python": platform.python_version(),
        "seed": SEED,
        "cases": cases,
    }
    with open(OUT, "w") as f:
        json.dump(doc, f, separators=(",", ":"))
        f.write("\n")
    total = sum(len(c["queries"]) for c in cases)
    seps = sum(q["separated"] for c in cases for q in c["queries"])
    print(f"{OUT}: {len(cases)} graphs, {total} queries, {seps} separated")


if __name__ == "__main__":
    main()
