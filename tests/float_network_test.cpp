// Tests of single-precision evaluation (model/float_network.hpp).
#include <doctest/doctest.h>

#include <cmath>

#include <wavestack/wavestack.hpp>

#include "test_support.hpp"

using namespace wavestack;

TEST_CASE("a float copy agrees with the double network to single-precision accuracy")
{
    const auto data = testing::uniformSample(1500, 4, 1, [](const auto& u) {
        return std::sin(3.0 * u[0]) * u[1] + std::tanh((u[2] - 0.2) / 0.1) + u[3] * u[3];
    });
    FitOptions options;
    options.width = 96;
    options.layers = 2;
    options.features = FeatureMix::both;
    options.validationFraction = 0.2;
    const Network net = fit(data.x, data.y, options);
    const FloatNetwork single(net);
    REQUIRE(single.inputCount() == 4);
    // lambda 1e-8 keeps amplitudes moderate: float's rounding is far below the
    // model's own error, so it evaluates in float.
    CHECK(single.single());
    CHECK(single.floatDeviation()[0] <= floatErrorShare * net.record().heldOutMetrics[0].rmse);
    const Matrix reference = net.evaluateBatch(data.x);
    const Eigen::MatrixXf batch = single.evaluateBatch(data.x.cast<float>());
    const double scale = reference.cwiseAbs().maxCoeff();
    // Float rounding (eps 6e-8) of angles up to |w . x| ~ 30 and of sums of a
    // few hundred terms: 1e-4 of the output scale is a generous bound (common practice).
    CHECK((batch.cast<double>() - reference).cwiseAbs().maxCoeff() < 1e-4 * scale);
    for (Index i = 0; i < 200; ++i) {
        const Eigen::VectorXf x = data.x.row(i).transpose().cast<float>();
        float y;
        single.evaluate(x.data(), &y);
        CHECK(std::abs(double(y) - reference(i, 0)) < 1e-4 * scale);
        CHECK(std::abs(double(y) - double(batch(i, 0))) < 1e-4 * scale);  // paths sum in different orders
    }
    CHECK_THROWS_AS(single.evaluateBatch(Eigen::MatrixXf(3, 2)), InvalidInput);
}

TEST_CASE("a model that float would spoil is evaluated in double")
{
    // A tiny lambda lets the amplitudes grow until they cancel to an output of
    // order 1; float rounding then costs far more than the model's own error.
    const auto f = [](const auto& u) { return std::exp(std::sin(2.0 * u[0])) * (1.0 + u[1] * u[1]) + std::cos(3.0 * u[2]); };
    const auto train = testing::uniformSample(1000, 3, 41, f);
    const auto test = testing::uniformSample(5000, 3, 42, f);
    FitOptions options;
    options.width = 200;
    options.frequencyStddev = 0.5;
    options.lambda = 1e-18;
    options.validationFraction = 0.2;
    const Network net = fit(train.x, train.y, options);
    const FloatNetwork guarded(net);
    CHECK_FALSE(guarded.single());
    CHECK(guarded.floatDeviation()[0] > floatErrorShare * net.record().heldOutMetrics[0].rmse);

    // What plain float evaluation would give, through the same kernels.
    const Evaluator<float> plain(net.inputScaler(), net.outputScaler(), net.layers(), net.stateInput());
    const Eigen::MatrixXf x = test.x.cast<float>();
    const auto rmse = [&](const Matrix& p) { return std::sqrt((p - test.y).array().square().mean()); };
    const double inDouble = rmse(net.evaluateBatch(test.x));
    const double inFloat = rmse(plain.evaluateBatch(x).cast<double>());
    const double guardedError = rmse(guarded.evaluateBatch(x).cast<double>());
    MESSAGE("test RMSE: double " << inDouble << ", plain float " << inFloat << ", guarded " << guardedError);
    REQUIRE(inFloat > 3.0 * inDouble);  // the case this test exists for (measured: 2.7e-3 against 2.5e-2)
    // The inputs are rounded to float first, so allow a little over double's.
    CHECK(guardedError < 1.05 * inDouble);
    for (Index i = 0; i < 50; ++i) {
        float y;
        guarded.evaluate(x.row(i).eval().data(), &y);
        CHECK(std::abs(double(y) - net.evaluate(test.x.row(i).cast<float>().cast<double>().transpose())[0]) <
              1e-6 * std::abs(double(y)) + 1e-6);
    }
}
