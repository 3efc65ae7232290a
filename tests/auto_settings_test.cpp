// Automatic choice of the Gaussian frequency spread (train/auto_settings.hpp).

#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <limits>

#include <wavestack/check/metrics.hpp>
#include <wavestack/check/test_functions.hpp>
#include <wavestack/solve/ridge_loo.hpp>
#include <wavestack/train/auto_settings.hpp>

using namespace wavestack;

namespace {

FitOptions searchOptions()
{
    FitOptions options;
    options.width = 64;
    options.validationFraction = 0.25;
    options.seed = 5;
    return options;
}

/// Relative RMSE on `test` of a shallow Gaussian fit at `stddev` on all of `data`.
double testError(const test_functions::Sample& data, const test_functions::Sample& test, FitOptions options,
                 double stddev)
{
    options.frequencyStddev = stddev;
    options.validationFraction = 0.0;
    options.inputBox = InputBox{data.x.colwise().minCoeff().transpose(), data.x.colwise().maxCoeff().transpose()};
    const Network network = fit(data.x, data.y, options);
    return measureColumnErrors(network.evaluateBatch(test.x), test.y).front().relativeRmse;
}

/// The leave-one-out error of that fit, from the library's parts: the same
/// draw as the chooser's (seed, GaussianSampler, layer features) scored by
/// RidgeLeaveOneOut (itself checked against refitting in ridge_loo_test.cpp).
double leaveOneOutError(const test_functions::Sample& data, const FitOptions& options, double stddev)
{
    const InputBox box{data.x.colwise().minCoeff().transpose(), data.x.colwise().maxCoeff().transpose()};
    const Matrix u = InputScaler(box).apply(data.x);
    Random random(options.seed);
    struct Shape {
        Index inputs;
        Index parameterSize(const GroupShape& s) const { return wavestack::parameterSize(s.kind, inputs); }
    };
    const auto groups =
        GaussianSampler(stddev).sample(Shape{u.cols()}, {{FeatureKind::fourier, options.width}}, random);
    Matrix phi(u.rows(), 2 * options.width);
    layerFeatures(groups, u, Matrix(u.rows(), 0), phi);
    return RidgeLeaveOneOut()
        .errors(phi, OutputScaler::fromData(data.y).apply(data.y), {options.lambda})
        .front()
        .relativeRmse;
}

}  // namespace

TEST_CASE("the spread grid spans factor-2 steps from 1/32 to 16 and holds the default")
{
    const std::vector<double> grid = frequencyStddevGrid();
    REQUIRE(grid.size() == 11);
    CHECK(grid.front() == 1.0 / 32.0);
    CHECK(grid.back() == 16.0);
    CHECK(std::count(grid.begin(), grid.end(), GaussianSampler::defaultStddev) == 1);
    CHECK(std::is_sorted(grid.begin(), grid.end()));
}

TEST_CASE("the chosen spread has the grid's lowest leave-one-out error, and predicts new points well")
{
    // Borehole (Harper & Gupta 1983; ranges from Surjanovic & Bingham's library)
    // is smooth; Ishigami (Ishigami & Homma 1990) oscillates with sin(x1) over
    // [-pi, pi]. Their best spreads differ by more than a factor of 8.
    Random random(3);
    const auto borehole = test_functions::drawSample(test_functions::boreholeDomain(), 800, random,
                                                     test_functions::borehole);
    const auto ishigami = test_functions::drawSample(test_functions::ishigamiDomain(), 800, random,
                                                     test_functions::ishigami);
    const FitOptions options = searchOptions();
    const double smooth = chooseFrequencyStddev(borehole.x, borehole.y, options);
    const double wavy = chooseFrequencyStddev(ishigami.x, ishigami.y, options);
    CHECK(wavy >= 8.0 * smooth);

    for (const auto* data : {&borehole, &ishigami}) {
        const bool smoothCase = data == &borehole;
        const double chosen = smoothCase ? smooth : wavy;
        const auto test =
            test_functions::drawSample(smoothCase ? test_functions::boreholeDomain() : test_functions::ishigamiDomain(),
                                       4000, random, smoothCase ? test_functions::borehole : test_functions::ishigami);
        double lowest = std::numeric_limits<double>::infinity(), bestTest = lowest;
        for (double s : frequencyStddevGrid()) {
            lowest = std::min(lowest, leaveOneOutError(*data, options, s));
            bestTest = std::min(bestTest, testError(*data, test, options, s));
        }
        CHECK(leaveOneOutError(*data, options, chosen) == lowest);
        // On new points: close to the grid's best spread, never far worse than the default.
        const double chosenTest = testError(*data, test, options, chosen);
        CHECK(chosenTest <= 1.25 * bestTest);
        CHECK(chosenTest <= 1.25 * testError(*data, test, options, GaussianSampler::defaultStddev));
    }
}

TEST_CASE("the search works on a row subset when the data are large, and can be cancelled")
{
    Random random(4);
    const auto data = test_functions::drawSample(test_functions::boreholeDomain(), 3000, random,
                                                 test_functions::borehole);
    FitOptions options = searchOptions();
    const double full = chooseFrequencyStddev(data.x, data.y, options);
    const double subset = chooseFrequencyStddev(data.x, data.y, options, 1500);
    // Borehole is smooth: either way the spread stays well below the default 3.
    CHECK(full <= 0.5);
    CHECK(subset <= 0.5);

    Index calls = 0;
    options.progress = [&](const FitProgress& p) {
        CHECK(p.stage == "search");
        return ++calls < 3;
    };
    CHECK_THROWS_AS(chooseFrequencyStddev(data.x, data.y, options), Cancelled);
    CHECK(calls == 3);
}
