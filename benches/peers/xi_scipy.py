#!/usr/bin/env python3
"""Side-by-side timing of forebear's T_n and xi_n against SciPy's `scipy.stats.chatterjeexi`
(Chatterjee, JASA 2021) on the same file, same machine, alternating rounds.

    python3 benches/peers/xi_scipy.py [N] [ROUNDS]

Writes target/bench-data/pair-N.csv (y = sin(2z) + 0.5 e, z uniform on (-2, 2), numpy seed 1,
17 significant digits so both sides read the same doubles), then for each round times SciPy
(median of 5 calls after one warm-up) and runs `cargo bench --bench core -- peer` on the file
(median of 5 after one warm-up), and prints both and their ratios. FOREBEAR_PEER_BINARY names an
already built bench binary to run instead of `cargo bench` (to time an older commit the same way). Needs numpy and scipy (>= 1.15
for chatterjeexi); the Rust build and tests never need Python.
"""
import os
import re
import subprocess
import sys
import time

import numpy as np
import scipy
from scipy import stats

ROOT = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))


def write_pair(n, path):
    rng = np.random.default_rng(1)
    z = rng.uniform(-2.0, 2.0, n)
    y = np.sin(2.0 * z) + 0.5 * rng.standard_normal(n)
    np.savetxt(path, np.column_stack([y, z]), delimiter=",", header="y,z", comments="", fmt="%.17g")


def median_seconds(work, runs=5):
    work()
    times = []
    for _ in range(runs):
        start = time.perf_counter()
        work()
        times.append(time.perf_counter() - start)
    times.sort()
    return times[len(times) // 2]


def rust_medians(path):
    env = dict(os.environ, FOREBEAR_BENCH_PAIR=path, FOREBEAR_BENCH_RUNS="5")
    # FOREBEAR_PEER_BINARY: an already built bench binary (for example one of an older commit).
    binary = os.environ.get("FOREBEAR_PEER_BINARY")
    command = [binary, "peer"] if binary else ["cargo", "bench", "--quiet", "--bench", "core", "--", "peer"]
    out = subprocess.run(
        command,
        cwd=ROOT, env=env, check=True, capture_output=True, text=True,
    ).stdout
    found = dict(re.findall(r"^\s*(peer[\w-]*): median\s+([\d.]+) ms", out, re.M))
    return {name: float(ms) / 1e3 for name, ms in found.items()}


def main():
    n = int(sys.argv[1]) if len(sys.argv) > 1 else 1_000_000
    rounds = int(sys.argv[2]) if len(sys.argv) > 2 else 2
    os.makedirs(os.path.join(ROOT, "target", "bench-data"), exist_ok=True)
    path = os.path.join(ROOT, "target", "bench-data", f"pair-{n}.csv")
    if not os.path.exists(path):
        write_pair(n, path)
    data = np.loadtxt(path, delimiter=",", skiprows=1)
    y, z = data[:, 0].copy(), data[:, 1].copy()
    print(f"n = {n}, scipy {scipy.__version__}, numpy {np.__version__}, file {path}")
    for r in range(1, rounds + 1):
        scipy_s = median_seconds(lambda: stats.chatterjeexi(z, y))
        rust = rust_medians(path)
        load = os.getloadavg()[0]
        print(f"round {r} (load {load:.1f}): scipy chatterjeexi(z, y) {scipy_s * 1e3:.1f} ms")
        for name in ("peer-tn", "peer-tn-rank", "peer-xi"):
            if name in rust:
                print(f"  forebear {name:>13}: {rust[name] * 1e3:8.1f} ms = {rust[name] / scipy_s:.2f} x scipy")


if __name__ == "__main__":
    main()
