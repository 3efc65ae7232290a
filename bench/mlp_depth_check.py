#!/usr/bin/python3
"""Does the d = 10 Si-front need composed layers? One hidden layer against two.

Evidence for the tuning report (bench/results/tuning_experiment.md): fits
scikit-learn's MLPRegressor (Adam, Glorot init, early stopping, seed 0) with one
hidden layer of 640 units (as many ridge units as the library's 4-layer network
of 128 per layer has input rows) and with two hidden layers of 64, on the
suite's data:

    ./build/bench/suite --cases sifront10 --sizes 10000 --data DIR --out /dev/null
    python3 bench/mlp_depth_check.py DIR

Prints held-out relative RMSE (RMSE / population std of the test targets) and
Pearson correlation for each.
"""
import sys

import numpy as np
from sklearn.neural_network import MLPRegressor


def load(path):
    data = np.loadtxt(path, delimiter=",", skiprows=1)
    return data[:, :-1], data[:, -1]


def main():
    folder = sys.argv[1] if len(sys.argv) > 1 else "."
    x, y = load(f"{folder}/sifront10_train_10000.csv")
    xt, yt = load(f"{folder}/sifront10_test.csv")
    mean, std = x.mean(0), x.std(0)
    x, xt = (x - mean) / std, (xt - mean) / std
    scale = y.std()
    for layers, activation in [((640,), "tanh"), ((640,), "relu"), ((64, 64), "tanh"), ((64, 64), "relu")]:
        model = MLPRegressor(layers, activation=activation, early_stopping=True, random_state=0, max_iter=500)
        model.fit(x, y / scale)
        p = model.predict(xt) * scale
        rel = np.sqrt(np.mean((p - yt) ** 2)) / yt.std()
        print(f"hidden {layers} {activation}: relative RMSE {rel:.3f}, correlation {np.corrcoef(p, yt)[0, 1]:.4f}")


if __name__ == "__main__":
    main()
