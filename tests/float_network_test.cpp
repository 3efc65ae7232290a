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
    const Network net = fit(data.x, data.y, options);
    const FloatNetwork single(net);
    REQUIRE(single.inputCount() == 4);
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
