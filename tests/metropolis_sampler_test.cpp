// Tests of adaptive Metropolis sampling (sampling/metropolis_sampler.hpp),
// Kammonen, Kiessling, Plecháč, Sandberg & Szepessy 2020.
#include <doctest/doctest.h>

#include <cmath>
#include <vector>

#include <wavestack/check/test_functions.hpp>
#include <wavestack/wavestack.hpp>

#include "test_support.hpp"

using namespace wavestack;

namespace {

using Data = testing::Sample;
using testing::uniformSample;

/// The regularised discontinuity Si(x_1 / a) exp(-|x|^2 / 2), x ~ N(0, I_d).
Data siFrontData(Index n, int d, double a, std::uint64_t seed)
{
    Random random(seed);
    const auto sample = test_functions::drawSiFront(n, d, a, random);
    return Data{sample.x, sample.y};
}

double heldOutRelativeRmse(const Network& net, const Data& test)
{
    return measureErrors(net.evaluateBatch(test.x).col(0), test.y.col(0)).relativeRmse;
}

FitOptions unitBoxOptions(Index d)
{
    FitOptions options;
    options.inputBox = InputBox{Vector::Constant(d, -1.0), Vector::Constant(d, 1.0)};
    return options;
}

}  // namespace

TEST_CASE("the chain moves frequencies to a single frequency far from the initial draw")
{
    // Target cos(40 u): its transform is two spikes at +-40, while the initial
    // draw is N(0, 3^2). Exact single-mode target (common practice).
    auto target = [](const auto& u) { return std::cos(40.0 * u[0]); };
    const Data train = uniformSample(2000, 1, 1, target);
    const Data test = uniformSample(5000, 1, 2, target);
    FitOptions options = unitBoxOptions(1);
    options.width = 16;
    options.validationFraction = 0.2;
    const double gaussian = heldOutRelativeRmse(fit(train.x, train.y, options), test);
    options.sampler = SamplerKind::metropolis;
    options.metropolis.iterations = 600;  // 300 sufficed for 2 of 5 seeds, 600 for all 5
    const double metropolis = heldOutRelativeRmse(fit(train.x, train.y, options), test);
    MESSAGE("cos(40 u), K = 16: Metropolis " << metropolis << ", Gaussian " << gaussian);
    CHECK(metropolis < 1e-3);
    CHECK(gaussian > 0.1);
}

TEST_CASE("on the regularised discontinuity the chain beats Gaussian sampling at its best variance by 1.3x")
{
    // Si(x_1 / a) exp(-|x|^2 / 2), a = 0.01, x ~ N(0, I_3): the kind of target
    // of Kammonen et al. 2020; Si checked against Abramowitz & Stegun table 5.1
    // in test_functions_test.cpp. N = 10 000, K = 256.
    const Data train = siFrontData(10000, 3, 0.01, 3);
    const Data test = siFrontData(20000, 3, 0.01, 4);
    FitOptions options;
    options.width = 256;
    options.lambda = 1e-5;
    options.threads = 2;
    double bestGaussian = 1e300;
    for (double stddev : {2.0, 4.0, 8.0, 16.0, 32.0}) {
        options.frequencyStddev = stddev;
        const double error = heldOutRelativeRmse(fit(train.x, train.y, options), test);
        MESSAGE("Gaussian stddev " << stddev << ": " << error);
        bestGaussian = std::min(bestGaussian, error);
    }
    options.frequencyStddev = GaussianSampler::defaultStddev;
    options.sampler = SamplerKind::metropolis;
    options.validationFraction = 0.2;
    // The chain as Kammonen et al. specify it. The default resampling step is
    // neutral on this target (held-out 0.30-0.31 against 0.28-0.31 over data
    // seeds 3/5/9) and pays on narrow spectra and fronts (tests below).
    options.metropolis.resample = false;
    const double metropolis = heldOutRelativeRmse(fit(train.x, train.y, options), test);
    MESSAGE("Si-front d = 3, K = 256: Metropolis " << metropolis << ", best Gaussian " << bestGaussian
                                                   << ", ratio " << bestGaussian / metropolis);
    CHECK(bestGaussian / metropolis >= 1.3);
}

