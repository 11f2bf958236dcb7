#!/usr/bin/python3
"""Cross-check of the timeline solver (src/time/timeline.c) on seeded random
Simple Temporal Networks, through tests/ref/timeline_probe.

For every network it compares
  - the contradiction verdict with networkx.negative_edge_cycle
    (reference: networkx, "negative_edge_cycle", Bellman-Ford from a new
    node joined to every node);
  - when consistent, every bound of t(X) - t(moment) with
    networkx.single_source_bellman_ford_path_length on the graph and on its
    reverse (reference: networkx), and again with
    scipy.sparse.csgraph.bellman_ford (reference: SciPy);
  - when contradictory, that every reported cycle is a closed chain of the
    network's edges whose weight is the one reported and negative, and that
    once the reported bound of each cycle is set aside no negative cycle is
    left (reference: networkx.negative_edge_cycle).

Edges follow the Simple Temporal Network construction (Dechter, Meiri &
Pearl, 1991): t(b) - t(a) in [lo, hi] is a->b of weight hi and b->a of
weight -lo.  Usage: timeline_ref.py PROBE [N_NETWORKS]; exit 77 when a
module is missing.
"""
import random
import subprocess
import sys

try:
    import networkx as nx
except ImportError:  # pragma: no cover
    print("networkx is missing: skipped")
    sys.exit(77)
try:
    import numpy as np
    from scipy.sparse import csr_matrix
    from scipy.sparse.csgraph import bellman_ford as scipy_bellman_ford
    from scipy.sparse.csgraph import NegativeCycleError
    HAVE_SCIPY = True
except ImportError:  # pragma: no cover
    HAVE_SCIPY = False

MINUTE = 60 * 1000000
INF = None


