// Tests of global fine-tuning: the analytic gradient (train/gradient.hpp),
// the Adam update (train/adam.hpp) and the tuner (train/tune.hpp).
#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <string>
#include <vector>

#include <wavestack/train/adam.hpp>
#include <wavestack/train/gradient.hpp>
#include <wavestack/wavestack.hpp>

#include "test_support.hpp"

using namespace wavestack;

namespace {

using testing::randomNormal;

/// sin(2 u_0) u_1: a smooth target for the tuner tests.
const auto smoothProduct = [](const auto& u) { return std::sin(2.0 * u[0]) * u[1]; };

/// d = 3, m = 2, L = 2 residual layers, K = 5 rows per group; every layer has
/// Fourier and ridge groups on the input, residual layers also on the state.
std::vector<Layer> randomLayers(Random& random)
{
    const Index d = 3, m = 2, k = 5;
    std::vector<Layer> layers;
    for (int l = 0; l < 3; ++l) {
        Layer layer;
        layer.groups.push_back(FeatureGroup{FeatureKind::fourier, randomNormal(k, d, 1.5, random)});
        layer.groups.push_back(FeatureGroup{FeatureKind::ridge, randomNormal(k, d + 1, 1.5, random)});
        if (l > 0) {
            layer.groups.push_back(
                FeatureGroup{FeatureKind::fourier, randomNormal(k, m, 1.0, random), FeatureSource::state});
            layer.groups.push_back(
                FeatureGroup{FeatureKind::ridge, randomNormal(k, m + 1, 1.0, random), FeatureSource::state});
        }
        layer.amplitudes = randomNormal(layer.featureCount(), m, 0.3, random);
        layers.push_back(layer);
    }
    return layers;
}

}  // namespace

TEST_CASE("the analytic gradient matches central finite differences for every parameter group")
{
    // Central differences, h = 1e-6: truncation O(h^2) plus rounding O(eps/h),
    // about 1e-10 relative here (common practice).
    for (auto stateInput : {StateInput::runningPrediction, StateInput::residualState}) {
        Random random(stateInput == StateInput::runningPrediction ? 1 : 2);
        std::vector<Layer> layers = randomLayers(random);
        const Matrix u = randomNormal(40, 3, 0.5, random), y = randomNormal(40, 2, 1.0, random);
        const double lambda = 1e-3;
        NetworkGradient gradient;
        lossAndGradient(layers, stateInput, u, y, lambda, gradient, SerialReduction());

        auto check = [&](Matrix& parameters, const Matrix& analytic, const char* what) {
            Matrix numeric(parameters.rows(), parameters.cols());
            NetworkGradient unused;
            for (Index i = 0; i < parameters.size(); ++i) {
                const double original = parameters.data()[i], h = 1e-6;
                parameters.data()[i] = original + h;
                const double up = lossAndGradient(layers, stateInput, u, y, lambda, unused, SerialReduction());
                parameters.data()[i] = original - h;
                const double down = lossAndGradient(layers, stateInput, u, y, lambda, unused, SerialReduction());
                parameters.data()[i] = original;
                numeric.data()[i] = (up - down) / (2.0 * h);
            }
            // The published form's first residual layer reads z_0 = 0: its state
            // slopes then have a zero gradient, which both sides must agree on.
            const double scale = std::max(numeric.norm(), 1e-12);
            const double error = (analytic - numeric).norm() / scale;
            INFO(std::string(what) << " (" << stateInputName(stateInput) << "): relative error " << error);
            CHECK(error < 1e-6);
        };
        for (std::size_t l = 0; l < layers.size(); ++l) {
            for (std::size_t g = 0; g < layers[l].groups.size(); ++g)
                check(layers[l].groups[g].parameters, gradient[l].parameters[g], "group parameters");
            check(layers[l].amplitudes, gradient[l].amplitudes, "amplitudes");
        }
    }
}

TEST_CASE("the gradient is the same for one and two threads")
{
    Random random(3);
    const std::vector<Layer> layers = randomLayers(random);
    const Matrix u = randomNormal(1000, 3, 0.5, random), y = randomNormal(1000, 2, 1.0, random);
    NetworkGradient one, two;
    const double a = lossAndGradient(layers, StateInput::runningPrediction, u, y, 0.0, one, SerialReduction());
    const double b = lossAndGradient(layers, StateInput::runningPrediction, u, y, 0.0, two, ThreadReduction(2));
    CHECK(a == b);
    CHECK(one[2].amplitudes == two[2].amplitudes);
    CHECK(one[1].parameters[3] == two[1].parameters[3]);
}