TEST_CASE("ridge features driven by the same chain resolve an oblique front that Fourier features ring on")
{
    // f(u) = tanh((v . u - 0.3) / 0.05), v a fixed unit vector in 4-D: one
    // ridge feature represents it exactly (Barron 1993 for ridge
    // superpositions), Fourier features need many frequencies. N = 5 000, K = 32.
    Vector v(4);
    v << 1.0, 2.0, -1.0, 0.5;
    v.normalize();
    auto target = [&](const auto& u) { return std::tanh((u.dot(v.transpose()) - 0.3) / 0.05); };
    const Data train = uniformSample(5000, 4, 7, target);
    const Data test = uniformSample(20000, 4, 8, target);
    FitOptions options = unitBoxOptions(4);
    options.width = 32;
    options.sampler = SamplerKind::metropolis;
    options.validationFraction = 0.2;
    options.metropolis.iterations = 1000;
    options.metropolis.maxStep = 0.2;  // a ridge row's direction needs steps well below |w| ~ 20
    options.features = FeatureMix::ridge;
    const double ridge = heldOutRelativeRmse(fit(train.x, train.y, options), test);
    options.metropolis.resample = false;
    const double withoutResampling = heldOutRelativeRmse(fit(train.x, train.y, options), test);
    options.metropolis.resample = true;
    options.features = FeatureMix::fourier;
    const double fourier = heldOutRelativeRmse(fit(train.x, train.y, options), test);
    MESSAGE("oblique front, K = 32: ridge " << ridge << " (without resampling " << withoutResampling << "), Fourier "
                                            << fourier << ", ratio " << fourier / ridge);
    CHECK(ridge < 0.02);
    CHECK(fourier / ridge >= 3.0);
    // The chain alone leaves rows on the front only by chance: the per-row
    // test reads noisy amplitude norms of a nearly collinear set. Resampling
    // multiplies the rows that carry the fit (DEVELOPERS.md, "Defaults").
    CHECK(withoutResampling > 3.0 * ridge);
}

TEST_CASE("a layer of both maps, driven by one chain, is at least as good as either map alone")
{
    // A front plus a smooth part: ridge features take the front, Fourier the rest.
    Vector v(4);
    v << 1.0, 2.0, -1.0, 0.5;
    v.normalize();
    auto target = [&](const auto& u) {
        return std::tanh((u.dot(v.transpose()) - 0.3) / 0.05) + std::sin(3.0 * u[0]) * std::cos(2.0 * u[1]);
    };
    const Data train = uniformSample(5000, 4, 9, target);
    const Data test = uniformSample(20000, 4, 10, target);
    FitOptions options = unitBoxOptions(4);
    options.width = 64;
    options.sampler = SamplerKind::metropolis;
    options.validationFraction = 0.2;
    options.metropolis.iterations = 500;
    options.metropolis.maxStep = 0.5;
    double error[3];
    for (auto mix : {FeatureMix::fourier, FeatureMix::ridge, FeatureMix::both}) {
        options.features = mix;
        error[int(mix)] = heldOutRelativeRmse(fit(train.x, train.y, options), test);
    }
    MESSAGE("front + smooth, K = 64: Fourier " << error[0] << ", ridge " << error[1] << ", both " << error[2]);
    CHECK(error[2] <= 1.1 * std::min(error[0], error[1]));
}

