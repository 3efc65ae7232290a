#!/usr/bin/env python3
"""End-to-end and error-case tests of the `wavestack` command-line tool.

Usage: python3 cli_test.py --exe PATH_TO_wavestack [unittest arguments...]

Registered with CTest as `cli_test` (tests/CMakeLists.txt). Standard library
only. Every test works in its own temporary directory and runs the tool as a
subprocess, the way a user or a CI job would.

The reference function is the borehole function: water flow through a
borehole between two aquifers,
    W. V. Harper and S. K. Gupta, "Sensitivity/uncertainty analysis of a
    borehole scenario comparing Latin hypercube sampling and deterministic
    sensitivity approaches", Office of Nuclear Waste Isolation, Battelle
    Memorial Institute, Columbus, Ohio, BMI/ONWI-516 (1983);
with the formula and input ranges as given by
    S. Surjanovic and D. Bingham, "Virtual Library of Simulation Experiments:
    Test Functions and Datasets", https://www.sfu.ca/~ssurjano/borehole.html
"""

import csv
import math
import os
import random
import re
import shutil
import signal
import subprocess
import sys
import tempfile
import time
import unittest
import xml.etree.ElementTree as ET

EXE = None  # set from --exe before unittest runs

# ---------------------------------------------------------------------------
# The borehole function (Harper & Gupta 1983; Surjanovic & Bingham, VLSE)
# ---------------------------------------------------------------------------

BOREHOLE_RANGES = [  # name, lower, upper (units as in the VLSE page)
    ("r_w", 0.05, 0.15),       # radius of the borehole, m
    ("r", 100.0, 50000.0),     # radius of influence, m
    ("T_u", 63070.0, 115600.0),  # transmissivity of the upper aquifer, m^2/yr
    ("H_u", 990.0, 1110.0),    # potentiometric head of the upper aquifer, m
    ("T_l", 63.1, 116.0),      # transmissivity of the lower aquifer, m^2/yr
    ("H_l", 700.0, 820.0),     # potentiometric head of the lower aquifer, m
    ("L", 1120.0, 1680.0),     # length of the borehole, m
    ("K_w", 9855.0, 12045.0),  # hydraulic conductivity of the borehole, m/yr
]
INPUT_NAMES = [name for name, _, _ in BOREHOLE_RANGES]
OUTPUT_NAME = "flow"  # water flow rate, m^3/yr


def borehole(r_w, r, T_u, H_u, T_l, H_l, L, K_w):
    """f = 2 pi T_u (H_u - H_l) / (ln(r/r_w) (1 + 2 L T_u / (ln(r/r_w) r_w^2 K_w) + T_u/T_l))."""
    log_ratio = math.log(r / r_w)
    return (2.0 * math.pi * T_u * (H_u - H_l)
            / (log_ratio * (1.0 + 2.0 * L * T_u / (log_ratio * r_w ** 2 * K_w) + T_u / T_l)))


def borehole_rows(count, seed):
    """`count` rows of uniform random inputs in the ranges, plus the flow."""
    rng = random.Random(seed)
    rows = []
    for _ in range(count):
        x = [rng.uniform(lo, hi) for _, lo, hi in BOREHOLE_RANGES]
        rows.append(x + [borehole(*x)])
    return rows


def write_csv(path, header, rows):
    with open(path, "w", newline="") as f:
        writer = csv.writer(f, lineterminator="\n")
        writer.writerow(header)
        for row in rows:
            writer.writerow([repr(v) if isinstance(v, float) else v for v in row])


def read_csv(path_or_text, is_text=False):
    """(header, rows as lists of strings)."""
    if is_text:
        lines = path_or_text.splitlines()
    else:
        with open(path_or_text, newline="") as f:
            lines = f.read().splitlines()
    table = list(csv.reader(lines))
    return table[0], table[1:]


def write_borehole_csv(path, count, seed):
    write_csv(path, INPUT_NAMES + [OUTPUT_NAME], borehole_rows(count, seed))


# ---------------------------------------------------------------------------
# Running the tool
# ---------------------------------------------------------------------------

# Signs that an error escaped as a crash instead of one clean line.
CRASH_MARKERS = ("terminate called", "Aborted", "core dumped", "Segmentation fault", "Traceback",
                 "what():", "stack trace", "Assertion", "AddressSanitizer", "#0 ", "#1 ")


def run(args, cwd, timeout=120, **kwargs):
    return subprocess.run([EXE] + list(args), cwd=cwd, capture_output=True, text=True, timeout=timeout, **kwargs)


def describe(result):
    return "exit {}\n--- stdout:\n{}\n--- stderr:\n{}".format(result.returncode, result.stdout[-3000:],
                                                              result.stderr[-3000:])


