#!/usr/bin/python3
"""What an exact kernel would give autoFit's own search: a probe for the N = 1 000 gap.

    ./build/bench/suite --sizes 1000 --data DIR
    python3 bench/kernel_ridge_probe.py DIR [--cases borehole,ishigami] [--out FILE]

For every case it scales the inputs to [-1, 1] on the training box and standardises
the target, as the library does, then chooses per-input length scales by a pattern
search like autoFit step 3 (train/auto_fit.hpp: x 1/4 and 4, then 1/2 and 2, then
1/sqrt 2 and sqrt 2, where the search keeps a step that lowers the score by 1 %;
here both directions are scored and the better kept, at most 3 passes per step) and
lambda from autoFit's grid extended down to 1e-20, each scored by leave-one-out
error on every training row. The model is kernel ridge regression with the Gaussian
kernel exp(-|(u - v) / l|^2 / 2), the kernel Gaussian random Fourier features sample
(Rahimi & Recht 2007), solved exactly with every training row as a centre: the
limit the library's random features approach. Leave-one-out errors come from one
eigendecomposition of the kernel matrix per length-scale setting (Allen 1974; for
kernel ridge, H = K (K + lambda I)^-1).

Not a learner of the library; it measures what the library's Fourier features
leave on the table (DEVELOPERS.md, "Known gaps"). numpy and scipy from Debian.
"""

import argparse

import numpy as np
from scipy.linalg import eigh

from compare_baselines import load_csv as load  # same CSV layout, same header check

LAMBDAS = [1e-20, 1e-18, 1e-16, 1e-14, 1e-13, 1e-12, 1e-10, 1e-8, 1e-6, 1e-4, 1e-3, 1e-2, 1e-1, 1.0]


def kernel(a, b, lengths):
    za, zb = a / lengths, b / lengths
    squared = (za**2).sum(1)[:, None] + (zb**2).sum(1)[None, :] - 2.0 * za @ zb.T
    return np.exp(-0.5 * np.maximum(squared, 0.0))


def leave_one_out(u, y, lengths):
    """Lowest leave-one-out RMSE over LAMBDAS and its lambda."""
    values, vectors = eigh(kernel(u, u, lengths))
    values = np.maximum(values, 0.0)
    projected = vectors.T @ y
    best = (np.inf, LAMBDAS[0])
    for lam in LAMBDAS:
        shrink = values / (values + lam)
        fitted = vectors @ (shrink * projected)
        leverage = (vectors**2) @ shrink
        if np.any(leverage >= 1.0 - 1e-10):
            continue
        error = np.sqrt(np.mean(((y - fitted) / (1.0 - leverage)) ** 2))
        if error < best[0]:
            best = (error, lam)
    return best


def probe(train_path, test_path):
    x, y = load(train_path)
    xt, yt = load(test_path)
    lower, upper = x.min(0), x.max(0)
    centre, half = (lower + upper) / 2, (upper - lower) / 2
    u, ut = (x - centre) / half, (xt - centre) / half
    mean, deviation = y.mean(), y.std()
    ys = (y - mean) / deviation
    d = x.shape[1]
    lengths = np.full(d, 0.5)
    current, lam = leave_one_out(u, ys, lengths)
    for step in (4.0, 2.0, np.sqrt(2.0)):
        for _ in range(3):
            changed = False
            for j in range(d):
                trials = []
                for factor in (1.0 / step, step):
                    candidate = lengths.copy()
                    candidate[j] *= factor
                    trials.append((leave_one_out(u, ys, candidate), candidate))
                (error, chosen_lambda), candidate = min(trials, key=lambda t: t[0][0])
                if error < 0.99 * current:
                    current, lam, lengths, changed = error, chosen_lambda, candidate, True
            if not changed:
                break
    k = kernel(u, u, lengths)
    weights = np.linalg.solve(k + lam * np.eye(len(k)), ys)
    predicted = kernel(ut, u, lengths) @ weights * deviation + mean
    relative = np.sqrt(np.mean((predicted - yt) ** 2)) / yt.std()
    return relative, lam, lengths


def main():
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("data", help="folder written by ./build/bench/suite --data")
    parser.add_argument("--cases", default="borehole,otl_circuit,piston,wing_weight,ishigami,friedman1,"
                                           "sifront3,sifront10,colebrook")
    parser.add_argument("--size", type=int, default=1000)
    parser.add_argument("--out", help="Markdown file to write (default: print)")
    args = parser.parse_args()
    lines = ["| case | N | test relative RMSE | lambda | length scales (inputs scaled to [-1, 1]) |",
             "|---|---|---|---|---|"]
    for case in args.cases.split(","):
        relative, lam, lengths = probe(f"{args.data}/{case}_train_{args.size}.csv", f"{args.data}/{case}_test.csv")
        lines.append(f"| {case} | {args.size} | {relative:.3g} | {lam:g} | "
                     f"{' '.join(f'{v:.3g}' for v in lengths)} |")
        print(lines[-1], flush=True)
    if args.out:
        with open(args.out, "w") as out:
            out.write("# Kernel ridge with autoFit's search (bench/kernel_ridge_probe.py)\n\n" + "\n".join(lines) + "\n")


if __name__ == "__main__":
    main()