TEST_CASE("after burn-in the acceptance rate lies in a band around the target")
{
    // delta adapts during burn-in toward targetAcceptance (0.3) and is fixed
    // after; band 0.3 +- 0.15 (common practice for random-walk Metropolis).
    // Where the step cap binds the rate stays above the target instead, so
    // the check also asks that the cap did not bind.
    auto target = [](const auto& u) { return std::sin(3.0 * u[0]) * std::cos(2.0 * u[1]) + std::tanh(8.0 * u[2]); };
    const Data train = uniformSample(3000, 3, 5, target);
    FitOptions options = unitBoxOptions(3);
    options.width = 40;
    options.sampler = SamplerKind::metropolis;
    options.metropolis.iterations = 200;
    options.metropolis.maxStep = 10.0;
    options.validationFraction = 0.2;
    const Index burnIn = 50;  // burnInFraction 0.25 of 200
    double sum = 0.0, finalStep = 0.0;
    Index count = 0;
    options.progress = [&](const FitProgress& p) {
        if (p.stage == "sampling" && p.layer == 0 && p.sampler.iteration > burnIn) {
            sum += p.sampler.acceptanceRate;
            finalStep = p.sampler.step;
            ++count;
        }
        return true;
    };
    options.layers = 0;
    fit(train.x, train.y, options);
    REQUIRE(count == 150);
    MESSAGE("mean acceptance after burn-in " << sum / double(count) << ", step " << finalStep);
    CHECK(sum / double(count) > 0.15);
    CHECK(sum / double(count) < 0.45);
    CHECK(finalStep < 10.0);
}

TEST_CASE("the same seed gives a bit-identical model for one and two threads")
{
    auto target = [](const auto& u) { return std::sin(3.0 * u[0]) * std::cos(2.0 * u[1]) + std::tanh(8.0 * u[2]); };
    const Data train = uniformSample(3000, 3, 5, target);  // 2400 training rows: several row blocks
    FitOptions options = unitBoxOptions(3);
    options.width = 40;
    options.features = FeatureMix::both;
    options.sampler = SamplerKind::metropolis;
    options.metropolis.iterations = 20;
    options.validationFraction = 0.2;
    options.threads = 1;
    const Matrix one = fit(train.x, train.y, options).evaluateBatch(train.x);
    const Matrix again = fit(train.x, train.y, options).evaluateBatch(train.x);
    options.threads = 2;
    const Matrix two = fit(train.x, train.y, options).evaluateBatch(train.x);
    CHECK((one.array() == again.array()).all());
    CHECK((one.array() == two.array()).all());
}

TEST_CASE("bad chain settings are rejected")
{
    MetropolisSettings s;
    s.gamma = -1.0;
    CHECK_THROWS_WITH_AS(MetropolisSampler{s}, doctest::Contains("gamma"), InvalidInput);
    s = MetropolisSettings();
    s.step = 0.0;
    CHECK_THROWS_WITH_AS(MetropolisSampler{s}, doctest::Contains("delta"), InvalidInput);
    s = MetropolisSettings();
    s.iterations = 0;
    CHECK_THROWS_WITH_AS(MetropolisSampler{s}, doctest::Contains("iterations"), InvalidInput);
    for (double target : {0.0, 1.0, -0.2, 1.5}) {
        s = MetropolisSettings();
        s.targetAcceptance = target;
        CHECK_THROWS_WITH_AS(MetropolisSampler{s}, doctest::Contains("targetAcceptance"), InvalidInput);
    }
    s = MetropolisSettings();
    s.lambda = -1.0;
    CHECK_THROWS_WITH_AS(MetropolisSampler{s}, doctest::Contains("lambda"), InvalidInput);
}

TEST_CASE("a proposal that makes the Gram matrix singular does not abort the chain")
{
    // Width far above N / 4 and lambda = 0: every solve takes the QR path,
    // which handles rank-deficient feature matrices.
    auto target = [](const auto& u) { return u[0] * u[0]; };
    const Data train = uniformSample(40, 1, 6, target);
    FitOptions options = unitBoxOptions(1);
    options.width = 30;  // 60 features for 40 points: Phi is rank-deficient
    options.lambda = 0.0;
    options.sampler = SamplerKind::metropolis;
    options.metropolis.iterations = 5;
    options.metropolis.lambda = 0.0;
    const Network net = fit(train.x, train.y, options);
    CHECK(net.evaluateBatch(train.x).allFinite());
}