class ToolTestCase(unittest.TestCase):
    """Gives each test its own temporary directory (self.dir), removed afterwards."""

    def setUp(self):
        self.dir = tempfile.mkdtemp(prefix="wavestack_cli_test_")
        self.addCleanup(shutil.rmtree, self.dir, ignore_errors=True)

    def path(self, name):
        return os.path.join(self.dir, name)

    def run_tool(self, *args, **kwargs):
        return run(args, self.dir, **kwargs)

    def assert_ok(self, result):
        self.assertEqual(result.returncode, 0, describe(result))

    def assert_input_error(self, result, *needles, patterns=()):
        """Exit code 2, exactly one non-empty line on stderr, nothing on
        stdout, no crash; the line contains every needle and matches every
        regular expression in `patterns`. Returns the line."""
        self.assertEqual(result.returncode, 2, describe(result))
        for marker in CRASH_MARKERS:
            self.assertNotIn(marker, result.stderr, describe(result))
        lines = [line for line in result.stderr.splitlines() if line.strip()]
        self.assertEqual(len(lines), 1, "expected exactly one line on stderr\n" + describe(result))
        self.assertEqual(result.stderr.count("\n"), 1, "expected one line and no blank ones\n" + describe(result))
        self.assertEqual(result.stdout, "", "an error should print nothing on stdout\n" + describe(result))
        line = lines[0]
        for needle in needles:
            self.assertIn(needle, line, describe(result))
        for pattern in patterns:
            self.assertRegex(line, pattern, describe(result))
        return line

    def listing(self):
        return sorted(os.listdir(self.dir))


# ---------------------------------------------------------------------------
# 1. End to end on the borehole function
# ---------------------------------------------------------------------------

FIT_ROWS, VERIFY_ROWS = 2000, 5000
FIT_SEED, VERIFY_SEED = 1983, 2013
FIT_SECONDS_LIMIT = 60.0  # a runaway-search guard, not a speed target: this fit took 18.6 s on 2 cores


def expected_report_svgs(d, m, has_history, has_tuning):
    """The number of <svg> charts in a report, by the rule documented in the
    header comment of tools/cli/report_page.hpp: "2 m + (history ? 1 : 0) +
    (tuning history ? 1 : 0) + d m SVG elements for d inputs and m outputs"
    (per output a scatter and an error histogram; the training curve; the
    tuning curve; one slice per (output, input) pair)."""
    return 2 * m + (1 if has_history else 0) + (1 if has_tuning else 0) + d * m


