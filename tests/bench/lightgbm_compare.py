#!/usr/bin/env python3
"""Compare tellturn's boosted trees with LightGBM on the same synthetic count table.

Usage: python3 tests/bench/lightgbm_compare.py TMPDIR [--repo DIR] [--reuse]

Runs `cargo bench --bench models_bench -- --dump TMPDIR --skip-logistic` in the repository
(ours: 240k x 200 counts, 200 trees, 31 leaves, learning rate 0.1, 2 threads), reads the dumped
tables, trains LightGBM with the same settings and prints both times, log losses and the ratio.
With --reuse the cargo step is skipped and the RESULT line is read from TMPDIR/ours.txt.
Needs numpy and lightgbm (install them in a virtual environment outside the repository).
"""
import argparse
import json
import os
import subprocess
import sys
import time

# On a shared 2-core machine LightGBM's OpenMP threads spin while waiting, which costs it dearly
# when other work holds a core; passive waiting is its better setting here. It must be set
# before OpenMP starts (an explicit setting in the environment wins).
os.environ.setdefault("OMP_WAIT_POLICY", "PASSIVE")

import numpy as np  # noqa: E402


def load(directory, name):
    rows, cols = map(int, open(os.path.join(directory, f"{name}_shape.txt")).read().split())
    x = np.fromfile(os.path.join(directory, f"{name}_x.f32"), dtype="<f4").reshape(rows, cols)
    y = np.fromfile(os.path.join(directory, f"{name}_y.f32"), dtype="<f4")
    return x, y


def log_loss(p, y):
    p = np.clip(p, 1e-15, 1 - 1e-15)
    return float(-np.mean(y * np.log(p) + (1 - y) * np.log(1 - p)))


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("tmpdir")
    ap.add_argument("--repo", default=os.path.dirname(os.path.dirname(os.path.dirname(
        os.path.abspath(__file__)))))
    ap.add_argument("--reuse", action="store_true")
    args = ap.parse_args()
    os.makedirs(args.tmpdir, exist_ok=True)
    ours_path = os.path.join(args.tmpdir, "ours.txt")
    if not args.reuse:
        out = subprocess.run(
            ["cargo", "bench", "--bench", "models_bench", "--", "--dump", args.tmpdir,
             "--skip-logistic"],
            cwd=args.repo, check=True, capture_output=True, text=True).stdout
        open(ours_path, "w").write(out)
    out = open(ours_path).read()
    sys.stdout.write(out)
    print(f"load average after ours: {' '.join(f'{v:.2f}' for v in os.getloadavg())}")
    ours = json.loads(next(l for l in out.splitlines() if l.startswith("RESULT "))[7:])

    print(f"OMP_WAIT_POLICY={os.environ['OMP_WAIT_POLICY']}; load average before LightGBM: "
          f"{' '.join(f'{v:.2f}' for v in os.getloadavg())}")
    import lightgbm as lgb
    x, y = load(args.tmpdir, "train")
    xt, yt = load(args.tmpdir, "test")
    # LightGBM picks its histogram layout itself ("auto"); on this table forcing row-wise was
    # faster, so both are timed and ours is compared with the faster.
    best = None
    for layout in ["auto", "row_wise"]:
        params = dict(objective="binary", num_leaves=31, learning_rate=0.1, min_data_in_leaf=20,
                      lambda_l2=1.0, max_bin=255, num_threads=2, verbose=-1, seed=0)
        if layout != "auto":
            params[f"force_{layout}"] = True
        start, cpu_start = time.perf_counter(), time.process_time()
        data = lgb.Dataset(x, label=y, params=params)
        booster = lgb.train(params, data, num_boost_round=200)
        seconds = time.perf_counter() - start
        cpu = time.process_time() - cpu_start
        train_loss = log_loss(booster.predict(x), y)
        test_loss = log_loss(booster.predict(xt), yt)
        print(f"lightgbm {lgb.__version__} ({layout}): 200 trees in {seconds:.3f} s wall, "
              f"{cpu:.2f} s CPU (2 threads, including Dataset construction); "
              f"log loss train {train_loss:.5f} test {test_loss:.5f}", flush=True)
        if best is None or seconds < best[0]:
            best = (seconds, cpu, train_loss, test_loss, layout)
    seconds, cpu, train_loss, test_loss, layout = best
    print(f"ratio ours/lightgbm ({layout}): wall {ours['seconds'] / seconds:.2f}, "
          f"CPU {ours['cpu_seconds'] / cpu:.2f}; "
          f"train log loss ours {ours['train_logloss']:.5f} vs {train_loss:.5f}; "
          f"test log loss ours {ours['test_logloss']:.5f} vs {test_loss:.5f}")


if __name__ == "__main__":
    main()
