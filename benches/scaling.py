#!/usr/bin/env python3
"""Time, boundary size and peak memory of `forebear analyze` against the number of rows n and the
number of columns p, with the fitted exponents (docs/benchmarks.md, "Scaling").

    python3 benches/scaling.py rows    [TARGET] [BINARY]   # CHILD data, n = 1e3, 1e4, 4e4, 1e5
    python3 benches/scaling.py columns [TARGET] [BINARY]   # CHILD 1e4 rows plus noise: p = 20, 100, 400
    python3 benches/scaling.py threads [TARGET] [BINARY]   # n = 4e4, --threads 1 against 2

Data: the CHILD network structure (Spiegelhalter et al. 1992) with nonlinear mechanisms from
/work/shared/tools/sem_on_dag.py (seed 1); the wide files append independent standard normal
columns (numpy seed 2, `noise1`, ...) to the 10^4-row file, so the target's boundary cannot grow
with p. Every run: `--replicates 0`, default settings otherwise (calibrated rule, rank scaling,
seed 1), `--threads 1` except in `threads`; user time and peak RSS from /usr/bin/time. Generated
files go to target/bench-data/ and are never committed. Needs numpy; the build and tests never
need Python.
"""
import json
import math
import os
import subprocess
import sys

import numpy as np

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
DATA = os.path.join(ROOT, "target", "bench-data")
CHILD = "/work/shared/reference-data/networks/child.graph.json"
SEM = "/work/shared/tools/sem_on_dag.py"


def child(n):
    stem = os.path.join(DATA, f"child-{n}-seed1")
    if not os.path.exists(stem + ".csv"):
        subprocess.run(["python3", SEM, CHILD, str(n), "1", stem], check=True, capture_output=True)
    return stem + ".csv"


def wide(p):
    base = child(10000)
    if p == 20:
        return base
    path = os.path.join(DATA, f"child-10000-seed1-p{p}.csv")
    if not os.path.exists(path):
        with open(base) as f:
            header = f.readline().strip()
            rows = [line.strip() for line in f]
        noise = np.random.default_rng(2).standard_normal((len(rows), p - 20))
        with open(path, "w") as out:
            out.write(header + "," + ",".join(f"noise{k + 1}" for k in range(p - 20)) + "\n")
            for row, extra in zip(rows, noise):
                out.write(row + "," + ",".join(f"{v:.6f}" for v in extra) + "\n")
    return path


def run(binary, path, target, threads):
    out = os.path.join(DATA, "scaling-out")
    cmd = ["/usr/bin/time", "-f", "%U %e %M", binary, "--quiet", "--threads", str(threads),
           "analyze", path, "--target", target, "--replicates", "0", "--out", out, "--force"]
    done = subprocess.run(cmd, check=True, capture_output=True, text=True)
    user, wall, kb = done.stderr.strip().splitlines()[-1].split()
    with open(os.path.join(out, "result.json")) as f:
        result = json.load(f)
    boundary = len(result["markov_boundary"])
    return float(user), float(wall), int(kb), boundary, result["digest"][:12]


def slope(xs, ys):
    lx = [math.log(x) for x in xs]
    ly = [math.log(y) for y in ys]
    mx, my = sum(lx) / len(lx), sum(ly) / len(ly)
    return sum((a - mx) * (b - my) for a, b in zip(lx, ly)) / sum((a - mx) ** 2 for a in lx)


def main():
    what = sys.argv[1] if len(sys.argv) > 1 else "rows"
    target = sys.argv[2] if len(sys.argv) > 2 else "Sick"
    binary = sys.argv[3] if len(sys.argv) > 3 else os.path.join(ROOT, "target", "release", "forebear")
    os.makedirs(DATA, exist_ok=True)
    print(f"{what}, target {target}, binary {binary}, load {os.getloadavg()[0]:.1f}")
    if what == "threads":
        path = child(40000)
        for threads in (1, 2):
            user, wall, kb, b, digest = run(binary, path, target, threads)
            print(f"threads {threads}: wall {wall:.2f} s, user {user:.2f} s, boundary {b}, digest {digest}")
        return
    sizes = [1000, 10000, 40000, 100000] if what == "rows" else [20, 100, 400]
    xs, ys = [], []
    for size in sizes:
        path = child(size) if what == "rows" else wide(size)
        n, p = (size, 20) if what == "rows" else (10000, size)
        user, wall, kb, b, digest = run(binary, path, target, 1)
        numbers_mb = n * p * 8 / 2**20
        print(f"n {n:>6} p {p:>3}: user {user:8.2f} s, wall {wall:8.2f} s, boundary {b}, "
              f"peak {kb / 1024:7.1f} MiB ({kb / 1024 / numbers_mb:.1f} x the numbers), digest {digest}")
        xs.append(size)
        ys.append(user)
        if len(xs) >= 2:
            print(f"    exponent {xs[-2]} -> {xs[-1]}: {slope(xs[-2:], ys[-2:]):.2f}")
    print(f"least-squares exponent over all: {slope(xs, ys):.2f}")


if __name__ == "__main__":
    main()
