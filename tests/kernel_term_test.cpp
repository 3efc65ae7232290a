// The additive kernel term of a network (model/kernel_term.hpp): values,
// gradients, float evaluation and checks.
#include <doctest/doctest.h>

#include <cmath>
#include <limits>

#include <wavestack/model/float_network.hpp>
#include <wavestack/model/network.hpp>

#include "test_support.hpp"

using namespace wavestack;

namespace {

/// A network whose layer adds a small Fourier part, plus a kernel term of
/// `centres` bumps in d inputs and m outputs, all values seeded.
Network withTerm(Index d, Index m, Index centres, std::uint64_t seed)
{
    Random random(seed);
    const auto uniform = [&](double a, double b) { return a + (b - a) * random.uniform(); };
    Vector lower(d), upper(d);
    for (Index j = 0; j < d; ++j) {
        lower[j] = uniform(-3.0, 0.0);
        upper[j] = lower[j] + uniform(1.0, 4.0);
    }
    Layer layer;
    layer.groups.push_back(FeatureGroup{FeatureKind::fourier, Matrix::Random(3, d), FeatureSource::input});
    layer.amplitudes = 0.1 * Matrix::Random(6, m);
    Network network(InputScaler(InputBox{lower, upper}), OutputScaler(Vector::Constant(m, 2.0), Vector::Ones(m)),
                    std::move(layer));
    KernelTerm term;
    term.widths = Vector(d);
    for (Index j = 0; j < d; ++j)
        term.widths[j] = uniform(0.5, 3.0);
    term.centres = Matrix(centres, d);
    for (Index i = 0; i < centres; ++i)
        for (Index j = 0; j < d; ++j)
            term.centres(i, j) = uniform(lower[j], upper[j]);
    term.weights = Matrix::Random(centres, m);
    network.setKernelTerm(term);
    return network;
}

/// sum_j a_j exp(-|g (x - c_j)|^2 / 2), computed the plain way.
Vector naiveTerm(const KernelTerm& term, const Vector& x)
{
    Vector y = Vector::Zero(term.weights.cols());
    for (Index i = 0; i < term.centreCount(); ++i) {
        const double bump = std::exp(-0.5 * term.widths.cwiseProduct(x - term.centres.row(i).transpose()).squaredNorm());
        y += bump * term.weights.row(i).transpose();
    }
    return y;
}

}  // namespace

TEST_CASE("a network with a kernel term adds the term's formula to its layers, point by point and in batches")
{
    // 300 centres: more than one 128-bump chunk of the single-point path.
    const Network network = withTerm(3, 2, 300, 1);
    Network layersOnly = network;
    layersOnly.setKernelTerm(KernelTerm());
    CHECK(layersOnly.kernelTerm().empty());
    Random random(2);
    Matrix x(50, 3);
    for (Index i = 0; i < x.rows(); ++i)
        for (Index j = 0; j < 3; ++j)
            x(i, j) = network.inputScaler().box().lower[j] +
                      random.uniform() * (network.inputScaler().box().upper[j] - network.inputScaler().box().lower[j]);
    const Matrix batch = network.evaluateBatch(x);
    for (Index i = 0; i < x.rows(); ++i) {
        const Vector point = x.row(i).transpose();
        const Vector expected = layersOnly.evaluate(point) + naiveTerm(network.kernelTerm(), point);
        const Vector single = network.evaluate(point);
        for (Index o = 0; o < 2; ++o) {
            CHECK(single[o] == doctest::Approx(expected[o]).epsilon(1e-12));
            CHECK(batch(i, o) == doctest::Approx(expected[o]).epsilon(1e-12));
        }
    }
}

TEST_CASE("input Jacobians with a kernel term match central finite differences")
{
    // Central differences with h = 1e-6 have truncation error O(h^2) (common practice).
    const Network network = withTerm(3, 2, 40, 3);
    const Vector centre = network.kernelTerm().centres.row(5).transpose();
    const double x[3] = {centre[0] + 0.1, centre[1] - 0.2, centre[2] + 0.05};
    double y[2], jacobian[6];
    network.evaluateWithJacobian(x, y, jacobian);
    const Vector plain = network.evaluate(Eigen::Map<const Vector>(x, 3));
    CHECK(y[0] == doctest::Approx(plain[0]).epsilon(1e-13));
    CHECK(y[1] == doctest::Approx(plain[1]).epsilon(1e-13));
    for (int j = 0; j < 3; ++j) {
        double xp[3] = {x[0], x[1], x[2]}, xm[3] = {x[0], x[1], x[2]}, yp[2], ym[2];
        const double h = 1e-6;
        xp[j] += h;
        xm[j] -= h;
        network.evaluate(xp, yp);
        network.evaluate(xm, ym);
        for (int o = 0; o < 2; ++o)
            CHECK(jacobian[o * 3 + j] == doctest::Approx((yp[o] - ym[o]) / (2 * h)).epsilon(1e-7));
    }
}

TEST_CASE("float evaluation computes the kernel term in double")
{
    const Network network = withTerm(2, 1, 200, 4);
    const Evaluator<float> single(network.inputScaler(), network.outputScaler(), network.layers(),
                                  network.stateInput(), network.kernelTerm());
    const FloatNetwork guarded(network);
    Matrix x(20, 2);
    for (Index i = 0; i < x.rows(); ++i)
        x.row(i) = network.kernelTerm().centres.row(i) * 0.9;
    const Matrix reference = network.evaluateBatch(x);
    const Eigen::MatrixXf batch = single.evaluateBatch(x.cast<float>());
    for (Index i = 0; i < x.rows(); ++i) {
        float y = 0.0f;
        const float point[2] = {float(x(i, 0)), float(x(i, 1))};
        single.evaluate(point, &y);
        // float's 6e-8 relative rounding on values of order 10 (common practice).
        CHECK(y == doctest::Approx(reference(i, 0)).epsilon(1e-5));
        CHECK(batch(i, 0) == doctest::Approx(reference(i, 0)).epsilon(1e-5));
        float z = 0.0f;
        guarded.evaluate(point, &z);
        CHECK(z == doctest::Approx(reference(i, 0)).epsilon(1e-5));
    }
}

TEST_CASE("a kernel term that does not fit the network is refused with the sizes in the message")
{
    Network network = withTerm(3, 1, 10, 5);
    KernelTerm term = network.kernelTerm();
    term.widths.resize(2);
    CHECK_THROWS_WITH_AS(network.setKernelTerm(term), doctest::Contains("2 widths"), InvalidInput);
    term = network.kernelTerm();
    term.weights = Matrix::Ones(9, 1);
    CHECK_THROWS_WITH_AS(network.setKernelTerm(term), doctest::Contains("9 x 1 weights"), InvalidInput);
    term = network.kernelTerm();
    term.centres(3, 1) = std::numeric_limits<double>::quiet_NaN();
    CHECK_THROWS_WITH_AS(network.setKernelTerm(term), doctest::Contains("not finite"), InvalidInput);
    // The network keeps its term after a refused one.
    CHECK(network.kernelTerm().centreCount() == 10);
    CHECK(std::isfinite(network.evaluate(Vector::Zero(3))[0]));
}