class BoreholeEndToEnd(ToolTestCase):
    """Fits once (setUpClass, timed) and checks every command on the model.
    The shared files live in a class directory; each test writes its own
    files in its own directory."""

    @classmethod
    def setUpClass(cls):
        cls.shared = tempfile.mkdtemp(prefix="wavestack_cli_borehole_")
        cls.train = os.path.join(cls.shared, "train.csv")
        cls.test = os.path.join(cls.shared, "test.csv")
        cls.model = os.path.join(cls.shared, "borehole.wsm")
        write_borehole_csv(cls.train, FIT_ROWS, FIT_SEED)
        write_borehole_csv(cls.test, VERIFY_ROWS, VERIFY_SEED)
        start = time.monotonic()
        cls.fit_result = run(["fit", "train.csv", "-o", "borehole.wsm", "--seed", "7"], cls.shared)
        cls.fit_seconds = time.monotonic() - start
        cls.info_result = run(["info", cls.model], cls.shared)

    @classmethod
    def tearDownClass(cls):
        shutil.rmtree(cls.shared, ignore_errors=True)

    def setUp(self):
        super().setUp()
        self.assertEqual(self.fit_result.returncode, 0, "the shared fit failed\n" + describe(self.fit_result))

    def predict(self, rows, header, *extra, name=None):
        """Runs predict on rows (written to `name`), returns (header, rows) of its stdout."""
        name = name or "in_{}.csv".format(len(os.listdir(self.dir)))
        write_csv(self.path(name), header, rows)
        result = self.run_tool("predict", self.model, name, *extra)
        self.assert_ok(result)
        return read_csv(result.stdout, is_text=True)

    # -- fit -----------------------------------------------------------------

    def test_fit_summary_and_time(self):
        out = self.fit_result.stdout
        self.assertTrue(os.path.isfile(self.model))
        self.assertFalse(os.path.exists(self.model + ".tmp"))
        self.assertLess(self.fit_seconds, FIT_SECONDS_LIMIT, "fit took {:.1f} s".format(self.fit_seconds))
        # rows used, inputs, outputs, architecture, time, held-out metrics
        self.assertRegex(out, r"rows:\s+{}\b".format(FIT_ROWS), out)
        inputs_line = next((l for l in out.splitlines() if l.startswith("inputs:")), "")
        self.assertIn(str(len(INPUT_NAMES)), inputs_line, out)
        for name in INPUT_NAMES:
            self.assertRegex(inputs_line, r"[(\s,]{}[,)]".format(re.escape(name)), out)
        self.assertRegex(out, r"outputs:\s+1 \(flow\)", out)
        self.assertRegex(out, r"network:.*layer.*width \d+", out)
        self.assertRegex(out, r"time:\s+[0-9.]+ s", out)
        for column in ("rel. RMSE", "max abs error", "R^2"):
            self.assertIn(column, out)
        row = re.search(r"^\s+flow\s+(\S+)\s+(\S+)\s+(\S+)\s*$", out, re.M)
        self.assertIsNotNone(row, "no held-out metrics row for flow\n" + out)
        rel_rmse, max_abs, r2 = (float(v) for v in row.groups())
        self.assertLess(rel_rmse, 0.01, out)
        self.assertGreater(max_abs, 0.0, out)
        self.assertGreater(r2, 0.999, out)
        print("\n  [fit of {} borehole rows: {:.2f} s wall]".format(FIT_ROWS, self.fit_seconds), file=sys.stderr)

    # -- verify --------------------------------------------------------------

    def test_verify_within_tolerance(self):
        result = self.run_tool("verify", self.model, self.test, "--max-rel-rmse", "0.01")
        self.assert_ok(result)
        self.assertIn("PASS", result.stdout)
        self.assertIn(str(VERIFY_ROWS), result.stdout)

    def test_verify_impossible_tolerance_prints_worst_rows(self):
        result = self.run_tool("verify", self.model, self.test, "--max-abs-error", "1e-12")
        self.assertEqual(result.returncode, 1, describe(result))
        self.assertIn("FAIL", result.stdout)
        self.assertIn("worst rows", result.stdout)
        worst = re.findall(r"^\s+line (\d+)\s+true (\S+)\s+predicted (\S+)", result.stdout, re.M)
        self.assertGreaterEqual(len(worst), 1, result.stdout)
        # The printed line numbers are file lines (header = line 1) holding the printed true value.
        with open(self.test) as f:
            lines = f.read().splitlines()
        flow_column = lines[0].split(",").index(OUTPUT_NAME)
        errors = []
        for line, true_value, predicted in worst:
            stored = float(lines[int(line) - 1].split(",")[flow_column])
            self.assertAlmostEqual(stored, float(true_value), delta=1e-5 * abs(stored) + 1e-9,
                                   msg="line {}: {}".format(line, result.stdout))
            errors.append(abs(float(predicted) - float(true_value)))
        self.assertEqual(errors, sorted(errors, reverse=True), "worst rows not sorted\n" + result.stdout)

    # -- predict -------------------------------------------------------------

    def test_predict_header_with_and_without_output_column(self):
        rows = borehole_rows(50, 11)
        # The file holds "flow": the prediction becomes "flow_predicted".
        header, out = self.predict(rows, INPUT_NAMES + [OUTPUT_NAME])
        self.assertEqual(header, INPUT_NAMES + [OUTPUT_NAME, OUTPUT_NAME + "_predicted"])
        self.assertEqual(len(out), len(rows))
        # Without "flow" the prediction is named "flow".
        header2, out2 = self.predict([r[:-1] for r in rows], INPUT_NAMES)
        self.assertEqual(header2, INPUT_NAMES + [OUTPUT_NAME])
        for a, b, row in zip(out, out2, rows):
            self.assertEqual(float(a[-1]), float(b[-1]))
            self.assertAlmostEqual(float(b[-1]), row[-1], delta=0.05 * abs(row[-1]) + 1.0)

    def test_predict_matches_columns_by_name_and_passes_extra_columns(self):
        rows = borehole_rows(300, 12)
        header, plain = self.predict(rows, INPUT_NAMES + [OUTPUT_NAME])
        # Shuffled columns and an extra text column, including awkward CSV text.
        order = list(range(len(INPUT_NAMES) + 1))
        random.Random(5).shuffle(order)
        names = INPUT_NAMES + [OUTPUT_NAME]
        shuffled_header = ["run_id"] + [names[i] for i in order]
        run_ids = ["run-{:04d}".format(i) if i % 7 else 'case "{}", variant b'.format(i) for i in range(len(rows))]
        shuffled_rows = [[rid] + [row[i] for i in order] for rid, row in zip(run_ids, rows)]
        self.assertNotEqual(shuffled_header[1:], names)
        header2, shuffled = self.predict(shuffled_rows, shuffled_header, "-o", "-", name="shuffled.csv")
        self.assertEqual(header2, shuffled_header + [OUTPUT_NAME + "_predicted"])
        for a, b, rid, source in zip(plain, shuffled, run_ids, shuffled_rows):
            self.assertEqual(b[0], rid)  # text passed through unchanged
            self.assertEqual([float(v) for v in b[1:-1]], source[1:])
            self.assertEqual(float(a[-1]), float(b[-1]), "predictions differ across column orders")

        # The same through -o: the file equals what stdout showed, and no .tmp is left.
        result = self.run_tool("predict", self.model, "shuffled.csv", "-o", "out.csv")
        self.assert_ok(result)
        self.assertEqual(read_csv(self.path("out.csv")), (header2, shuffled))
        self.assertFalse([f for f in self.listing() if f.endswith(".tmp")])

    def test_predict_gradient_matches_finite_differences(self):
        rng = random.Random(21)
        points = []
        for _ in range(4):  # interior points, away from the domain's edges
            points.append([lo + (hi - lo) * rng.uniform(0.2, 0.8) for _, lo, hi in BOREHOLE_RANGES])
        header, out = self.predict(points, INPUT_NAMES, "--gradient")
        gradient_names = ["d({})/d({})".format(OUTPUT_NAME, name) for name in INPUT_NAMES]
        self.assertEqual(header, INPUT_NAMES + [OUTPUT_NAME] + gradient_names)

        # The model's own predictions at x +- h e_j and x +- 2h e_j, h = 1e-3 of
        # the range, combined into the fourth-order central difference
        # (8 (f(x+h) - f(x-h)) - (f(x+2h) - f(x-2h))) / 12h (Fornberg 1988,
        # "Generation of finite difference formulas on arbitrarily spaced
        # grids"): its truncation error, h^4 / 30 times the fifth derivative,
        # stays below the tolerance for the nearly inert input r, and h is
        # large enough that the model's rounding noise does not reach it (with
        # lambdas below 1e-14 the amplitudes are large and cancel, and the
        # second-order difference failed at h = 1e-5 as it did at 1e-4).
        steps = [1e-3 * (hi - lo) for _, lo, hi in BOREHOLE_RANGES]
        offsets = (1.0, -1.0, 2.0, -2.0)
        shifted = []
        for x in points:
            for j, h in enumerate(steps):
                for offset in offsets:
                    y = list(x)
                    y[j] += offset * h
                    shifted.append(y)
        _, shifted_out = self.predict(shifted, INPUT_NAMES)
        values = [float(r[-1]) for r in shifted_out]

        k = 0
        for p, row in enumerate(out):
            gradient = [float(v) for v in row[len(INPUT_NAMES) + 1:]]
            # Scale: the output's change across each input's range, largest over inputs.
            scale = max(abs(g) * (hi - lo) for g, (_, lo, hi) in zip(gradient, BOREHOLE_RANGES))
            for j, h in enumerate(steps):
                plus, minus, plus2, minus2 = values[k:k + 4]
                k += 4
                difference = (8.0 * (plus - minus) - (plus2 - minus2)) / (12.0 * h)
                span = BOREHOLE_RANGES[j][2] - BOREHOLE_RANGES[j][1]
                # ~1e-4 relative; for derivatives near zero, relative to the largest one.
                tolerance = 1e-4 * max(abs(gradient[j]), 1e-3 * scale / span)
                self.assertLessEqual(abs(difference - gradient[j]), tolerance,
                                     "point {}, {}: gradient {!r}, central difference {!r}".format(
                                         p, gradient_names[j], gradient[j], difference))

    def test_predict_flag_outside(self):
        inside = [(lo + hi) / 2.0 for _, lo, hi in BOREHOLE_RANGES]
        far = [hi + 10.0 * (hi - lo) for _, lo, hi in BOREHOLE_RANGES]
        one_off = list(inside)
        one_off[1] = BOREHOLE_RANGES[1][1] - 50.0  # r below its range, the rest inside
        header, out = self.predict([inside, far, one_off], INPUT_NAMES, "--flag-outside")
        self.assertEqual(header, INPUT_NAMES + [OUTPUT_NAME, "outside_domain"])
        self.assertEqual([r[-1] for r in out], ["0", "1", "1"])

    # -- info ----------------------------------------------------------------

    def test_info(self):
        result = self.info_result
        self.assert_ok(result)
        self.assertIn("format version 1", result.stdout)
        for name in INPUT_NAMES + [OUTPUT_NAME]:
            self.assertRegex(result.stdout, r"(?m)^\s+{}\s".format(re.escape(name)), result.stdout)

    # -- report --------------------------------------------------------------

    def check_report(self, model, fitted_with_tune):
        result = self.run_tool("report", model, self.test, "-o", "report.html")
        self.assert_ok(result)
        self.assertEqual(self.listing(), ["report.html"])  # no .tmp left behind
        tree = ET.parse(self.path("report.html"))  # well-formed XML
        tags = [element.tag.rsplit("}", 1)[-1] for element in tree.iter()]
        self.assertEqual(tags.count("script"), 0)
        with open(self.path("report.html"), encoding="utf-8") as f:
            self.assertNotIn("<script", f.read().lower())
        info = run(["info", model], self.dir)
        self.assert_ok(info)
        has_history = "training curve" in info.stdout
        has_tuning = "Adam tuning" in info.stdout
        self.assertTrue(has_history, info.stdout)
        self.assertEqual(has_tuning, fitted_with_tune, info.stdout)
        expected = expected_report_svgs(len(INPUT_NAMES), 1, has_history, has_tuning)
        self.assertEqual(expected, 12 if fitted_with_tune else 11)
        self.assertEqual(tags.count("svg"), expected)

    def test_report(self):
        self.check_report(self.model, fitted_with_tune=True)  # fit tunes by default

    def test_report_renders_in_browser(self):
        """Opt-in: headless Chromium (Debian's chromium package) renders the
        report without console or loading errors; skipped without Chromium."""
        self.assert_ok(self.run_tool("report", self.model, self.test, "-o", "report.html"))
        script = os.path.join(os.path.dirname(os.path.abspath(__file__)), "render_in_browser.py")
        result = subprocess.run([sys.executable, script, self.path("report.html"), self.path("report.png")],
                                capture_output=True, text=True, timeout=180)
        if result.returncode == 77:
            self.skipTest(result.stdout.strip() or "chromium not installed")
        self.assertEqual(result.returncode, 0, result.stdout + result.stderr)
        self.assertTrue(os.path.getsize(self.path("report.png")) > 10000)

    def test_report_of_untuned_model(self):
        start = time.monotonic()
        # A given spread skips the spread searches (about 13 s): this test is about --tune 0.
        result = self.run_tool("fit", self.train, "-o", "untuned.wsm", "--tune", "0", "--frequency-stddev", "0.125",
                               "--quiet")
        self.assert_ok(result)
        self.assertLess(time.monotonic() - start, FIT_SECONDS_LIMIT)
        shutil.move(self.path("untuned.wsm"), os.path.join(self.shared, "untuned.wsm"))
        self.check_report(os.path.join(self.shared, "untuned.wsm"), fitted_with_tune=False)

    def test_report_rule_is_still_documented(self):
        """expected_report_svgs() follows report_page.hpp's header comment; if
        that comment changes, this test says so (update the rule above)."""
        header = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..", "tools", "cli",
                              "report_page.hpp")
        if not os.path.isfile(header):
            self.skipTest("tools/cli/report_page.hpp not found next to the test")
        with open(header, encoding="utf-8") as f:
            comment = " ".join(line.strip().lstrip("/").strip() for line in f if line.lstrip().startswith("///"))
        comment = re.sub(r"\s+", " ", comment)
        self.assertIn("2 m + (history ? 1 : 0) + (tuning history ? 1 : 0) + d m SVG elements", comment,
                      "the documented chart count in report_page.hpp changed; update expected_report_svgs()")

    # -- fit options from the interface --------------------------------------

    def test_fit_inputs_option_selects_and_orders_columns(self):
        """`--inputs NAME,NAME...` as the interface specifies it."""
        chosen = ["K_w", "r_w", "r", "H_u", "H_l"]
        result = self.run_tool("fit", self.train, "-o", "subset.wsm", "--inputs", ",".join(chosen),
                               "--frequency-stddev", "0.125", "--quiet")
        self.assert_ok(result)
        info = self.run_tool("info", "subset.wsm")
        self.assert_ok(info)
        listed = re.findall(r"(?m)^  (\S+)\s+trained on", info.stdout)
        self.assertEqual(listed, chosen, info.stdout)


