"""Random directed acyclic graphs for recovery checks on fresh data (not for tests; Python 3 only).

Writes a parent-list file in the layout of ../shared/reference-data/networks/*.graph.json, which
../shared/tools/sem_on_dag.py turns into nonlinear, non-Gaussian data with a truth file:

    python3 tools/random_dag.py NODES SEED OUT.graph.json
    python3 ../shared/tools/sem_on_dag.py OUT.graph.json ROWS SEED OUT_STEM

Nodes v001.. are put in a random order; each node draws its number of parents (0, 1, 2 or 3 with
probabilities 0.3, 0.3, 0.3, 0.1) and takes them uniformly from the nodes before it, so the graphs
are sparse (about 1.2 parents per node) and hold many nodes with two or more parents, some of them
with parents that share no ancestor (the sets the local search can identify). No structure is
taken from a published network: these graphs are of our own making, drawn after the rule under
test was fixed.
"""
import json, random, sys

def random_dag(nodes, seed):
    rng = random.Random(seed)
    names = [f"v{i:03d}" for i in range(1, nodes + 1)]
    order = names[:]
    rng.shuffle(order)
    parents = {}
    for position, node in enumerate(order):
        k = rng.choices([0, 1, 2, 3], weights=[3, 3, 3, 1])[0]
        k = min(k, position)
        parents[node] = sorted(rng.sample(order[:position], k))
    return {name: parents[name] for name in names}

if __name__ == "__main__":
    nodes, seed, out = int(sys.argv[1]), int(sys.argv[2]), sys.argv[3]
    json.dump({"parents": random_dag(nodes, seed)}, open(out, "w"), indent=1)
