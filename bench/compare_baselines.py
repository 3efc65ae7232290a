#!/usr/bin/python3
"""Fit general-purpose scikit-learn baselines to the accuracy suite's data sets.

For re-measuring the comparison side by side with the C++ suite: run

    ./build/bench/suite --data DIR              # writes DIR/<case>_train_<N>.csv, DIR/<case>_test.csv
    python3 bench/compare_baselines.py DIR [--out FILE] [--cases borehole,ishigami]
                                           [--sizes 1000,10000] [--threads 2] [--quick]

so both sides fit the very same rows. Cases and sizes are discovered from the file
names (header row x1,...,xd,y); --cases and --sizes only filter. Learners, each with
fixed seeds and tuned only on a validation split (20 %) of the TRAINING file, then
refitted on the whole training file with the chosen settings:

  rff+ridge  Gaussian random Fourier features (RBFSampler, 2048 features) + ridge,
             bandwidth gamma and ridge alpha (0, i.e. least squares, included) chosen
             together on the validation split, one SVD per gamma. Not RidgeCV: its
             leave-one-out shortcut in sklearn 1.2 loses small alphas to cancellation
             when rows > features (ishigami, N = 10 000: relative RMSE 6e-2 against
             4e-8 this way);
  mlp        MLPRegressor (Adam, Glorot init), (64, 64) or (128, 128), early stopping;
  hgb        HistGradientBoostingRegressor, early stopping, learning_rate x max_leaf_nodes grid;
  gp         (N <= 1000) GaussianProcessRegressor, constant * anisotropic RBF + white noise,
             hyperparameters by marginal likelihood on the training file. The noise
             level may go down to 1e-12 (sklearn's default floor 1e-5 binds on these
             noise-free targets: borehole N = 1000 gave 1.4e-3 instead of 3.3e-4);
  krr        (N <= 1000) KernelRidge, rbf kernel, alpha x gamma grid.

Inputs are standardised for every learner but hgb, targets for every learner but hgb
and gp (which uses normalize_y). Metrics on the held-out test rows use the library's
definitions (wavestack/check/metrics.hpp): relative RMSE = RMSE / population std of
the test targets, max abs error / that std, Pearson correlation; fit seconds are wall
time including tuning; ns/point is batched prediction of all test rows (best of 3).

Output: Markdown, to stdout or --out. Progress goes to stderr. The timings, and with
them the comparison, depend on the machine (named in the header), the thread count
(--threads, default 2 like the suite's targets; set through OMP_NUM_THREADS etc.
before numpy is imported) and the BLAS numpy is linked against (the header lists the
thread pools actually found). On a busy machine OpenMP's spin-waiting threads can
slow hgb down 10-40x (one borehole N = 1000 fit: 16 s at load 4 on 2 CPUs, 1.2 s with
OMP_WAIT_POLICY=passive, 0.4 s on one thread): compare timings from an idle machine.
--quick uses small grids: a smoke test, not a result. A full run took 1-1.5 min per
case at N = 1000 (gp 20-45 s of it, d = 3..10) and 6-13 min at N = 10 000 (rff+ridge
about 200 s; hgb 1-8 min depending on load) on 2 threads of an AMD EPYC: plan on
1-2 hours for all nine cases.

Needs only Debian 12 packages: python3-sklearn (1.2), python3-numpy, python3-scipy.
"""

import argparse
import datetime
import glob
import os
import platform
import re
import subprocess
import sys
import time
import warnings

KERNEL_METHODS_MAX_ROWS = 1000  # gp and krr only for training files up to this size
SEED = 0


