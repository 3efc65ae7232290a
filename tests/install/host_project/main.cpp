// A host program using only the installed public API: fit y = sin(x0) + x1^2 on
// 200 points, then check the error on points the fit never saw. Returns non-zero
// on any failure, so the install test fails with it.
#include <wavestack/wavestack.hpp>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <exception>

namespace {

double target(double x0, double x1)
{
    return std::sin(x0) + x1 * x1;
}

// Deterministic, well-spread points in [-1, 1]^2 (a golden-ratio lattice), so the
// test does not depend on any random number generator.
wavestack::Matrix latticePoints(wavestack::Index count, double shift)
{
    const double golden = 0.6180339887498949;
    wavestack::Matrix points(count, 2);
    for (wavestack::Index i = 0; i < count; ++i) {
        const double u = (static_cast<double>(i) + shift) / static_cast<double>(count);
        const double v = std::fmod(static_cast<double>(i) * golden + shift, 1.0);
        points(i, 0) = 2.0 * u - 1.0;
        points(i, 1) = 2.0 * v - 1.0;
    }
    return points;
}

int run()
{
    const wavestack::Matrix trainInputs = latticePoints(200, 0.5);
    wavestack::Matrix trainOutputs(trainInputs.rows(), 1);
    for (wavestack::Index i = 0; i < trainInputs.rows(); ++i)
        trainOutputs(i, 0) = target(trainInputs(i, 0), trainInputs(i, 1));

    wavestack::FitOptions options;
    options.width = 32;  // 64 features for 200 points: a well-posed least-squares fit
    options.seed = 7;
    const wavestack::Network network = wavestack::fit(trainInputs, trainOutputs, options);

    if (network.inputCount() != 2 || network.outputCount() != 1) {
        std::fprintf(stderr, "FAIL: network has %ld inputs and %ld outputs, expected 2 and 1\n",
                     static_cast<long>(network.inputCount()),
                     static_cast<long>(network.outputCount()));
        return 1;
    }

    // Held-out points, shrunk slightly so none lies outside the training box.
    const wavestack::Matrix testInputs = 0.95 * latticePoints(100, 0.25);
    const wavestack::Matrix batch = network.evaluateBatch(testInputs);

    double sumSquared = 0.0;
    double maxError = 0.0;
    for (wavestack::Index i = 0; i < testInputs.rows(); ++i) {
        const double expected = target(testInputs(i, 0), testInputs(i, 1));
        const double error = std::abs(batch(i, 0) - expected);
        sumSquared += error * error;
        maxError = std::max(maxError, error);

        // The single-point paths must agree with the batch path.
        const wavestack::Vector point = testInputs.row(i).transpose();
        double single = 0.0;
        network.evaluate(point.data(), &single);
        const wavestack::Vector viaVector = network.evaluate(point);
        if (std::abs(single - batch(i, 0)) > 1e-9 || std::abs(viaVector(0) - batch(i, 0)) > 1e-9) {
            std::fprintf(stderr, "FAIL: point %ld: batch %.17g, pointer %.17g, vector %.17g\n",
                         static_cast<long>(i), batch(i, 0), single, viaVector(0));
            return 1;
        }
    }
    const double rmsError = std::sqrt(sumSquared / static_cast<double>(testInputs.rows()));
    std::printf("wavestack host: held-out RMS error %.3e, max error %.3e\n", rmsError, maxError);

    // The target spans about [-0.8, 1.8]; a working fit is far below these bounds.
    if (!(rmsError < 5e-3) || !(maxError < 2e-2)) {
        std::fprintf(stderr, "FAIL: prediction error too large\n");
        return 1;
    }
    return 0;
}

}  // namespace

int main()
{
    try {
        return run();
    } catch (const std::exception& error) {
        std::fprintf(stderr, "FAIL: exception: %s\n", error.what());
        return 1;
    }
}
