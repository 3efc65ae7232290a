// Tests of the network container and its evaluation (model/network.hpp).
#include <doctest/doctest.h>

#include <cmath>

#include <wavestack/core/error.hpp>
#include <wavestack/core/random.hpp>
#include <wavestack/model/network.hpp>

using namespace wavestack;

namespace {

Network randomNetwork(Index d, Index m, Index k, std::uint64_t seed)
{
    Random random(seed);
    Vector lower(d), upper(d), mean(m), deviation(m);
    for (Index j = 0; j < d; ++j) {
        lower[j] = -1.0 - random.uniform();
        upper[j] = 1.0 + 3.0 * random.uniform();
    }
    for (Index o = 0; o < m; ++o) {
        mean[o] = random.normal();
        deviation[o] = 0.5 + random.uniform();
    }
    Layer layer{{FeatureGroup{FeatureKind::fourier, Matrix(k, d)}}, Matrix(2 * k, m)};
    Matrix& w = layer.groups[0].parameters;
    for (Index i = 0; i < w.size(); ++i)
        w.data()[i] = 3.0 * random.normal();
    for (Index i = 0; i < layer.amplitudes.size(); ++i)
        layer.amplitudes.data()[i] = random.normal() / std::sqrt(double(k));
    return Network(InputScaler(InputBox{lower, upper}), OutputScaler(mean, deviation), layer);
}

}  // namespace

TEST_CASE("a one-frequency network evaluates to the value worked by hand")
{
    // Box [0, 2] -> u = x - 1; w = 2; amplitudes (0.5, 0.25); mean 1, deviation 2.
    // At x = 1.5: u = 0.5, w.u = 1, f = 1 + 2 (0.5 cos 1 + 0.25 sin 1) = 1 + cos 1 + 0.5 sin 1
    //   = 1 + 0.5403023058681398 + 0.5 * 0.8414709848078965 = 1.9610377982720880
    // (cos 1 and sin 1 from memory; they agree with any handbook table of trigonometric functions).
    Vector lower(1), upper(1), mean(1), deviation(1);
    lower << 0.0;
    upper << 2.0;
    mean << 1.0;
    deviation << 2.0;
    Matrix w(1, 1), b(2, 1);
    w << 2.0;
    b << 0.5, 0.25;
    const Network net(InputScaler(InputBox{lower, upper}), OutputScaler(mean, deviation), Layer{{FeatureGroup{FeatureKind::fourier, w}}, b});
    Vector x(1);
    x << 1.5;
    CHECK(net.evaluate(x)[0] == doctest::Approx(1.9610377982720880).epsilon(1e-15));
}

TEST_CASE("single-point and batch evaluation agree")
{
    for (Index m : {1, 3}) {
        const Network net = randomNetwork(4, m, 300, 21 + m);  // 300 frequencies: more than one stack chunk
        Random random(5);
        Matrix x(1000, 4);
        for (Index i = 0; i < x.size(); ++i)
            x.data()[i] = 4.0 * random.uniform() - 2.0;
        const Matrix batch = net.evaluateBatch(x);
        REQUIRE(batch.rows() == 1000);
        REQUIRE(batch.cols() == m);
        double scale = batch.cwiseAbs().maxCoeff();
        for (Index i = 0; i < x.rows(); ++i) {
            const Vector single = net.evaluate(Vector(x.row(i).transpose()));
            CHECK((single.transpose() - batch.row(i)).cwiseAbs().maxCoeff() <= 1e-13 * scale);
        }
    }
}

TEST_CASE("evaluation equals the model's formula computed naively")
{
    const Network net = randomNetwork(3, 2, 17, 31);
    Random random(6);
    Vector x(3);
    for (Index j = 0; j < 3; ++j)
        x[j] = random.normal();
    // Naive reference: scale, then sum_k b_k . (cos, sin), then un-standardise.
    const Vector u = net.inputScaler().scale().cwiseProduct(x) + net.inputScaler().offset();
    const auto& layer = net.layer();
    for (Index o = 0; o < 2; ++o) {
        double sum = 0.0;
        for (Index k = 0; k < 17; ++k) {
            const double angle = layer.groups[0].parameters.row(k).dot(u);
            sum += layer.amplitudes(k, o) * std::cos(angle) + layer.amplitudes(17 + k, o) * std::sin(angle);
        }
        const double expected = net.outputScaler().mean()[o] + net.outputScaler().deviation()[o] * sum;
        CHECK(net.evaluate(x)[o] == doctest::Approx(expected).epsilon(1e-13));
    }
}

TEST_CASE("wrong sizes are rejected with the counts in the message")
{
    const Network net = randomNetwork(3, 1, 4, 41);
    CHECK_THROWS_WITH_AS(net.evaluate(Vector(2)), doctest::Contains("2"), InvalidInput);
    CHECK_THROWS_WITH_AS(net.evaluateBatch(Matrix(5, 4)), doctest::Contains("4"), InvalidInput);
    Layer bad{{FeatureGroup{FeatureKind::fourier, Matrix(4, 3)}}, Matrix(7, 1)};
    CHECK_THROWS_AS(Network(net.inputScaler(), net.outputScaler(), bad), InvalidInput);
}