def generate(rng):
    """A random network: mostly forward lags (a plausible business process)
    with some backward, negative and unbounded ones, so that both verdicts
    occur often."""
    # mostly small networks, and now and then one of a few hundred events
    n = rng.randint(1, 40) if rng.random() < 0.9 else rng.randint(100, 300)
    m = rng.randint(0, 3 * n // 2)
    style = rng.random()
    cons = []
    for _ in range(m):
        a = rng.randrange(n)
        b = rng.randrange(n)
        if rng.random() < 0.03:
            b = a  # a self constraint
        if style < 0.8 and a > b:
            a, b = b, a  # a process that runs forward
        lo = rng.randint(-120, 300) * MINUTE
        if rng.random() < 0.2:
            hi = INF
        else:
            hi = lo + rng.randint(0, 3000) * MINUTE
        cons.append((a, b, lo, hi))
    moment = rng.randrange(n)
    return n, cons, moment


def edges_of(cons):
    """Edge list (id, from, to, weight); id = (constraint line, upper?)."""
    out = []
    for i, (a, b, lo, hi) in enumerate(cons):
        if hi is not INF:
            out.append(((i, 1), a, b, hi))
        out.append(((i, 0), b, a, -lo))
    return out


def graph(n, edges, removed=()):
    g = nx.DiGraph()
    g.add_nodes_from(range(n))
    for eid, u, v, w in edges:
        if eid in removed:
            continue
        # parallel edges: the tightest bound is the one that counts
        if not g.has_edge(u, v) or g[u][v]["weight"] > w:
            g.add_edge(u, v, weight=w)
    return g


def run_probe(probe, n, cons, moment):
    lines = ["%d %d %d" % (n, len(cons), moment)]
    for a, b, lo, hi in cons:
        lines.append("%d %d %d %s" % (a, b, lo, "inf" if hi is INF else str(hi)))
    res = subprocess.run([probe], input="\n".join(lines) + "\n", capture_output=True,
                         text=True, timeout=60, check=False)
    if res.returncode != 0:
        raise RuntimeError("probe failed: %s" % res.stderr)
    return res.stdout.split("\n")


def scipy_distances(n, g, src):
    """Shortest distances from src with SciPy's Bellman-Ford.  Zero-weight
    edges are kept by shifting nothing: csr_matrix stores explicit zeros
    when built from coordinate lists."""
    rows, cols, data = [], [], []
    for u, v, d in g.edges(data=True):
        rows.append(u)
        cols.append(v)
        data.append(float(d["weight"]))
    mat = csr_matrix((data, (rows, cols)), shape=(n, n))
    return scipy_bellman_ford(mat, directed=True, indices=src)


def check_one(probe, seed):
    rng = random.Random(seed)
    n, cons, moment = generate(rng)
    edges = edges_of(cons)
    g = graph(n, edges)
    out = run_probe(probe, n, cons, moment)
    # reference: networkx.negative_edge_cycle
    ref_cycle = nx.negative_edge_cycle(g, weight="weight")
    problems = []
    if out[0] == "consistent":
        if ref_cycle:
            return ["seed %d: probe says consistent, networkx finds a negative cycle" % seed]
        # reference: networkx.single_source_bellman_ford_path_length
        up = nx.single_source_bellman_ford_path_length(g, moment, weight="weight")
        down = nx.single_source_bellman_ford_path_length(g.reverse(copy=True), moment,
                                                         weight="weight")
        sp_up = sp_down = None
        if HAVE_SCIPY and g.number_of_edges():
            # reference: scipy.sparse.csgraph.bellman_ford
            sp_up = scipy_distances(n, g, moment)
            sp_down = scipy_distances(n, g.reverse(copy=True), moment)
        for x in range(n):
            lo_s, hi_s = out[1 + x].split()
            want_hi = str(up[x]) if x in up else "inf"
            want_lo = str(-down[x]) if x in down else "-inf"
            if (lo_s, hi_s) != (want_lo, want_hi):
                problems.append("seed %d: event %d got [%s, %s], networkx [%s, %s]"
                                % (seed, x, lo_s, hi_s, want_lo, want_hi))
            if sp_up is not None:
                s_hi = "inf" if np.isinf(sp_up[x]) else str(int(sp_up[x]))
                s_lo = "-inf" if np.isinf(sp_down[x]) else str(-int(sp_down[x]))
                if (lo_s, hi_s) != (s_lo, s_hi):
                    problems.append("seed %d: event %d got [%s, %s], scipy [%s, %s]"
                                    % (seed, x, lo_s, hi_s, s_lo, s_hi))
        return problems

    if not out[0].startswith("contradictions "):
        return ["seed %d: unreadable probe output %r" % (seed, out[0])]
    if not ref_cycle:
        return ["seed %d: probe reports a contradiction, networkx finds no negative cycle" % seed]
    if HAVE_SCIPY:
        # reference: scipy.sparse.csgraph.bellman_ford raises NegativeCycleError
        try:
            scipy_distances(n, g, list(range(n)))
            problems.append("seed %d: scipy finds no negative cycle" % seed)
        except NegativeCycleError:
            pass
    k = int(out[0].split()[1])
    complete = out[0].split()[2] == "complete"
    by_id = {eid: (u, v, w) for eid, u, v, w in edges}
    removed = set()
    for line in out[1:1 + k]:
        parts = line.split()
        weight, at = int(parts[0]), int(parts[1])
        steps = []
        for p in parts[2:]:
            i, up_flag = p.split(":")
            steps.append((int(i), int(up_flag)))
        if not steps:
            problems.append("seed %d: a contradiction without its cycle" % seed)
            continue
        total = 0
        for j, sid in enumerate(steps):
            if sid not in by_id:
                problems.append("seed %d: step %r is not an edge" % (seed, sid))
                break
            u, v, w = by_id[sid]
            nu, _, _ = by_id[steps[(j + 1) % len(steps)]]
            if v != nu:
                problems.append("seed %d: cycle is not closed at step %d" % (seed, j))
            total += w
        if total != weight or total >= 0:
            problems.append("seed %d: cycle weight %d, reported %d" % (seed, total, weight))
        if not 0 <= at < len(steps):
            problems.append("seed %d: the step pointed at (%d) is not on the cycle" % (seed, at))
            continue
        removed.add(steps[at])
    if not complete:
        problems.append("seed %d: the search stopped early" % seed)
    elif nx.negative_edge_cycle(graph(n, edges, removed), weight="weight"):
        problems.append("seed %d: a negative cycle is left after %d were reported" % (seed, k))
    return problems


def main():
    if len(sys.argv) < 2:
        print("usage: timeline_ref.py PROBE [N]")
        return 2
    probe = sys.argv[1]
    count = int(sys.argv[2]) if len(sys.argv) > 2 else 600
    problems = []
    verdicts = {"consistent": 0, "contradictory": 0}
    for seed in range(count):
        p = check_one(probe, seed)
        problems.extend(p)
        rng = random.Random(seed)
        n, cons, _ = generate(rng)
        key = "contradictory" if nx.negative_edge_cycle(graph(n, edges_of(cons)),
                                                        weight="weight") else "consistent"
        verdicts[key] += 1
    for p in problems[:30]:
        print(p)
    print("%d networks (%d consistent, %d contradictory): %d problems%s"
          % (count, verdicts["consistent"], verdicts["contradictory"], len(problems),
             "" if HAVE_SCIPY else " (scipy missing: networkx only)"))
    return 1 if problems else 0


if __name__ == "__main__":
    sys.exit(main())
