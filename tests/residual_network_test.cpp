// Tests of the deep residual network (model/network.hpp) and the boosting
// driver that trains it layer by layer (train/fit.hpp).
#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <functional>
#include <vector>

#include <wavestack/check/test_functions.hpp>
#include <wavestack/wavestack.hpp>

#include "test_support.hpp"

using namespace wavestack;

namespace {

Matrix oneByOne(double value)
{
    Matrix a(1, 1);
    a << value;
    return a;
}

Matrix column(std::initializer_list<double> values)
{
    Matrix a(Index(values.size()), 1);
    Index i = 0;
    for (double v : values)
        a(i++, 0) = v;
    return a;
}

/// x in box [2, 4] -> u = x - 3; outputs: mean 10, deviation 2.
/// f0 = cos(u); residual layer: 0.5 sin(2u) + 0.25 cos(3 s).
Network handBuilt(StateInput stateInput)
{
    Layer initial{{FeatureGroup{FeatureKind::fourier, oneByOne(1.0), FeatureSource::input}}, column({1.0, 0.0})};
    Layer residual{{FeatureGroup{FeatureKind::fourier, oneByOne(2.0), FeatureSource::input},
                    FeatureGroup{FeatureKind::fourier, oneByOne(3.0), FeatureSource::state}},
                   column({0.0, 0.5, 0.25, 0.0})};  // rows: cos 2u, sin 2u, cos 3s, sin 3s
    return Network(InputScaler(InputBox{Vector::Constant(1, 2.0), Vector::Constant(1, 4.0)}),
                   OutputScaler(Vector::Constant(1, 10.0), Vector::Constant(1, 2.0)), {initial, residual},
                   stateInput);
}

using Data = testing::Sample;

template <class F>
Data sample(Index n, Index d, std::uint64_t seed, F f)
{
    return testing::uniformSample(n, d, seed, f);
}

}  // namespace

TEST_CASE("a hand-built two-layer network evaluates to the values worked by hand")
{
    // x = 3.5 -> u = 0.5. Running prediction: s = f0 = cos 0.5, so
    // f = 10 + 2 (cos 0.5 + 0.5 sin 1 + 0.25 cos(3 cos 0.5)) = 12.159982215719577.
    // Residual state (published form): s = z_0 = 0, so
    // f = 10 + 2 (cos 0.5 + 0.5 sin 1 + 0.25) = 13.096636108588642.
    // Both computed with Python's math module, independently of this library.
    Vector x(1);
    x << 3.5;
    CHECK(handBuilt(StateInput::runningPrediction).evaluate(x)[0] ==
          doctest::Approx(12.159982215719577).epsilon(1e-14));
    CHECK(handBuilt(StateInput::residualState).evaluate(x)[0] ==
          doctest::Approx(10.0 + 2.0 * 1.5483180542943211).epsilon(1e-14));
}

TEST_CASE("with all residual amplitudes zero the network is its initial layer; batch equals single point")
{
    const Data data = sample(300, 3, 1, [](const auto& u) { return std::sin(2.0 * u[0]) + u[1] * u[2]; });
    FitOptions options;
    options.width = 40;
    options.layers = 3;
    const Network deep = fit(data.x, data.y, options);
    REQUIRE(deep.residualLayerCount() == 3);
    std::vector<Layer> layers = deep.layers();
    for (std::size_t l = 1; l < layers.size(); ++l)
        layers[l].amplitudes.setZero();
    const Network zeroed(deep.inputScaler(), deep.outputScaler(), layers, deep.stateInput());
    const Network shallow(deep.inputScaler(), deep.outputScaler(), deep.layer());
    const Matrix a = zeroed.evaluateBatch(data.x), b = shallow.evaluateBatch(data.x);
    CHECK((a.array() == b.array()).all());

    const Matrix batch = deep.evaluateBatch(data.x);
    const double scale = batch.cwiseAbs().maxCoeff();
    for (Index i = 0; i < data.x.rows(); ++i) {
        const Vector single = deep.evaluate(Vector(data.x.row(i).transpose()));
        CHECK(std::abs(single[0] - batch(i, 0)) <= 1e-13 * scale);
    }
}

TEST_CASE("training error never rises with depth, on three targets, for both state inputs")
{
    // Each layer's ridge problem is convex and the zero layer is feasible, so
    // the training MSE is non-increasing (common practice for boosting).
    std::vector<std::function<double(const Eigen::Ref<const Eigen::RowVectorXd>&)>> targets = {
        [](const auto& u) { return std::sin(3.0 * u[0]) * std::exp(u[1]); },
        [](const auto& u) { return std::tanh((u[0] + 0.5 * u[1] - 0.2) / 0.05); },
        [](const auto& u) { return std::abs(u[0] * u[1]) + std::cos(5.0 * u[2]); },
    };
    for (auto stateInput : {StateInput::runningPrediction, StateInput::residualState})
        for (std::size_t t = 0; t < targets.size(); ++t) {
            const Data data = sample(1500, 3, 10 + t, targets[t]);
            FitOptions options;
            options.width = 24;
            options.layers = 8;
            options.stateInput = stateInput;
            options.sampler = SamplerKind::metropolis;
            options.metropolis.iterations = 5;
            std::vector<double> errors;
            int dropped = 0;
            options.progress = [&](const FitProgress& p) {
                if (p.stage == "layer")
                    errors.push_back(p.trainingRmse);
                dropped += p.stage == "dropped";
                return true;
            };
            const Network net = fit(data.x, data.y, options);
            CHECK(dropped == 0);
            REQUIRE(errors.size() == 9);
            CHECK(net.residualLayerCount() == 8);
            for (std::size_t l = 1; l < errors.size(); ++l)
                CHECK(errors[l] <= errors[l - 1]);
            CHECK(errors.back() < errors.front());
        }
}

TEST_CASE("early stopping keeps the best prefix of layers on held-out rows")
{
    const Data data = sample(800, 2, 20, [](const auto& u) { return std::sin(2.0 * u[0]) * u[1]; });
    FitOptions options;
    options.width = 16;
    options.layers = 12;
    options.patience = 2;
    options.validationFraction = 0.25;
    std::vector<double> held;
    bool stopped = false;
    options.progress = [&](const FitProgress& p) {
        if (p.stage == "layer")
            held.push_back(p.validationRmse);
        stopped |= p.stage == "stopped";
        return true;
    };
    const Network net = fit(data.x, data.y, options);
    const auto best = std::min_element(held.begin(), held.end()) - held.begin();
    CHECK(net.residualLayerCount() == best);  // layers after the best one are dropped
    if (stopped)
        CHECK(held.size() - 1 - std::size_t(best) == std::size_t(options.patience));
}

TEST_CASE("malformed layers are rejected")
{
    Network net = handBuilt(StateInput::runningPrediction);
    std::vector<Layer> layers = net.layers();
    layers[0].groups[0].source = FeatureSource::state;
    CHECK_THROWS_WITH_AS(Network(net.inputScaler(), net.outputScaler(), layers), doctest::Contains("initial"),
                         InvalidInput);
    layers = net.layers();
    layers[1].amplitudes = Matrix::Zero(3, 1);
    CHECK_THROWS_WITH_AS(Network(net.inputScaler(), net.outputScaler(), layers), doctest::Contains("layer 1"),
                         InvalidInput);
    CHECK_THROWS_AS(Network(net.inputScaler(), net.outputScaler(), std::vector<Layer>{}), InvalidInput);
}