def parse_args(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("data_dir", metavar="DATA_DIR", help="folder written by `suite --data DIR`")
    parser.add_argument("--out", metavar="FILE", help="write the Markdown here instead of stdout")
    parser.add_argument("--cases", help="comma-separated case names (default: all found)")
    parser.add_argument("--sizes", help="comma-separated training sizes (default: all found)")
    parser.add_argument("--threads", type=int, default=2, help="BLAS/OpenMP threads (default 2)")
    parser.add_argument("--quick", action="store_true", help="small grids, for a smoke test")
    return parser.parse_args(argv)


if __name__ == "__main__":
    ARGS = parse_args()
    # Must happen before numpy (and its BLAS) is loaded.
    for variable in ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS"):
        os.environ[variable] = str(ARGS.threads)

import numpy as np  # noqa: E402
import scipy  # noqa: E402
from scipy.linalg import LinAlgWarning  # noqa: E402
import sklearn  # noqa: E402
from sklearn.compose import TransformedTargetRegressor  # noqa: E402
from sklearn.ensemble import HistGradientBoostingRegressor  # noqa: E402
from sklearn.exceptions import ConvergenceWarning  # noqa: E402
from sklearn.gaussian_process import GaussianProcessRegressor  # noqa: E402
from sklearn.gaussian_process.kernels import RBF, ConstantKernel, WhiteKernel  # noqa: E402
from sklearn.kernel_approximation import RBFSampler  # noqa: E402
from sklearn.kernel_ridge import KernelRidge  # noqa: E402
from sklearn.linear_model import Ridge  # noqa: E402
from sklearn.model_selection import ParameterGrid, train_test_split  # noqa: E402
from sklearn.neural_network import MLPRegressor  # noqa: E402
from sklearn.pipeline import make_pipeline  # noqa: E402
from sklearn.preprocessing import StandardScaler  # noqa: E402


def log(message):
    print(message, file=sys.stderr, flush=True)


# ---------------------------------------------------------------- data


def find_data(data_dir, cases=None, sizes=None):
    """{case: [N, ...]} for every <case>_train_<N>.csv with a matching <case>_test.csv."""
    found = {}
    for path in glob.glob(os.path.join(data_dir, "*_train_*.csv")):
        match = re.fullmatch(r"(.+)_train_(\d+)\.csv", os.path.basename(path))
        if not match:
            continue
        case, n = match.group(1), int(match.group(2))
        if not os.path.exists(os.path.join(data_dir, f"{case}_test.csv")):
            log(f"skipping {path}: no {case}_test.csv")
            continue
        if (cases is None or case in cases) and (sizes is None or n in sizes):
            found.setdefault(case, []).append(n)
    for name in cases or []:
        if name not in found:
            sys.exit(f"case {name!r}: no {name}_train_<N>.csv with {name}_test.csv in {data_dir}")
    return {case: sorted(found[case]) for case in sorted(found)}


def load_csv(path):
    """(x, y) from a CSV with header x1,...,xd,y."""
    with open(path) as handle:
        header = handle.readline().strip().split(",")
    if header[-1] != "y" or header[:-1] != [f"x{i + 1}" for i in range(len(header) - 1)]:
        sys.exit(f"{path}: expected header x1,...,xd,y, got {','.join(header)}")
    table = np.loadtxt(path, delimiter=",", skiprows=1, ndmin=2)
    return table[:, :-1], table[:, -1]


# ---------------------------------------------------------------- tuning


def standardised(model):
    """model on standardised inputs and targets, predicting in original units."""
    return TransformedTargetRegressor(regressor=make_pipeline(StandardScaler(), model),
                                      transformer=StandardScaler())


def validation_split(x, y):
    """(x_fit, x_val, y_fit, y_val): 20 % of the training rows held out for tuning."""
    return train_test_split(x, y, test_size=0.2, random_state=SEED)


def rmse(predicted, reference):
    return np.sqrt(np.mean((predicted - reference) ** 2))


def grid_search(build, grid, x, y):
    """Choose the grid point with the lowest RMSE on a validation split of (x, y),
    then refit on all of (x, y). Returns (model, chosen params)."""
    x_fit, x_val, y_fit, y_val = validation_split(x, y)
    best, best_rmse = None, np.inf
    for params in ParameterGrid(grid):
        error = rmse(build(**params).fit(x_fit, y_fit).predict(x_val), y_val)
        if error < best_rmse:
            best, best_rmse = params, error
    return build(**best).fit(x, y), best


# ---------------------------------------------------------------- learners
# Each takes (x, y, quick) and returns (fitted model, short text of the chosen settings).


def fit_rff_ridge(x, y, quick):
    gammas = np.logspace(-4, 0, 5) if quick else np.logspace(-6, 1, 15)
    alphas = np.concatenate([[0.0], np.logspace(-20, 1, 22)])
    x_fit, x_val, y_fit, y_val = validation_split(x, y)
    best, best_rmse = None, np.inf
    for gamma in gammas:
        features = make_pipeline(StandardScaler(), RBFSampler(gamma=gamma, n_components=2048, random_state=SEED))
        z_fit, z_val = features.fit_transform(x_fit), features.transform(x_val)
        z_mean, y_mean = z_fit.mean(axis=0), y_fit.mean()
        u, s, vt = np.linalg.svd(z_fit - z_mean, full_matrices=False)
        uty, z_val = u.T @ (y_fit - y_mean), (z_val - z_mean) @ vt.T
        for alpha in alphas:  # weights V diag(s / (s^2 + alpha)) U^T y, as Ridge(solver="svd")
            inverse = np.divide(s, s * s + alpha, out=np.zeros_like(s), where=s > 1e-15)
            error = rmse(z_val @ (inverse * uty) + y_mean, y_val)
            if error < best_rmse:
                best, best_rmse = (gamma, alpha), error
    gamma, alpha = best
    model = standardised(make_pipeline(RBFSampler(gamma=gamma, n_components=2048, random_state=SEED),
                                       Ridge(alpha=alpha, solver="svd"))).fit(x, y)
    return model, f"gamma={gamma:.2g}, alpha={f'{alpha:.0e}' if alpha else '0 (least squares)'}"


def fit_mlp(x, y, quick):
    def build(hidden):
        return standardised(MLPRegressor(hidden_layer_sizes=hidden, solver="adam", early_stopping=True,
                                         max_iter=3000, tol=1e-8, n_iter_no_change=50,
                                         random_state=SEED))

    hiddens = [(64, 64)] if quick else [(64, 64), (128, 128)]
    model, best = grid_search(build, {"hidden": hiddens}, x, y)
    return model, f"hidden={best['hidden']}, epochs={model.regressor_[-1].n_iter_}"


def fit_hgb(x, y, quick):
    def build(learning_rate, max_leaf_nodes):
        return HistGradientBoostingRegressor(learning_rate=learning_rate, max_leaf_nodes=max_leaf_nodes,
                                             max_iter=5000, early_stopping=True, n_iter_no_change=20,
                                             random_state=SEED)

    grid = ({"learning_rate": [0.1], "max_leaf_nodes": [31]} if quick else
            {"learning_rate": [0.03, 0.1, 0.3], "max_leaf_nodes": [15, 31, 63]})
    model, best = grid_search(build, grid, x, y)
    return model, (f"lr={best['learning_rate']}, leaves={best['max_leaf_nodes']}, "
                   f"iterations={model.n_iter_}")


def fit_gp(x, y, quick):
    d = x.shape[1]
    kernel = (ConstantKernel(1.0, constant_value_bounds=(1e-5, 1e8)) * RBF(length_scale=np.ones(d)) +
              WhiteKernel(noise_level=1e-6, noise_level_bounds=(1e-12, 1e-1)))
    gp = GaussianProcessRegressor(kernel=kernel, normalize_y=True, n_restarts_optimizer=0 if quick else 2,
                                  random_state=SEED)
    model = make_pipeline(StandardScaler(), gp).fit(x, y)
    fitted = model[-1].kernel_
    lengths = np.atleast_1d(fitted.k1.k2.length_scale)
    return model, (f"variance={fitted.k1.k1.constant_value:.2g}, noise={fitted.k2.noise_level:.1e}, "
                   f"length scales {lengths.min():.2g}..{lengths.max():.2g}")


def fit_krr(x, y, quick):
    def build(alpha, gamma):
        return standardised(KernelRidge(kernel="rbf", alpha=alpha, gamma=gamma))

    grid = ({"alpha": np.logspace(-8, -2, 4), "gamma": np.logspace(-3, 0, 4)} if quick else
            {"alpha": np.logspace(-16, -1, 16), "gamma": np.logspace(-6, 1, 15)})
    model, best = grid_search(build, grid, x, y)
    return model, f"alpha={best['alpha']:.0e}, gamma={best['gamma']:.2g}"


LEARNERS = [("rff+ridge", fit_rff_ridge, None), ("mlp", fit_mlp, None), ("hgb", fit_hgb, None),
            ("gp", fit_gp, KERNEL_METHODS_MAX_ROWS), ("krr", fit_krr, KERNEL_METHODS_MAX_ROWS)]


# ---------------------------------------------------------------- evaluation


def error_metrics(predicted, reference):
    """As wavestack::measureErrors: rmse / population std, max abs / std, Pearson r."""
    spread = np.std(reference)
    p, r = predicted - predicted.mean(), reference - reference.mean()
    denominator = np.sqrt(np.sum(p * p) * np.sum(r * r))
    return {"rel_rmse": rmse(predicted, reference) / spread,
            "max_err": np.max(np.abs(predicted - reference)) / spread,
            "corr": np.sum(p * r) / denominator if denominator > 0 else float("nan")}


def evaluate(fit, train, test, quick):
    """Fit (timed, tuning included), predict the test rows (timed, best of 3), score."""
    start = time.perf_counter()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", ConvergenceWarning)  # e.g. GP noise level at its bound
        warnings.simplefilter("ignore", LinAlgWarning)  # krr's tiny alphas, and then:
        warnings.filterwarnings("ignore", "Singular matrix in solving dual problem")  # lstsq fallback
        model, settings = fit(*train, quick)
    fit_seconds = time.perf_counter() - start
    x_test, y_test = test
    predict_seconds = np.inf
    for _ in range(3):
        start = time.perf_counter()
        predicted = model.predict(x_test)
        predict_seconds = min(predict_seconds, time.perf_counter() - start)
    row = error_metrics(predicted, y_test)
    row.update(fit_s=fit_seconds, ns=predict_seconds * 1e9 / len(y_test), settings=settings)
    return row


# ---------------------------------------------------------------- report


def machine_header(threads, load_start):
    model = platform.processor() or platform.machine()
    try:
        lscpu = subprocess.run(["lscpu"], capture_output=True, text=True, check=True).stdout
        names = re.findall(r"^Model name:\s*(.+)$", lscpu, re.MULTILINE)
        model = names[0].strip() if names else model
    except (OSError, subprocess.CalledProcessError):
        pass
    pools = ""
    try:
        from threadpoolctl import threadpool_info  # a dependency of scikit-learn
        pools = ", ".join(f"{p['internal_api']} {p['num_threads']}" for p in threadpool_info())
    except ImportError:
        pass
    return [f"- machine: {model} ({os.cpu_count()} logical CPUs), {platform.platform()}",
            f"- python {platform.python_version()}, scikit-learn {sklearn.__version__}, "
            f"numpy {np.__version__}, scipy {scipy.__version__}",
            f"- threads: {threads} requested (OMP/OPENBLAS/MKL_NUM_THREADS); pools found: {pools or 'unknown'}",
            f"- 1-minute load average at start / end: {load_start:.2f} / {os.getloadavg()[0]:.2f} "
            f"(timings assume an otherwise idle machine)"]


def markdown_table(header, rows):
    lines = ["| " + " | ".join(header) + " |", "|" + "|".join("---" for _ in header) + "|"]
    lines += ["| " + " | ".join(str(cell) for cell in row) + " |" for row in rows]
    return lines


def main(args):
    cases = args.cases.split(",") if args.cases else None
    sizes = [int(s) for s in args.sizes.split(",")] if args.sizes else None
    found = find_data(args.data_dir, cases, sizes)
    if not found:
        sys.exit(f"no <case>_train_<N>.csv / <case>_test.csv pairs matching the filters in {args.data_dir}")

    results, block_seconds = [], {}
    load_start = os.getloadavg()[0]
    run_start = time.perf_counter()
    for case, case_sizes in found.items():
        test = load_csv(os.path.join(args.data_dir, f"{case}_test.csv"))
        for n in case_sizes:
            block_start = time.perf_counter()
            train = load_csv(os.path.join(args.data_dir, f"{case}_train_{n}.csv"))
            if train[0].shape[1] != test[0].shape[1]:
                sys.exit(f"{case}: training file has {train[0].shape[1]} inputs, test file {test[0].shape[1]}")
            for name, fit, max_rows in LEARNERS:
                if max_rows is not None and n > max_rows:
                    continue
                log(f"{case} N={n} {name} ...")
                row = evaluate(fit, train, test, args.quick)
                row.update(case=case, d=train[0].shape[1], n=n, learner=name)
                results.append(row)
                log(f"  rel. RMSE {row['rel_rmse']:.3g}, fit {row['fit_s']:.1f} s; {row['settings']}")
            block_seconds[case, n] = time.perf_counter() - block_start

    lines = ["# Baselines on the accuracy suite's data", "",
             f"- data: {os.path.abspath(args.data_dir)}; {'QUICK grids (smoke test)' if args.quick else 'full grids'}; "
             f"{datetime.datetime.now().isoformat(timespec='seconds')}"]
    lines += machine_header(args.threads, load_start) + [""]
    lines += markdown_table(
        ["case", "d", "N", "learner", "rel. RMSE", "max abs err / std", "correlation", "fit s", "ns/point",
         "chosen settings"],
        [[r["case"], r["d"], r["n"], r["learner"], f"{r['rel_rmse']:.2e}", f"{r['max_err']:.2e}",
          f"{r['corr']:.6f}", f"{r['fit_s']:.2f}", f"{r['ns']:.0f}", r["settings"]] for r in results])
    lines += ["", "## Best learner per case and N (lowest relative RMSE)", ""]
    best_rows = []
    for (case, n), seconds in block_seconds.items():
        block = [r for r in results if r["case"] == case and r["n"] == n]
        best = min(block, key=lambda r: r["rel_rmse"])
        best_rows.append([case, n, best["learner"], f"{best['rel_rmse']:.2e}", f"{best['max_err']:.2e}",
                          f"{best['fit_s']:.2f}", f"{seconds:.1f}"])
    lines += markdown_table(["case", "N", "best learner", "rel. RMSE", "max abs err / std", "fit s",
                             "all learners s"], best_rows)
    lines += ["", f"Total run time {time.perf_counter() - run_start:.0f} s."]

    text = "\n".join(lines) + "\n"
    if args.out:
        with open(args.out, "w") as handle:
            handle.write(text)
        log(f"wrote {args.out}")
    else:
        sys.stdout.write(text)


if __name__ == "__main__":
    main(ARGS)