# ---------------------------------------------------------------------------
# 2. Error cases: exit 2, one line on stderr naming what is wrong
# ---------------------------------------------------------------------------

SMALL_HEADER = INPUT_NAMES + [OUTPUT_NAME]


class ErrorCases(ToolTestCase):

    @classmethod
    def setUpClass(cls):
        # One small valid model for the predict/verify/info/report cases.
        cls.shared = tempfile.mkdtemp(prefix="wavestack_cli_errors_")
        cls.model = os.path.join(cls.shared, "small.wsm")
        cls.data = os.path.join(cls.shared, "small.csv")
        write_borehole_csv(cls.data, 300, 3)
        cls.fit_result = run(["fit", "small.csv", "-o", "small.wsm", "--quiet"], cls.shared)
        with open(cls.model, "rb") as f:
            cls.model_bytes = f.read()

    @classmethod
    def tearDownClass(cls):
        shutil.rmtree(cls.shared, ignore_errors=True)

    def setUp(self):
        super().setUp()
        self.assertEqual(self.fit_result.returncode, 0, describe(self.fit_result))

    def write_lines(self, name, lines):
        with open(self.path(name), "w", newline="") as f:
            f.write("".join(line + "\n" for line in lines))

    def borehole_lines(self, count, seed=4):
        rows = borehole_rows(count, seed)
        return [",".join(SMALL_HEADER)] + [",".join(repr(v) for v in row) for row in rows]

    def test_non_numeric_cell(self):
        lines = self.borehole_lines(40)
        cells = lines[6].split(",")  # file line 7
        cells[3] = "12x3"            # column 4, "H_u"
        lines[6] = ",".join(cells)
        self.write_lines("bad.csv", lines)
        checks = dict(patterns=[r"\bline 7\b", r"\bcolumn 4\b", r"\bH_u\b", r"12x3"])
        with self.subTest("fit"):
            self.assert_input_error(self.run_tool("fit", "bad.csv", "-o", "m.wsm"), "bad.csv", **checks)
        with self.subTest("predict"):
            self.assert_input_error(self.run_tool("predict", self.model, "bad.csv"), "bad.csv", **checks)
        with self.subTest("verify"):
            self.assert_input_error(self.run_tool("verify", self.model, "bad.csv", "--max-rel-rmse", "1"),
                                    "bad.csv", **checks)
        self.assertEqual(self.listing(), ["bad.csv"])

    def test_missing_column_for_predict(self):
        lines = self.borehole_lines(20)
        dropped = INPUT_NAMES.index("T_l")
        self.write_lines("partial.csv", [",".join(c for i, c in enumerate(l.split(",")) if i != dropped)
                                         for l in lines])
        self.assert_input_error(self.run_tool("predict", self.model, "partial.csv"), "partial.csv", "T_l")

    def test_ragged_row(self):
        lines = self.borehole_lines(30)
        lines[9] = ",".join(lines[9].split(",")[:-2])  # file line 10: two fields short
        self.write_lines("ragged.csv", lines)
        self.assert_input_error(self.run_tool("fit", "ragged.csv", "-o", "m.wsm"), "ragged.csv",
                                patterns=[r"\bline 10\b"])
        self.assertEqual(self.listing(), ["ragged.csv"])

    def test_nan_cell(self):
        for spelling in ("nan", "NaN", "inf"):
            with self.subTest(spelling):
                lines = self.borehole_lines(30)
                cells = lines[4].split(",")  # file line 5
                cells[1] = spelling          # column 2, "r"
                lines[4] = ",".join(cells)
                self.write_lines("nan.csv", lines)
                self.assert_input_error(self.run_tool("fit", "nan.csv", "-o", "m.wsm"), "nan.csv",
                                        patterns=[r"\bline 5\b", r"\bcolumn 2\b", r'"r"', re.escape(spelling)])
                self.assertFalse(os.path.exists(self.path("m.wsm")))

    def test_nan_in_first_data_row(self):
        """A NaN in the first data row is as wrong as one further down; it
        must not make fit treat the column as text and silently drop it."""
        lines = self.borehole_lines(300)
        cells = lines[1].split(",")  # file line 2, the first data row
        cells[1] = "nan"             # column 2, "r"
        lines[1] = ",".join(cells)
        self.write_lines("nan.csv", lines)
        self.assert_input_error(self.run_tool("fit", "nan.csv", "-o", "m.wsm"), "nan.csv",
                                patterns=[r"\bline 2\b", r"\bcolumn 2\b", r'"r"'])
        self.assertEqual(self.listing(), ["nan.csv"])

    def test_empty_file(self):
        self.write_lines("empty.csv", [])
        line = self.assert_input_error(self.run_tool("fit", "empty.csv", "-o", "m.wsm"), "empty.csv")
        self.assertIn("empty", line.lower())

    def test_header_only_file(self):
        self.write_lines("header.csv", [",".join(SMALL_HEADER)])
        line = self.assert_input_error(self.run_tool("fit", "header.csv", "-o", "m.wsm"), "header.csv")
        self.assertRegex(line.lower(), r"no data|data row")
        line = self.assert_input_error(self.run_tool("predict", self.model, "header.csv"), "header.csv")

    def test_duplicate_column_name(self):
        lines = self.borehole_lines(30)
        names = lines[0].split(",")
        names[5] = "T_u"  # column 6 repeats column 3
        lines[0] = ",".join(names)
        self.write_lines("dup.csv", lines)
        self.assert_input_error(self.run_tool("fit", "dup.csv", "-o", "m.wsm"), "dup.csv", '"T_u"',
                                patterns=[r"\bline 1\b"])

    def test_unknown_flag(self):
        self.write_lines("data.csv", self.borehole_lines(30))
        for command in (["fit", "data.csv", "-o", "m.wsm"], ["predict", self.model, "data.csv"],
                        ["info", self.model], ["verify", self.model, "data.csv", "--max-rel-rmse", "1"]):
            with self.subTest(command[0]):
                self.assert_input_error(self.run_tool(*command, "--frobnicate"), "--frobnicate")

    def test_unknown_subcommand(self):
        self.assert_input_error(self.run_tool("frobnicate", "data.csv"), "frobnicate")

    def test_bad_sampler_value(self):
        self.write_lines("data.csv", self.borehole_lines(30))
        self.assert_input_error(self.run_tool("fit", "data.csv", "-o", "m.wsm", "--sampler", "hamiltonian"),
                                "--sampler", "hamiltonian")

    def test_missing_data_file(self):
        with self.subTest("fit"):
            self.assert_input_error(self.run_tool("fit", "no_such_data.csv", "-o", "m.wsm"), "no_such_data.csv")
        with self.subTest("predict"):
            self.assert_input_error(self.run_tool("predict", self.model, "no_such_data.csv"), "no_such_data.csv")
        self.assertEqual(self.listing(), [])

    def test_missing_model_file(self):
        self.write_lines("data.csv", self.borehole_lines(30))
        for command in (["info", "no_such_model.wsm"], ["predict", "no_such_model.wsm", "data.csv"],
                        ["verify", "no_such_model.wsm", "data.csv", "--max-rel-rmse", "1"]):
            with self.subTest(command[0]):
                self.assert_input_error(self.run_tool(*command), "no_such_model.wsm")

    def test_corrupt_model_file(self):
        self.write_lines("data.csv", self.borehole_lines(30))
        size = len(self.model_bytes)
        for offset in (0, 9, 40, size // 2, size - 1):  # magic, header, payload
            with self.subTest(offset=offset):
                damaged = bytearray(self.model_bytes)
                damaged[offset] ^= 0x10
                with open(self.path("corrupt.wsm"), "wb") as f:
                    f.write(damaged)
                for command in (["info", "corrupt.wsm"], ["predict", "corrupt.wsm", "data.csv"]):
                    self.assert_input_error(self.run_tool(*command), "corrupt.wsm",
                                            patterns=[r"byte offset \d+"])

    def test_truncated_model_file(self):
        for length in (0, 10, len(self.model_bytes) // 2, len(self.model_bytes) - 1):
            with self.subTest(length=length):
                with open(self.path("short.wsm"), "wb") as f:
                    f.write(self.model_bytes[:length])
                line = self.assert_input_error(self.run_tool("info", "short.wsm"), "short.wsm")
                self.assertIn("truncated", line.lower())

    def test_verify_without_tolerance(self):
        self.write_lines("data.csv", self.borehole_lines(30))
        line = self.assert_input_error(self.run_tool("verify", self.model, "data.csv"))
        self.assertTrue("--max-rel-rmse" in line or "--max-abs-error" in line, line)

    def test_holdout_out_of_range(self):
        self.write_lines("data.csv", self.borehole_lines(200))
        for value in ("1.5", "-0.1", "0.95"):
            with self.subTest(value):
                self.assert_input_error(self.run_tool("fit", "data.csv", "-o", "m.wsm", "--holdout", value),
                                        "--holdout")
        self.assertEqual(self.listing(), ["data.csv"])

    def test_unknown_target_column(self):
        self.write_lines("data.csv", self.borehole_lines(200))
        self.assert_input_error(self.run_tool("fit", "data.csv", "-o", "m.wsm", "--target", "discharge"),
                                "data.csv", "discharge")
        self.assertEqual(self.listing(), ["data.csv"])

    def test_output_in_nonexistent_directory(self):
        self.write_lines("data.csv", self.borehole_lines(200))
        for command in (["fit", "data.csv", "-o", "missing_dir/m.wsm", "--quiet"],
                        ["predict", self.model, "data.csv", "-o", "missing_dir/p.csv"],
                        ["report", self.model, "data.csv", "-o", "missing_dir/r.html"]):
            with self.subTest(command[0]):
                self.assert_input_error(self.run_tool(*command), "missing_dir")
                self.assertEqual(self.listing(), ["data.csv"])  # no partial file, no directory
                self.assertFalse([f for f in os.listdir(self.shared) if f.endswith(".tmp")])

    def test_fit_checks_output_path_before_fitting(self):
        """A fit that cannot write its model should say so before spending
        the fitting time, with no progress lines before the error."""
        self.write_lines("data.csv", self.borehole_lines(300))
        self.assert_input_error(self.run_tool("fit", "data.csv", "-o", "missing_dir/m.wsm"), "missing_dir/m.wsm")
        self.assertEqual(self.listing(), ["data.csv"])

    def test_duplicate_target(self):
        """--target flow --target flow would give a model with two outputs of
        one name and a predict header with a repeated column."""
        self.write_lines("data.csv", self.borehole_lines(200))
        self.assert_input_error(self.run_tool("fit", "data.csv", "-o", "m.wsm", "--target", "flow",
                                              "--target", "flow"), "flow")
        self.assertEqual(self.listing(), ["data.csv"])


# ---------------------------------------------------------------------------
# 3. Ctrl-C during fit
# ---------------------------------------------------------------------------

class Interrupt(ToolTestCase):

    def interrupt_fit(self, extra):
        write_borehole_csv(self.path("data.csv"), 5000, 5)
        process = subprocess.Popen([EXE, "fit", "data.csv", "-o", "model.wsm"] + extra, cwd=self.dir,
                                   stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
        try:
            time.sleep(1.5)
            self.assertIsNone(process.poll(), "the fit ended before it could be interrupted")
            process.send_signal(signal.SIGINT)
            sent = time.monotonic()
            stdout, stderr = process.communicate(timeout=10)
            waited = time.monotonic() - sent
        finally:
            if process.poll() is None:
                process.kill()
                process.communicate()
        result = subprocess.CompletedProcess(process.args, process.returncode, stdout, stderr)
        self.assertEqual(result.returncode, 130, describe(result))
        self.assertLess(waited, 10.0)
        for marker in CRASH_MARKERS:
            self.assertNotIn(marker, stderr)
        self.assertRegex(stderr.lower(), r"no model (file )?was written", describe(result))
        self.assertEqual(self.listing(), ["data.csv"])  # neither model.wsm nor model.wsm.tmp
        return waited

    def test_sigint_during_fit(self):
        waited = self.interrupt_fit(["--sampler", "metropolis", "--tune", "100000", "--frequency-stddev", "0.2"])
        print("\n  [exit {:.2f} s after SIGINT]".format(waited), file=sys.stderr)

    def test_sigint_during_frequency_spread_search(self):
        self.interrupt_fit(["--tune", "100000"])


# ---------------------------------------------------------------------------
# 4. Progress output
# ---------------------------------------------------------------------------

class Progress(ToolTestCase):

    def test_progress_lines_on_a_pipe(self):
        write_borehole_csv(self.path("data.csv"), 1000, 6)  # 9 progress lines in 1.9 s (5 000 rows: 22 s)
        start = time.monotonic()
        result = self.run_tool("fit", "data.csv", "-o", "m.wsm", "--frequency-stddev", "0.125")
        seconds = time.monotonic() - start
        self.assert_ok(result)
        self.assertNotIn("\r", result.stderr)
        self.assertNotIn("\x1b", result.stderr)
        lines = result.stderr.splitlines()
        self.assertGreaterEqual(len(lines), 2, describe(result))
        for line in lines:
            self.assertTrue(line.strip(), "blank progress line\n" + describe(result))
            self.assertTrue(all(c.isprintable() for c in line), repr(line))
        self.assertIn("wrote m.wsm", result.stdout)
        print("\n  [progress fit: {:.2f} s, {} progress lines]".format(seconds, len(lines)), file=sys.stderr)

    def test_quiet_prints_nothing(self):
        write_borehole_csv(self.path("data.csv"), 300, 7)
        result = self.run_tool("fit", "data.csv", "-o", "m.wsm", "--quiet")
        self.assert_ok(result)
        self.assertEqual(result.stderr, "")
        self.assertEqual(result.stdout, "")
        self.assertTrue(os.path.isfile(self.path("m.wsm")))


def main():
    global EXE
    argv = list(sys.argv[1:])
    for i, arg in enumerate(argv):
        if arg == "--exe" and i + 1 < len(argv):
            EXE = argv[i + 1]
            del argv[i:i + 2]
            break
        if arg.startswith("--exe="):
            EXE = arg[len("--exe="):]
            del argv[i]
            break
    if not EXE:
        print("usage: cli_test.py --exe PATH_TO_wavestack [unittest arguments]", file=sys.stderr)
        return 2
    EXE = os.path.abspath(EXE)
    if not os.access(EXE, os.X_OK):
        print("cli_test.py: {} is not an executable".format(EXE), file=sys.stderr)
        return 2
    program = unittest.main(argv=[sys.argv[0]] + argv, exit=False, verbosity=2)
    return 0 if program.result.wasSuccessful() else 1


if __name__ == "__main__":
    sys.exit(main())