TEST_CASE("two Adam steps equal the paper's Algorithm 1 worked by hand")
{
    // Kingma & Ba 2015, Algorithm 1, beta1 0.9, beta2 0.999, eps 1e-8, rate 0.1;
    // p = (1, -2), gradients (0.5, 0.1) then (-0.2, 0.3). Values from the
    // algorithm evaluated in Python: (0.900000002, -2.09999999) then
    // (0.8654394181165108, -2.19177809779441).
    AdamOptimizer adam(2);
    Vector p(2), g(2);
    p << 1.0, -2.0;
    const Vector rate = Vector::Constant(2, 0.1);
    g << 0.5, 0.1;
    adam.step(p, g, rate);
    CHECK(p[0] == doctest::Approx(0.900000002).epsilon(1e-15));
    CHECK(p[1] == doctest::Approx(-2.09999999).epsilon(1e-15));
    g << -0.2, 0.3;
    adam.step(p, g, rate);
    CHECK(p[0] == doctest::Approx(0.8654394181165108).epsilon(1e-14));
    CHECK(p[1] == doctest::Approx(-2.19177809779441).epsilon(1e-14));
}

TEST_CASE("tuning never leaves the held-out error worse, and fixes what sampling could not")
{
    // The oblique front of metropolis_sampler_test.cpp: K = 32 ridge rows.
    Vector v(4);
    v << 1.0, 2.0, -1.0, 0.5;
    v.normalize();
    Random random(7);
    Matrix x(3000, 4), y(3000, 1);
    for (Index i = 0; i < 3000; ++i) {
        for (Index j = 0; j < 4; ++j)
            x(i, j) = 2.0 * random.uniform() - 1.0;
        y(i, 0) = std::tanh((x.row(i).dot(v.transpose()) - 0.3) / 0.05);
    }
    FitOptions options;
    options.width = 32;
    options.features = FeatureMix::ridge;
    options.sampler = SamplerKind::metropolis;
    options.metropolis.iterations = 100;
    options.validationFraction = 0.2;
    const double before = fit(x, y, options).record().heldOutMetrics[0].rmse;
    options.tune.epochs = 100;
    options.tune.frequencyRate = 1e-2;
    options.tune.amplitudeRate = 1e-2;
    std::vector<double> held;
    options.progress = [&](const FitProgress& p) {
        if (p.stage == "tuning")
            held.push_back(p.validationRmse);
        return true;
    };
    const Network tuned = fit(x, y, options);
    const double after = tuned.record().heldOutMetrics[0].rmse;
    MESSAGE("held-out RMSE before tuning " << before << ", after " << after);
    CHECK(after <= before);
    CHECK(after < 0.3 * before);
    REQUIRE(!held.empty());
    CHECK(held.front() == doctest::Approx(before / std::sqrt(tuned.outputScaler().deviation()[0] *
                                                                tuned.outputScaler().deviation()[0]))
                              .epsilon(1e-9));
}

TEST_CASE("Glorot initialisation trains the same shape by Adam alone")
{
    const testing::Sample data = testing::uniformSample(1000, 2, 8, smoothProduct);
    FitOptions options;
    options.width = 16;
    options.layers = 2;
    options.initialization = Initialization::glorot;
    options.tune.epochs = 30;
    options.validationFraction = 0.2;
    const Network net = fit(data.x, data.y, options);
    CHECK(net.residualLayerCount() == 2);
    CHECK(net.layers()[1].groups.size() == 2);  // input group + state group, as layer-by-layer builds
    CHECK(net.record().heldOutMetrics[0].relativeRmse < 1.0);  // it learned something
}

TEST_CASE("early stopping waits for the second half of the learning-rate schedule")
{
    // A rate of 0.3 makes the held-out error worse from the first epoch on;
    // patience 1 would then stop at epoch 1. The held-out error is noisy
    // while the rate is high (see tune.hpp), so the count starts half way.
    const testing::Sample data = testing::uniformSample(600, 2, 9, smoothProduct);
    FitOptions options;
    options.width = 16;
    options.validationFraction = 0.2;
    options.tune.epochs = 20;
    options.tune.patience = 1;
    options.tune.warmupSteps = 0;
    options.tune.frequencyRate = 0.3;
    options.tune.amplitudeRate = 0.3;
    Index last = 0;
    options.progress = [&](const FitProgress& p) {
        if (p.stage == "tuning")
            last = p.tuning.epoch;
        return true;
    };
    fit(data.x, data.y, options);
    CHECK(last > options.tune.epochs / 2);
}
