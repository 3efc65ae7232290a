#!/usr/bin/env python3
"""Reference values for tests/metrics_test.cpp, from numpy and scipy (Debian's
python3-numpy, python3-scipy). Run: /usr/bin/python3 tests/reference/metrics_reference.py"""
import numpy as np
from scipy import stats

# The same vectors are written out in the test.
reference = np.array([0.3, -1.2, 2.5, 0.0, 4.1, -0.7, 1.9, 3.3])
predicted = np.array([0.25, -1.0, 2.7, 0.1, 3.8, -0.9, 2.0, 3.1])

err = predicted - reference
rmse = np.sqrt(np.mean(err ** 2))
print(f"rmse          {rmse:.17g}")
print(f"relative_rmse {rmse / np.std(reference):.17g}")   # population std (ddof = 0)
print(f"max_abs_error {np.max(np.abs(err)):.17g}")
print(f"r_squared     {1 - np.sum(err ** 2) / np.sum((reference - reference.mean()) ** 2):.17g}")
print(f"correlation   {stats.pearsonr(predicted, reference)[0]:.17g}")
